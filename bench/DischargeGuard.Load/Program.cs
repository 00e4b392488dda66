using System.Diagnostics;
using System.Globalization;
using System.Text;
using DischargeGuard.Load;

// The soak: a fixed request rate against a running service for a long time, sampling the service's resident set from
// /proc/<pid>/status. Run through bench/load/soak.sh, which starts the service; see docs/reliability.md.
// Usage: DischargeGuard.Load --url URL --pid PID --rate N --minutes M --body FILE [--sample-seconds S]
var options = ParseArguments(args);
if (options is null)
{
    Console.Error.WriteLine("usage: DischargeGuard.Load --url URL --pid PID --rate PER_SECOND --minutes M --body FILE [--sample-seconds S]");
    return 64;
}

var (url, pid, rate, minutes, bodyPath, sampleSeconds) = options.Value;
var body = await File.ReadAllTextAsync(bodyPath).ConfigureAwait(false);
using var client = new HttpClient(new SocketsHttpHandler { MaxConnectionsPerServer = 64 }) { BaseAddress = url, Timeout = TimeSpan.FromSeconds(30) };
using var stop = new CancellationTokenSource();
var samples = new List<(TimeSpan At, long RssKiB, long HwmKiB)>();
var clock = Stopwatch.StartNew();
samples.Add((TimeSpan.Zero, ReadKiB(pid, "VmRSS:"), ReadKiB(pid, "VmHWM:")));
var sampler = Task.Run(async () =>
{
    using var timer = new PeriodicTimer(TimeSpan.FromSeconds(sampleSeconds));
    while (await timer.WaitForNextTickAsync(stop.Token).ConfigureAwait(false))
    {
        var sample = (clock.Elapsed, ReadKiB(pid, "VmRSS:"), ReadKiB(pid, "VmHWM:"));
        lock (samples)
        {
            samples.Add(sample);
        }

        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{sample.Elapsed.TotalMinutes,6:0.0} min  RSS {sample.Item2 / 1024.0,8:0.0} MiB  peak {sample.Item3 / 1024.0,8:0.0} MiB"));
    }
});

HttpRequestMessage Next(long _) => new(HttpMethod.Post, "/v1/evaluations") { Content = new StringContent(body, Encoding.UTF8, "application/json") };
static Task<LoadOutcome> Inspect(long _, HttpResponseMessage response) =>
    Task.FromResult(new LoadOutcome((int)response.StatusCode, response.IsSuccessStatusCode ? 1 : 0, response.IsSuccessStatusCode));

// Warm-up: 10 s each at a quarter, half and all of the rate (JIT, tiered compilation, thread-pool growth). A cold
// service hit at the full rate at once queues for seconds. Its answers are counted with the records.
var warmUp = new List<LoadReport>();
foreach (var share in new[] { 0.25, 0.5, 1.0 })
{
    warmUp.Add(await FixedRateLoad.RunAsync(client, rate * share, TimeSpan.FromSeconds(10), Next, Inspect, maxInFlight: 2048).ConfigureAwait(false));
}

var warmUpRecords = warmUp.Sum(r => r.Records);
var warmUpErrors = warmUp.Sum(r => r.Failed - r.LateStarts);
Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"warm-up: {warmUp.Sum(r => r.Answered)} answered, {warmUpErrors} errors, {warmUp.Sum(r => r.LateStarts)} not sent, p99 at the full rate {warmUp[^1].P99Milliseconds:0.0} ms"));
lock (samples)
{
    samples.Add((clock.Elapsed, ReadKiB(pid, "VmRSS:"), ReadKiB(pid, "VmHWM:")));
}

var report = await FixedRateLoad.RunAsync(client, rate, TimeSpan.FromMinutes(minutes), Next, Inspect, maxInFlight: 2048).ConfigureAwait(false);
await stop.CancelAsync().ConfigureAwait(false);
try
{
    await sampler.ConfigureAwait(false);
}
catch (OperationCanceledException)
{
}

samples.Add((clock.Elapsed, ReadKiB(pid, "VmRSS:"), ReadKiB(pid, "VmHWM:")));
var first = samples[1];
var last = samples[^1];
var steady = samples.Where(s => s.At >= TimeSpan.FromMinutes(Math.Min(5, minutes / 2))).ToList();
Console.WriteLine();
Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"rate {rate}/s for {minutes} min: scheduled {report.Scheduled}, answered {report.Answered}, failed {report.Failed}, not sent (in-flight cap) {report.LateStarts}"));
Console.WriteLine("statuses: " + string.Join(", ", report.ByStatus.OrderBy(p => p.Key).Select(p => string.Create(CultureInfo.InvariantCulture, $"{p.Key}: {p.Value}"))));
Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"latency from due time: p50 {report.P50Milliseconds:0.0} ms, p90 {report.P90Milliseconds:0.0} ms, p99 {report.P99Milliseconds:0.0} ms, max {report.MaxMilliseconds:0.0} ms"));
Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"working set (VmRSS): start (after warm-up) {first.RssKiB / 1024.0:0.0} MiB, end {last.RssKiB / 1024.0:0.0} MiB, peak (VmHWM) {last.HwmKiB / 1024.0:0.0} MiB"));
if (steady.Count >= 2)
{
    Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"from minute {Math.Min(5, minutes / 2):0.#} on: min {steady.Min(s => s.RssKiB) / 1024.0:0.0} MiB, max {steady.Max(s => s.RssKiB) / 1024.0:0.0} MiB over {steady.Count} samples"));
}

foreach (var error in report.Errors)
{
    Console.WriteLine("  " + error);
}

Console.WriteLine($"records answered 200: {warmUpRecords + report.Records} (warm-up {warmUpRecords})");
Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"working set before the warm-up: {samples[0].RssKiB / 1024.0:0.0} MiB"));
return report.Failed + warmUpErrors == 0 ? 0 : 1;

static long ReadKiB(int pid, string field)
{
    foreach (var line in File.ReadLines($"/proc/{pid}/status"))
    {
        if (line.StartsWith(field, StringComparison.Ordinal))
        {
            return long.Parse(line[field.Length..].Trim().Split(' ')[0], CultureInfo.InvariantCulture);
        }
    }

    return 0;
}

static (Uri Url, int Pid, double Rate, double Minutes, string Body, double SampleSeconds)? ParseArguments(string[] args)
{
    var map = new Dictionary<string, string>(StringComparer.Ordinal);
    for (var i = 0; i + 1 < args.Length; i += 2)
    {
        map[args[i]] = args[i + 1];
    }

    var inv = CultureInfo.InvariantCulture;
    return map.TryGetValue("--url", out var url) && Uri.TryCreate(url, UriKind.Absolute, out var uri)
        && map.TryGetValue("--pid", out var pid) && int.TryParse(pid, inv, out var p)
        && map.TryGetValue("--rate", out var rate) && double.TryParse(rate, inv, out var r) && r > 0
        && map.TryGetValue("--minutes", out var minutes) && double.TryParse(minutes, inv, out var m) && m > 0
        && map.TryGetValue("--body", out var body)
        ? (uri, p, r, m, body, map.TryGetValue("--sample-seconds", out var s) && double.TryParse(s, inv, out var sv) && sv > 0 ? sv : 60)
        : null;
}
