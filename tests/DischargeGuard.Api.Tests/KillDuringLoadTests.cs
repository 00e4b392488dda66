using System.Collections.Concurrent;
using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Text;
using System.Text.Json;
using DischargeGuard.Audit.Tests.Postgres;
using Xunit.Abstractions;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// The service process killed with SIGKILL while several clients are sending evaluations (single posts, NDJSON batches
/// and JSON batches), then started again on the same audit store. Every evaluation whose 200 a client received is
/// stored, byte for byte as it was answered; every stored record is whole; and the clients saw only 200s before the
/// kill and broken connections from it.
/// </summary>
public sealed class KillDuringLoadTests(ITestOutputHelper output)
{
    [Fact]
    public async Task Sqlite_WhenKilledMidLoad_EveryAnsweredEvaluationIsStoredWholeAfterRestart()
    {
        using var folder = new TempFolder("dischargeguard-kill-");

        await KillAndVerifyAsync(folder.Path, "sqlite", new Dictionary<string, string>());
    }

    [SkippableFact]
    public async Task Postgres_WhenKilledMidLoad_EveryAnsweredEvaluationIsStoredWholeAfterRestart()
    {
        await using var server = await PostgresServer.StartNewAsync(PostgresFixture.RequireBinaries());
        var database = await server.CreateDatabaseAsync();
        using var folder = new TempFolder("dischargeguard-kill-");

        await KillAndVerifyAsync(folder.Path, "postgresql", new Dictionary<string, string>
        {
            ["Audit__Provider"] = "postgresql",
            ["Audit__ConnectionString"] = server.ConnectionString(database),
        });
    }

