using System.Collections.Concurrent;
using System.Globalization;
using System.Net;
using System.Text;
using DischargeGuard.Audit.Tests.Postgres;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Several replicas on one PostgreSQL audit store: two service processes on two loopback ports, evaluations sent to both
/// at once, every one readable from either, none lost or stored twice. Also the guard that refuses SQLite when the
/// service is told it is one of several replicas, and the container probe mode.
/// </summary>
public sealed class ReplicaTests
{
    [SkippableFact]
    public async Task TwoReplicas_WhenBothTakeEvaluationsAtOnce_EveryRecordIsReadableFromEitherExactlyOnce()
    {
        await using var server = await PostgresServer.StartNewAsync(PostgresFixture.RequireBinaries());
        var database = await server.CreateDatabaseAsync();
        using var folder = new TempFolder();
        var settings = new Dictionary<string, string>
        {
            ["Audit__Provider"] = "postgresql",
            ["Audit__ConnectionString"] = server.ConnectionString(database),
            ["DischargeGuard__Replicas"] = "2",
        };

        // Both start at once: the schema migration runs under an advisory lock, so exactly one applies it.
        var starting = new[] { ServiceProcess.StartAsync(folder.Path, "a", settings), ServiceProcess.StartAsync(folder.Path, "b", settings) };
        await using var a = await starting[0];
        await using var b = await starting[1];
        using var clientA = new HttpClient { BaseAddress = a.BaseAddress };
        using var clientB = new HttpClient { BaseAddress = b.BaseAddress };

        var ids = new ConcurrentBag<Guid>();
        async Task SendAsync(HttpClient client, int count)
        {
            for (var i = 0; i < count; i++)
            {
                var request = Requests.Minimal(suctionTemperature: string.Create(CultureInfo.InvariantCulture, $"{20 + (i % 20)} °C"));
                request["asset"] = "C-204B";
                using var content = new StringContent(request.ToJsonString(), Encoding.UTF8, "application/json");
                using var response = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content);
                var body = await Json.ReadAsync(response);
                Assert.True(response.StatusCode == HttpStatusCode.OK, body.ToString());
                ids.Add(body.At("id").GetGuid());
            }
        }

        await Task.WhenAll(SendAsync(clientA, 60), SendAsync(clientA, 60), SendAsync(clientB, 60), SendAsync(clientB, 60));

        Assert.Equal(240, ids.Distinct().Count());
        foreach (var id in ids)
        {
            using var fromA = await clientA.GetAsync(new Uri($"/v1/evaluations/{id}", UriKind.Relative));
            using var fromB = await clientB.GetAsync(new Uri($"/v1/evaluations/{id}", UriKind.Relative));
            Assert.Equal(HttpStatusCode.OK, fromA.StatusCode);
            Assert.Equal(await fromA.Content.ReadAsStringAsync(), await fromB.Content.ReadAsStringAsync());
        }

        // The store holds exactly these records: the list, paged from either replica, has each id once.
        var listed = new List<Guid>();
        string? cursor = null;
        do
        {
            using var page = await clientB.GetAsync(new Uri("/v1/evaluations?asset=C-204B&limit=100" + (cursor is null ? string.Empty : "&cursor=" + Uri.EscapeDataString(cursor)), UriKind.Relative));
            var body = await Json.ReadAsync(page);
            listed.AddRange(body.At("evaluations").EnumerateArray().Select(e => e.At("id").GetGuid()));
            cursor = body.TryGetProperty("nextCursor", out var next) && next.ValueKind == System.Text.Json.JsonValueKind.String ? next.GetString() : null;
        }
        while (cursor is not null);

        Assert.Equal(ids.Order(), listed.Order());

        // The container health check's probe mode, against a live replica and against nothing.
        using var output = new StringWriter();
        Assert.Equal(0, await ProbeCommand.RunAsync(["--probe", new Uri(a.BaseAddress, "/health/ready").ToString()], output));
        Assert.Equal(1, await ProbeCommand.RunAsync(["--probe", $"http://127.0.0.1:{ServiceProcess.FreePort()}/health/ready"], output, TimeSpan.FromSeconds(2)));
        Assert.Equal(1, await ProbeCommand.RunAsync(["--probe", "not a url"], output));
    }

    [Fact]
    public async Task Start_WhenTwoReplicasAreConfiguredOnSqlite_StopsNamingBothSettings()
    {
        using var folder = new TempFolder();

        var e = await Assert.ThrowsAsync<InvalidOperationException>(() =>
            ServiceProcess.StartAsync(folder.Path, "sqlite", new Dictionary<string, string> { ["DischargeGuard__Replicas"] = "2" }));

        Assert.Contains("did not become ready", e.Message, StringComparison.Ordinal);
        Assert.Contains("DischargeGuard:Replicas is 2", e.Message, StringComparison.Ordinal);
        Assert.Contains("Audit:Provider=postgresql", e.Message, StringComparison.Ordinal);
    }
}
