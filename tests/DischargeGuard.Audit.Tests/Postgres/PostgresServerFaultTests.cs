using System.Collections.Concurrent;
using DischargeGuard.Audit.Postgres;

namespace DischargeGuard.Audit.Tests.Postgres;

/// <summary>
/// The server crashes under load (<c>pg_ctl stop -m immediate</c>) and comes back on the same data folder. Runs on a
/// server of its own, so the shared one is never stopped; in the PostgreSQL group so it does not compete for the cores.
/// </summary>
[Collection(PostgresServerGroup.Name)]
public sealed class PostgresServerFaultTests : IAsyncLifetime
{
    private PostgresServer? _server;

    public async Task InitializeAsync() => _server = await PostgresServer.StartNewAsync(PostgresFixture.RequireBinaries());

    public async Task DisposeAsync()
    {
        if (_server is not null)
        {
            await _server.DisposeAsync();
        }
    }

    [SkippableFact]
    public async Task Append_WhenServerCrashesMidLoad_FailsInFlightAppendsKeepsCommittedOnesAndRecoversWithoutRestart()
    {
        var server = _server!;
        var connectionString = server.ConnectionString(await server.CreateDatabaseAsync());
        var store = await PostgresAuditStore.OpenAsync(
            new PostgresAuditStoreOptions { ConnectionString = connectionString, MaxBatchSize = 32, CommandTimeout = TimeSpan.FromSeconds(2) },
            CancellationToken.None);
        await using var _ = store;

        var sent = new ConcurrentDictionary<Guid, AuditRecord>();
        var succeeded = new ConcurrentBag<Guid>();
        var unavailable = new ConcurrentBag<AuditStoreUnavailableException>();
        var unexpected = new ConcurrentBag<Exception>();
        using var stop = new CancellationTokenSource();
        var counter = 0;
        var workers = Enumerable.Range(0, 8).Select(w => Task.Run(async () =>
        {
            while (!stop.IsCancellationRequested)
            {
                var n = Interlocked.Increment(ref counter);
                var record = Sample.Record(at: Sample.Start.AddMilliseconds(n), asset: $"K-{101 + (w % 4)}A", responsePadding: n % 5 * 200);
                sent[record.Id] = record;
                try
                {
                    await store.AppendAsync(record, CancellationToken.None);
                    succeeded.Add(record.Id);
                }
                catch (AuditStoreUnavailableException e)
                {
                    unavailable.Add(e);
                    await Task.Delay(10);
                }
#pragma warning disable CA1031 // Collected and asserted on below.
                catch (Exception e)
#pragma warning restore CA1031
                {
                    unexpected.Add(e);
                }
            }
        })).ToArray();

        await WaitUntilAsync(() => succeeded.Count >= 300, "300 appends before the crash");
        await server.StopAsync("immediate");
        var succeededBeforeCrash = succeeded.Count;
        await WaitUntilAsync(() => unavailable.Count >= 16, "appends failing while the server is down");
        var whileDown = await store.CheckHealthAsync(CancellationToken.None);
        await stop.CancelAsync();
        await Task.WhenAll(workers);

        Assert.Empty(unexpected);
        Assert.False(whileDown.IsHealthy);
        Assert.NotNull(whileDown.LastError);
        Assert.True(store.Statistics.FailedBatches > 0);

        await server.StartAsync();

        // The same store object: the writer reconnects on its next batch.
        var after = Sample.Record(at: Sample.Start.AddDays(1), asset: "K-101A");
        await store.AppendAsync(after, CancellationToken.None);
        succeeded.Add(after.Id);
        sent[after.Id] = after;
        var health = await store.CheckHealthAsync(CancellationToken.None);
        Assert.True(health.IsHealthy, health.LastError);

        // Every acknowledged append survived the crash.
        var stored = (await ToListAsync(store.QueryAsync(new AuditQuery(), CancellationToken.None))).ToDictionary(r => r.Id);
        var lost = succeeded.Where(id => !stored.ContainsKey(id)).ToList();
        Assert.True(lost.Count == 0, $"{lost.Count} acknowledged appends are missing after the crash");
        Assert.True(stored.Count >= succeededBeforeCrash);

        // Nothing stored is partial: every row is one that was sent, byte for byte, with matching hashes.
        foreach (var record in stored.Values)
        {
            Assert.True(sent.TryGetValue(record.Id, out var original), $"stored record {record.Id} was never sent");
            Assert.Equal(original.Request, record.Request);
            Assert.Equal(original.Response, record.Response);
            Assert.Equal(AuditDigest.Sha256Hex(record.Request), record.RequestSha256);
            Assert.Equal(AuditDigest.Sha256Hex(record.Response), record.ResponseSha256);
        }

        Assert.Equal(0, await PostgresRaw.ScalarAsync(connectionString,
            "SELECT count(*) FROM evaluations WHERE request_sha256 <> encode(sha256(request), 'hex') OR response_sha256 <> encode(sha256(response), 'hex');"));
    }

    private static async Task WaitUntilAsync(Func<bool> condition, string what)
    {
        var deadline = DateTime.UtcNow.AddSeconds(30);
        while (!condition())
        {
            Assert.True(DateTime.UtcNow < deadline, "Timed out waiting for " + what);
            await Task.Delay(5);
        }
    }

    private static async Task<List<AuditRecord>> ToListAsync(IAsyncEnumerable<AuditRecord> source)
    {
        var list = new List<AuditRecord>();
        await foreach (var item in source)
        {
            list.Add(item);
        }

        return list;
    }
}
