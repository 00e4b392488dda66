using System.Text;
using DischargeGuard.Audit.Sqlite;
using Microsoft.Data.Sqlite;

namespace DischargeGuard.Audit.Tests;

/// <summary>A real SQLite audit file in its own temp folder, deleted with the fixture.</summary>
internal sealed class TempAuditFolder
{
    private readonly List<SqliteAuditStore> _stores = [];

    public TempAuditFolder()
    {
        Root = Path.Combine(Path.GetTempPath(), "dg-audit-tests-" + Guid.NewGuid().ToString("N"));

        // A nested, not yet existing folder: opening the store must create it.
        DatabasePath = Path.Combine(Root, "data", "audit.db");
    }

    public string Root { get; }

    public string DatabasePath { get; }

    public AuditStoreOptions Options(int maxBatchSize = 256, TimeSpan? busyTimeout = null) => new()
    {
        SqlitePath = DatabasePath,
        MaxBatchSize = maxBatchSize,
        BusyTimeout = busyTimeout ?? TimeSpan.FromSeconds(5),
    };

    public async Task<SqliteAuditStore> OpenAsync(AuditStoreOptions? options = null)
    {
        var store = await SqliteAuditStore.OpenAsync(options ?? Options(), CancellationToken.None);
        _stores.Add(store);
        return store;
    }

    /// <summary>A connection of the test's own, outside the store, for raw SQL on the file.</summary>
    public SqliteConnection OpenRaw()
    {
        var connection = new SqliteConnection(new SqliteConnectionStringBuilder
        {
            DataSource = DatabasePath,
            Mode = SqliteOpenMode.ReadWriteCreate,
            Pooling = false,
            DefaultTimeout = 1,
        }.ToString());
        connection.Open();
        return connection;
    }

    public long Scalar(string sql)
    {
        using var connection = OpenRaw();
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        return Convert.ToInt64(command.ExecuteScalar(), System.Globalization.CultureInfo.InvariantCulture);
    }

    public long CountEvaluations() => Scalar("SELECT count(*) FROM evaluations;");

    /// <summary>Closes every store opened here and deletes the folder (an xunit lifetime, not IAsyncDisposable, so test classes own it plainly).</summary>
    public async Task CleanUpAsync()
    {
        foreach (var store in _stores)
        {
            await store.DisposeAsync();
        }

        SqliteConnection.ClearAllPools();
        if (Directory.Exists(Root))
        {
            Directory.Delete(Root, recursive: true);
        }
    }
}

/// <summary>Records of an invented scenario: compressor trains at the kestrel-ridge site.</summary>
internal static class Sample
{
    public const string Site = "kestrel-ridge";
    public const string Digest = "5f2c1d0e9a8b7c6d5e4f30211203f4e5d6c7b8a90a1b2c3d4e5f60718293a4b5";
    public static readonly DateTimeOffset Start = new(2026, 3, 14, 9, 26, 53, TimeSpan.Zero);

    public static AuditRecord Record(
        DateTimeOffset? at = null,
        string asset = "K-101A",
        string? site = Site,
        string verdict = AuditVerdict.Pass,
        string caller = "key-field-07",
        int responsePadding = 0)
    {
        var when = at ?? Start;
        var id = Guid.CreateVersion7(when);
        var request = $$$"""{"asset":"{{{asset}}}","stage":1,"suction":{"pressure":"1.2 bar","temperature":"35 °C"},"discharge":{"pressure":"4.8 bar"}}""";
        var response = $$$"""{"id":"{{{id}}}","verdict":"{{{verdict}}}","discharge":{"temperature":"148.2 °C"},"pad":"{{{new string('x', responsePadding)}}}"}""";
        return new AuditRecord
        {
            Id = id,
            EvaluatedAt = when,
            Caller = caller,
            Asset = asset,
            SiteId = site,
            Verdict = verdict,
            RuleDigest = Digest,
            EngineVersion = "0.1.0",
            Request = Encoding.UTF8.GetBytes(request),
            Response = Encoding.UTF8.GetBytes(response),
        };
    }
}

/// <summary>What every backend's migration from the schema before stage summaries must keep: the old records readable byte-identical with no stages, history answered, and the chain verifying before and after a record with stages.</summary>
internal static class MigratedStoreChecks
{
    public static async Task OldRecordsReadBackAndTheChainExtendsAsync(IAuditStore store, IReadOnlyList<AuditRecord> records)
    {
        foreach (var record in records)
        {
            var read = await store.GetAsync(record.Id, CancellationToken.None);
            Assert.Equal(record.Request, read!.Request);
            Assert.Equal(record.Response, read.Response);
            Assert.Equal(record.EvaluatedAt.UtcTicks, read.EvaluatedAt.UtcTicks);
            Assert.Empty(read.Stages);
        }

        var history = await store.GetStageHistoryAsync(new AuditQuery { Asset = "C-204B" }, CancellationToken.None);
        Assert.Equal(records.Reverse().Select(r => r.Id), history.Select(h => h.RecordId));
        Assert.All(history, h => Assert.Empty(h.Stages));

        // New records carry stages after the old ones, and the whole chain still verifies.
        await store.AppendAsync(Sample.Record(at: Sample.Start.AddHours(1), asset: "C-204B") with
        {
            Stages = [new AuditStageSummary(0, AuditVerdict.Pass, null, null, 420, 431.5, 101_325, 400_000, null)],
        }, CancellationToken.None);
        var after = await store.VerifyChainAsync(CancellationToken.None);
        Assert.True(after.Intact, after.FirstBreak?.Reason);
        Assert.Equal(records.Count + 1, after.Records);
        Assert.Empty((await store.CheckHealthAsync(CancellationToken.None)).MissingGuards);
    }
}
