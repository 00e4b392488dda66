using System.Collections.Concurrent;
using System.Diagnostics;
using System.Net.Http;

namespace DischargeGuard.Load;

/// <summary>What one answered request stood for.</summary>
/// <param name="Status">The HTTP status.</param>
/// <param name="Records">Evaluations the answer says were recorded (1 for a single 200, the 200 items of a batch).</param>
/// <param name="Ok">Whether the answer is what the request expected (a 2xx, and for a batch every item 200).</param>
public readonly record struct LoadOutcome(int Status, int Records, bool Ok);

/// <summary>The summary of a fixed-rate run.</summary>
public sealed record LoadReport(
    long Scheduled,
    long Answered,
    long Failed,
    long Records,
    long LateStarts,
    IReadOnlyDictionary<int, long> ByStatus,
    IReadOnlyList<string> Errors,
    double P50Milliseconds,
    double P90Milliseconds,
    double P99Milliseconds,
    double MaxMilliseconds,
    TimeSpan Elapsed)
{
    /// <summary>Answers per second over the run.</summary>
    public double Throughput => Answered / Elapsed.TotalSeconds;
}

/// <summary>
/// An open-loop load: request <c>i</c> is due at <c>start + i / rate</c> whatever the earlier ones are doing, so a slow
/// server cannot slow the load down (its queueing shows as latency, measured from the due time, not hidden). Requests
/// that would exceed the in-flight cap are not sent and count as failures.
/// </summary>
public static class FixedRateLoad
{
    /// <summary>Runs the load and waits for every request sent.</summary>
    /// <param name="client">The client (its timeout bounds each request).</param>
    /// <param name="ratePerSecond">Requests per second.</param>
    /// <param name="duration">How long requests are started for.</param>
    /// <param name="next">The request for sequence number <c>i</c>.</param>
    /// <param name="inspect">Reads the answer of request <c>i</c>.</param>
    /// <param name="maxInFlight">Most requests outstanding at once.</param>
    /// <param name="cancellationToken">Stops starting requests.</param>
    /// <returns>The report.</returns>
    public static async Task<LoadReport> RunAsync(
        HttpClient client,
        double ratePerSecond,
        TimeSpan duration,
        Func<long, HttpRequestMessage> next,
        Func<long, HttpResponseMessage, Task<LoadOutcome>> inspect,
        int maxInFlight = 512,
        CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(client);
        ArgumentNullException.ThrowIfNull(next);
        ArgumentNullException.ThrowIfNull(inspect);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(ratePerSecond);

        var total = (long)Math.Floor(ratePerSecond * duration.TotalSeconds);
        var latencies = new ConcurrentBag<double>();
        var byStatus = new ConcurrentDictionary<int, long>();
        var errors = new ConcurrentQueue<string>();
        var drained = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        long answered = 0, failed = 0, records = 0, late = 0, inFlight = 0;
        var clock = Stopwatch.StartNew();
        var ticksPerRequest = Stopwatch.Frequency / ratePerSecond;

        for (long i = 0; i < total && !cancellationToken.IsCancellationRequested; i++)
        {
            var due = (long)(i * ticksPerRequest);
            var wait = due - clock.ElapsedTicks;
            if (wait > Stopwatch.Frequency / 1000)
            {
                await Task.Delay(TimeSpan.FromSeconds((double)wait / Stopwatch.Frequency), CancellationToken.None).ConfigureAwait(false);
            }

            if (Interlocked.Read(ref inFlight) >= maxInFlight)
            {
                Interlocked.Increment(ref late);
                Interlocked.Increment(ref failed);
                errors.Enqueue($"request {i} not sent: {maxInFlight} requests already in flight");
                continue;
            }

            // Sent requests are not kept (a 30-minute soak starts about a million): the count of those in flight is.
            Interlocked.Increment(ref inFlight);
            var sequence = i;
            _ = Task.Run(async () =>
            {
                try
                {
                    using var request = next(sequence);
                    using var response = await client.SendAsync(request, HttpCompletionOption.ResponseContentRead, CancellationToken.None).ConfigureAwait(false);
                    var outcome = await inspect(sequence, response).ConfigureAwait(false);
                    latencies.Add((clock.ElapsedTicks - due) * 1000.0 / Stopwatch.Frequency);
                    byStatus.AddOrUpdate(outcome.Status, 1, (_, n) => n + 1);
                    Interlocked.Increment(ref answered);
                    Interlocked.Add(ref records, outcome.Records);
                    if (!outcome.Ok)
                    {
                        Interlocked.Increment(ref failed);
                        errors.Enqueue($"request {sequence}: status {outcome.Status}");
                    }
                }
#pragma warning disable CA1031 // A load generator counts every failure, whatever it is.
                catch (Exception e)
#pragma warning restore CA1031
                {
                    Interlocked.Increment(ref failed);
                    errors.Enqueue($"request {sequence}: {e.GetType().Name}: {e.Message}");
                }
                finally
                {
                    // -1 marks the end of scheduling; the last request to finish after it completes the run.
                    if (Interlocked.Decrement(ref inFlight) == -1)
                    {
                        drained.TrySetResult();
                    }
                }
            }, CancellationToken.None);
        }

        if (Interlocked.Decrement(ref inFlight) == -1)
        {
            drained.TrySetResult();
        }

        await drained.Task.ConfigureAwait(false);
        clock.Stop();
        var sorted = latencies.ToArray();
        Array.Sort(sorted);
        return new LoadReport(
            total,
            answered,
            failed,
            records,
            late,
            new Dictionary<int, long>(byStatus),
            errors.Take(20).ToList(),
            Percentile(sorted, 0.50),
            Percentile(sorted, 0.90),
            Percentile(sorted, 0.99),
            sorted.Length == 0 ? 0 : sorted[^1],
            clock.Elapsed);
    }

    private static double Percentile(double[] sorted, double p) =>
        sorted.Length == 0 ? 0 : sorted[Math.Clamp((int)Math.Ceiling(p * sorted.Length) - 1, 0, sorted.Length - 1)];
}