    private async Task KillAndVerifyAsync(string folder, string provider, IReadOnlyDictionary<string, string> settings)
    {
        var clock = Stopwatch.StartNew();
        var load = new Load();
        TimeSpan loaded;
        await using (var service = await ServiceProcess.StartAsync(folder, "service", settings))
        {
            using var client = new HttpClient { BaseAddress = service.BaseAddress, Timeout = TimeSpan.FromSeconds(30) };
            var started = clock.Elapsed;
            var clients = new List<Task>();
            for (var c = 0; c < 4; c++)
            {
                var n = c;
                clients.Add(Task.Run(() => load.SinglesAsync(client, n)));
            }

            clients.Add(Task.Run(() => load.NdjsonBatchesAsync(client, items: 300)));
            clients.Add(Task.Run(() => load.JsonBatchesAsync(client, items: 20)));

            // Kill once every kind of request has been answered at least once and a few hundred 200s are in, so the
            // kill lands in steady load: single posts and batch chunks in flight, group commits in progress.
            await WaitUntilAsync(
                () => !load.Unexpected.IsEmpty || (load.Count("single") >= 200 && load.Count("ndjson") >= 300 && load.Count("json") >= 20),
                () => $"load before the kill ({load.Summary()}); service output:\n{service.Log}");
            Assert.True(load.Unexpected.IsEmpty, $"before the kill: {string.Join(" | ", load.Unexpected)}; service output:\n{service.Log}");
            var inFlight = load.Kill();
            await service.KillAsync();
            loaded = clock.Elapsed - started;
            Assert.Equal(137, service.ExitCode); // 128 + SIGKILL

            await Task.WhenAll(clients).WaitAsync(TimeSpan.FromSeconds(40));
            Assert.True(load.Unexpected.IsEmpty, "unexpected answers or errors: " + string.Join(" | ", load.Unexpected));
            Assert.True(inFlight > 0, "no request was in flight when the process was killed");

            // Every client loop ends at its first failure, and the only failure allowed is the connection the kill broke.
            Assert.Equal(clients.Count, load.ConnectionErrors);
            output.WriteLine($"{provider}: killed after {loaded.TotalSeconds:0.0} s of load with {inFlight} requests in flight");
        }

        var answered = load.Answered.ToArray();
        Assert.Equal(answered.Length, answered.Select(a => a.Id).Distinct().Count());

        await using var restarted = await ServiceProcess.StartAsync(folder, "service", settings);
        using var reader = new HttpClient { BaseAddress = restarted.BaseAddress, Timeout = TimeSpan.FromSeconds(30) };
        var verifyStarted = clock.Elapsed;

        // Every record in the store, paged through the list, read back whole and re-hashed.
        var listed = await ListAllAsync(reader);
        Assert.Equal(listed.Count, listed.Distinct().Count());
        var stored = new ConcurrentDictionary<Guid, (string Request, string Response)>();
        await Parallel.ForEachAsync(listed, new ParallelOptions { MaxDegreeOfParallelism = 4 }, async (id, cancellationToken) =>
        {
            using var get = await reader.GetAsync(new Uri($"/v1/evaluations/{id}", UriKind.Relative), cancellationToken);
            var text = await get.Content.ReadAsStringAsync(cancellationToken);
            Assert.True(get.StatusCode == HttpStatusCode.OK, $"GET {id}: {(int)get.StatusCode} {text}");
            using var record = JsonDocument.Parse(text);
            var request = record.RootElement.GetProperty("request");
            var response = record.RootElement.GetProperty("response");
            Assert.Equal(JsonValueKind.Object, request.ValueKind);
            Assert.Equal(id, response.GetProperty("id").GetGuid());
            Assert.Equal(record.RootElement.GetProperty("verdict").GetString(), response.GetProperty("verdict").GetString());
            stored[id] = (request.GetRawText(), response.GetRawText());

            using var verify = await reader.GetAsync(new Uri($"/v1/evaluations/{id}/verify", UriKind.Relative), cancellationToken);
            var check = await Json.ReadAsync(verify);
            Assert.True(verify.StatusCode == HttpStatusCode.OK && check.At("intact").GetBoolean(), $"verify {id}: {(int)verify.StatusCode} {check}");
        });

        // Every 200 a client received is among them, with the request as sent and the response as received.
        foreach (var a in answered)
        {
            Assert.True(stored.TryGetValue(a.Id, out var record), $"{a.Via} evaluation {a.Id} was answered 200 but is not stored after the restart");
            Assert.Equal(a.Response, record.Response);
            Assert.Equal(a.Request, record.Request);
        }

        Assert.True(listed.Count <= load.Sent, $"{listed.Count} records for {load.Sent} requests sent");
        output.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"{provider}: {load.Summary()}; records after restart {listed.Count} ({listed.Count - answered.Length} committed but not answered); "
            + $"verified in {(clock.Elapsed - verifyStarted).TotalSeconds:0.0} s; whole test {clock.Elapsed.TotalSeconds:0.0} s"));
    }

    private static async Task<List<Guid>> ListAllAsync(HttpClient client)
    {
        var ids = new List<Guid>();
        string? cursor = null;
        do
        {
            using var page = await client.GetAsync(new Uri("/v1/evaluations?limit=1000" + (cursor is null ? string.Empty : "&cursor=" + Uri.EscapeDataString(cursor)), UriKind.Relative));
            var body = await Json.ReadAsync(page);
            Assert.True(page.StatusCode == HttpStatusCode.OK, body.ToString());
            ids.AddRange(body.At("evaluations").EnumerateArray().Select(e => e.At("id").GetGuid()));
            cursor = body.TryGetProperty("nextCursor", out var next) && next.ValueKind == JsonValueKind.String ? next.GetString() : null;
        }
        while (cursor is not null);

        return ids;
    }

    private static async Task WaitUntilAsync(Func<bool> condition, Func<string> what)
    {
        var deadline = DateTime.UtcNow.AddSeconds(45);
        while (!condition())
        {
            Assert.True(DateTime.UtcNow < deadline, "timed out waiting for " + what());
            await Task.Delay(20);
        }
    }

    /// <summary>An evaluation a client received a 200 for: its id, the request as sent, the evaluation as received.</summary>
    private sealed record Answer(Guid Id, string Request, string Response, string Via);

    /// <summary>
    /// The clients' side: what was sent, what came back 200, and everything else. Each client loop sends until its first
    /// failure; a broken connection after <see cref="Kill"/> is expected, any other answer or error is recorded as unexpected.
    /// </summary>
    private sealed class Load
    {
        private int _sent;
        private int _inFlight;
        private int _connectionErrors;
        private int _ndjsonLines;
        private volatile bool _killed;

        public ConcurrentBag<Answer> Answered { get; } = [];

        public ConcurrentQueue<string> Unexpected { get; } = new();

        public int Sent => Volatile.Read(ref _sent);

        public int ConnectionErrors => Volatile.Read(ref _connectionErrors);

        public int Count(string via) => Answered.Count(a => a.Via == via);

        /// <summary>Marks the kill as begun; returns how many requests were in flight at that moment.</summary>
        public int Kill()
        {
            _killed = true;
            return Volatile.Read(ref _inFlight);
        }

        public string Summary() => string.Create(CultureInfo.InvariantCulture,
            $"sent {Sent} evaluations, 200s received {Answered.Count} (single {Count("single")}, NDJSON batch items {Count("ndjson")}, JSON batch items {Count("json")}), broken connections {ConnectionErrors}, last NDJSON batch answered {Volatile.Read(ref _ndjsonLines)} lines");

        public async Task SinglesAsync(HttpClient client, int n)
        {
            for (var i = 0; ; i++)
            {
                // Every fifth carries a measured temperature, so its evaluation also reads the asset's history from the store.
                var request = i % 5 == 0 ? Requests.PassingStage() : Requests.Minimal(suctionTemperature: Celsius(n, i));
                var body = request.ToJsonString();
                if (!await TrackAsync(1, "single", async () =>
                    {
                        using var content = new StringContent(body, Encoding.UTF8, "application/json");
                        using var response = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content);
                        var text = await response.Content.ReadAsStringAsync();
                        if (response.StatusCode != HttpStatusCode.OK)
                        {
                            Unexpected.Enqueue($"single: {(int)response.StatusCode} {text}");
                            return false;
                        }

                        using var parsed = JsonDocument.Parse(text);
                        Answered.Add(new Answer(parsed.RootElement.GetProperty("id").GetGuid(), body, text, "single"));
                        return true;
                    }))
                {
                    return;
                }
            }
        }

        public async Task NdjsonBatchesAsync(HttpClient client, int items)
        {
            for (var b = 0; ; b++)
            {
                var lines = Enumerable.Range(0, items).Select(i => Requests.Minimal(suctionTemperature: Celsius(b, i)).ToJsonString()).ToArray();
                var body = string.Join('\n', lines) + "\n";
                if (!await TrackAsync(items, "ndjson", async () =>
                    {
                        Volatile.Write(ref _ndjsonLines, 0);
                        using var request = new HttpRequestMessage(HttpMethod.Post, new Uri("/v1/evaluations/batch", UriKind.Relative))
                        {
                            Content = new StringContent(body, Encoding.UTF8, "application/x-ndjson"),
                        };

                        // Read the answer as it streams: a line is an item's answer once its newline has arrived, so the
                        // items of a chunk received before the kill count even though the batch never finished.
                        using var response = await client.SendAsync(request, HttpCompletionOption.ResponseHeadersRead);
                        if (response.StatusCode != HttpStatusCode.OK)
                        {
                            Unexpected.Enqueue($"ndjson batch: {(int)response.StatusCode} {await response.Content.ReadAsStringAsync()}");
                            return false;
                        }

                        var received = 0;
                        await using var stream = await response.Content.ReadAsStreamAsync();
                        var pending = new MemoryStream();
                        var buffer = new byte[16 * 1024];
                        int read;
                        while ((read = await stream.ReadAsync(buffer)) > 0)
                        {
                            var start = 0;
                            for (var i = 0; i < read; i++)
                            {
                                if (buffer[i] != (byte)'\n')
                                {
                                    continue;
                                }

                                pending.Write(buffer, start, i - start);
                                if (!TakeItem(pending.ToArray(), lines, "ndjson"))
                                {
                                    return false;
                                }

                                received++;
                                Volatile.Write(ref _ndjsonLines, received);
                                pending.SetLength(0);
                                start = i + 1;
                            }

                            pending.Write(buffer, start, read - start);
                        }

                        if (received != items || pending.Length != 0)
                        {
                            Unexpected.Enqueue($"ndjson batch ended after {received} of {items} lines without an error");
                            return false;
                        }

                        return true;
                    }))
                {
                    return;
                }
            }
        }

        public async Task JsonBatchesAsync(HttpClient client, int items)
        {
            for (var b = 0; ; b++)
            {
                var each = Enumerable.Range(0, items).Select(i => Requests.Minimal(suctionTemperature: Celsius(b + 1000, i)).ToJsonString()).ToArray();
                var body = "{\"evaluations\":[" + string.Join(',', each) + "]}";
                if (!await TrackAsync(items, "json", async () =>
                    {
                        using var content = new StringContent(body, Encoding.UTF8, "application/json");
                        using var response = await client.PostAsync(new Uri("/v1/evaluations/batch", UriKind.Relative), content);
                        var bytes = await response.Content.ReadAsByteArrayAsync();
                        if (response.StatusCode != HttpStatusCode.OK)
                        {
                            Unexpected.Enqueue($"json batch: {(int)response.StatusCode} {Encoding.UTF8.GetString(bytes)}");
                            return false;
                        }

                        using var parsed = JsonDocument.Parse(bytes);
                        var results = parsed.RootElement.GetProperty("results");
                        if (results.GetArrayLength() != items)
                        {
                            Unexpected.Enqueue($"json batch answered {results.GetArrayLength()} of {items} items");
                            return false;
                        }

                        foreach (var result in results.EnumerateArray())
                        {
                            if (!TakeItem(Encoding.UTF8.GetBytes(result.GetRawText()), each, "json"))
                            {
                                return false;
                            }
                        }

                        return true;
                    }))
                {
                    return;
                }
            }
        }

        // One batch result {"index", "status", "evaluation"}: a 200 is an answered evaluation, anything else unexpected.
        private bool TakeItem(byte[] line, string[] sent, string via)
        {
            using var result = JsonDocument.Parse(line);
            var root = result.RootElement;
            var status = root.GetProperty("status").GetInt32();
            if (status != 200)
            {
                Unexpected.Enqueue($"{via} batch item {root.GetProperty("index").GetInt32()}: {status} {root.GetProperty("problem")}");
                return false;
            }

            var evaluation = root.GetProperty("evaluation");
            Answered.Add(new Answer(evaluation.GetProperty("id").GetGuid(), sent[root.GetProperty("index").GetInt32()], evaluation.GetRawText(), via));
            return true;
        }

        // Runs one request; false ends the client's loop (after a failure, recorded here or by the request itself).
        private async Task<bool> TrackAsync(int evaluations, string via, Func<Task<bool>> send)
        {
            Interlocked.Add(ref _sent, evaluations);
            Interlocked.Increment(ref _inFlight);
            try
            {
                return await send();
            }
#pragma warning disable CA1031 // Every failure is classified: a broken connection after the kill is expected, anything else is reported.
            catch (Exception e)
#pragma warning restore CA1031
            {
                if (_killed && e is HttpRequestException or IOException)
                {
                    Interlocked.Increment(ref _connectionErrors);
                }
                else
                {
                    Unexpected.Enqueue($"{via}: {(_killed ? "after" : "before")} the kill, {e.GetType().Name}: {e.Message}");
                }

                return false;
            }
            finally
            {
                Interlocked.Decrement(ref _inFlight);
            }
        }

        private static string Celsius(int a, int b) => string.Create(CultureInfo.InvariantCulture, $"{10 + ((a * 7) + b) % 40} °C");
    }
}
