using System.Globalization;
using System.Net;
using System.Text;
using System.Text.Json.Nodes;
using DischargeGuard.Load;
using Microsoft.Data.Sqlite;
using Xunit.Abstractions;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// The CI load run: the real service process on loopback, an open-loop load at a fixed rate for 20 s (well inside the
/// 60 s bound), singles and batches mixed. It proves behaviour under load, not speed (the figures are printed for
/// docs/reliability.md; speed goals live in bench/): no error of any kind, and exactly one audit row per evaluation
/// answered 200.
/// </summary>
public sealed class LoadTests(ITestOutputHelper output)
{
    // 60 requests/s, every tenth a batch of 10: 114 evaluations/s, a tenth of the single endpoint's measured peak here,
    // so the run stays honest on a CI machine that is also running the other test projects.
    private const double RequestsPerSecond = 60;
    private const int BatchEvery = 10;
    private const int BatchSize = 10;
    private static readonly TimeSpan Duration = TimeSpan.FromSeconds(20);

    [Fact]
    public async Task FixedRate_For20Seconds_AnswersEveryRequestWithoutErrorAndStoresExactlyOneRowPer200()
    {
        using var folder = new TempFolder();
        await using var service = await ServiceProcess.StartAsync(folder.Path, "load", new Dictionary<string, string>
        {
            // The shipped log level: an Information event per request and per evaluation, as in production.
            ["Serilog__MinimumLevel__Default"] = "Information",
        });
        using var client = new HttpClient { BaseAddress = service.BaseAddress, Timeout = TimeSpan.FromSeconds(30) };
        var single = Requests.PassingStage().ToJsonString();
        var batch = new JsonObject { ["evaluations"] = new JsonArray([.. Enumerable.Range(0, BatchSize).Select(i => (JsonNode)Batched(i))]) }.ToJsonString();

        // A short warm-up (the first requests pay for JIT compilation), counted with the rest.
        var warmUp = 0;
        for (; warmUp < 20; warmUp++)
        {
            using var content = new StringContent(single, Encoding.UTF8, "application/json");
            using var response = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content);
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        }

        var report = await FixedRateLoad.RunAsync(
            client,
            RequestsPerSecond,
            Duration,
            i => new HttpRequestMessage(HttpMethod.Post, i % BatchEvery == BatchEvery - 1 ? "/v1/evaluations/batch" : "/v1/evaluations")
            {
                Content = new StringContent(i % BatchEvery == BatchEvery - 1 ? batch : single, Encoding.UTF8, "application/json"),
            },
            InspectAsync);

        output.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"scheduled {report.Scheduled}, answered {report.Answered} in {report.Elapsed.TotalSeconds:0.0} s, failed {report.Failed}, records {report.Records}; latency from due time p50 {report.P50Milliseconds:0.0} ms, p90 {report.P90Milliseconds:0.0} ms, p99 {report.P99Milliseconds:0.0} ms, max {report.MaxMilliseconds:0.0} ms"));
        Assert.True(report.Failed == 0, string.Join("\n", report.Errors) + "\n" + service.Log[^Math.Min(4000, service.Log.Length)..]);
        Assert.Equal(report.Scheduled, report.Answered);
        Assert.Equal([200], report.ByStatus.Keys);
        var expected = report.Scheduled / BatchEvery * BatchSize + (report.Scheduled - (report.Scheduled / BatchEvery));
        Assert.Equal(expected, report.Records);

        // The store holds exactly the answered evaluations: no row for anything not answered 200, none missing.
        Assert.Equal(warmUp + report.Records, await CountRowsAsync(Path.Combine(folder.Path, "load", "audit.db")));
        using var ready = await client.GetAsync(new Uri("/health/ready", UriKind.Relative));
        Assert.Equal(HttpStatusCode.OK, ready.StatusCode);
    }

    private static JsonObject Batched(int i)
    {
        var request = Requests.Minimal(suctionTemperature: string.Create(CultureInfo.InvariantCulture, $"{25 + i} °C"));
        request["asset"] = "K-330C";
        return request;
    }

    private static async Task<LoadOutcome> InspectAsync(long sequence, HttpResponseMessage response)
    {
        var status = (int)response.StatusCode;
        if (status != 200)
        {
            return new LoadOutcome(status, 0, false);
        }

        var body = await Json.ReadAsync(response);
        if (!body.Has("results"))
        {
            return new LoadOutcome(status, body.Has("id") ? 1 : 0, body.Has("id"));
        }

        var items = body.At("results").EnumerateArray().Select(r => r.At("status").GetInt32()).ToList();
        var stored = items.Count(s => s == 200);
        return new LoadOutcome(status, stored, stored == items.Count);
    }

    private static async Task<long> CountRowsAsync(string path)
    {
        await using var connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = path, Mode = SqliteOpenMode.ReadOnly, Pooling = false }.ToString());
        await connection.OpenAsync();
        await using var command = connection.CreateCommand();
        command.CommandText = "SELECT count(*) FROM evaluations;";
        return (long)(await command.ExecuteScalarAsync())!;
    }
}
