using System.Data.Common;
using System.Security.Cryptography;
using System.Text;

namespace DischargeGuard.Audit.Tests;

/// <summary>
/// What every <see cref="IAuditStore"/> must do, whatever the database: byte-identical round trips with their hashes,
/// validation before queueing, append-only tables, group commit, keyset paging and filters, and health.
/// Each provider runs it through a subclass that supplies a fresh, empty database per test.
/// </summary>
public abstract partial class AuditStoreContract : IAsyncLifetime
{
    private readonly List<IAuditStore> _stores = [];

    public virtual Task InitializeAsync() => Task.CompletedTask;

    public async Task DisposeAsync()
    {
        foreach (var store in _stores)
        {
            await store.DisposeAsync();
        }

        await CleanUpDatabaseAsync();
    }

    /// <summary>Opens a store on this test's database.</summary>
    protected abstract Task<IAuditStore> OpenStoreCoreAsync(int maxBatchSize);

    /// <summary>Runs SQL on a connection of the test's own, outside the store.</summary>
    protected abstract Task<int> ExecuteRawAsync(string sql);

    protected abstract Task<long> ScalarAsync(string sql);

    protected abstract Task HoldWriterAsync(IAuditStore store, Task release);

    protected abstract Task CleanUpDatabaseAsync();

    /// <summary>Removes the update and delete guards on evaluations, as someone with file or owner access could.</summary>
    protected abstract Task DropEvaluationGuardsAsync();

    /// <summary>A blob literal of this database for <paramref name="hex"/>.</summary>
    protected abstract string BlobLiteral(string hex);

    protected async Task<IAuditStore> OpenStoreAsync(int maxBatchSize = 256)
    {
        var store = await OpenStoreCoreAsync(maxBatchSize);
        _stores.Add(store);
        return store;
    }

    protected Task<long> CountEvaluationsAsync() => ScalarAsync("SELECT count(*) FROM evaluations;");

    // ---- Round trip and validation ----

    [SkippableFact]
    public async Task Get_WhenRecordWasAppended_ReturnsIdenticalBytesAndTheirSha256()
    {
        var store = await OpenStoreAsync();
        var record = Sample.Record() with
        {
            // Bytes a re-serialisation would change: odd spacing, key order, escaped and raw non-ASCII.
            Response = Encoding.UTF8.GetBytes("{ \"verdict\" :\"review\",\"note\":\"marge \\u00e9troite\", \"t\":\"151.0 °C\"  }\n"),
        };

        await store.AppendAsync(record, CancellationToken.None);
        var read = await store.GetAsync(record.Id, CancellationToken.None);

        Assert.NotNull(read);
        Assert.Equal(record.Request, read.Request);
        Assert.Equal(record.Response, read.Response);
        Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(record.Request)), read.RequestSha256);
        Assert.Equal(AuditDigest.Sha256Hex(record.Response), read.ResponseSha256);
        Assert.Equal(record.Id, read.Id);
        Assert.Equal(record.EvaluatedAt, read.EvaluatedAt);
        Assert.Equal(TimeSpan.Zero, read.EvaluatedAt.Offset);
        Assert.Equal(record.Caller, read.Caller);
        Assert.Equal(record.Asset, read.Asset);
        Assert.Equal(record.SiteId, read.SiteId);
        Assert.Equal(record.Verdict, read.Verdict);
        Assert.Equal(record.RuleDigest, read.RuleDigest);
        Assert.Equal(record.EngineVersion, read.EngineVersion);
        Assert.Null(read.ReplayOf);
    }

    [SkippableFact]
    public async Task Append_WhenItCompletes_StoredHashesAreVisibleToAnotherConnection()
    {
        var store = await OpenStoreAsync();
        var record = Sample.Record();

        await store.AppendAsync(record, CancellationToken.None);

        Assert.Equal(1, await ScalarAsync(
            $"SELECT count(*) FROM evaluations WHERE request_sha256 = '{AuditDigest.Sha256Hex(record.Request)}' AND response_sha256 = '{AuditDigest.Sha256Hex(record.Response)}';"));
    }

    [SkippableFact]
    public async Task Get_WhenStoreWasReopened_ReturnsRecordCommittedBeforeToTheTick()
    {
        var record = Sample.Record(at: Sample.Start.AddTicks(1234567)) with { ReplayOf = Guid.CreateVersion7(Sample.Start) };
        var first = await OpenStoreCoreAsync(256);
        await using (first)
        {
            await first.AppendAsync(record, CancellationToken.None);
        }

        var second = await OpenStoreAsync();
        var read = await second.GetAsync(record.Id, CancellationToken.None);

        Assert.NotNull(read);
        Assert.Equal(record.Response, read.Response);
        Assert.Equal(record.EvaluatedAt.UtcTicks, read.EvaluatedAt.UtcTicks);
        Assert.Equal(record.ReplayOf, read.ReplayOf);
    }

    [SkippableFact]
    public async Task Get_WhenIdUnknown_ReturnsNull()
    {
        var store = await OpenStoreAsync();
        await store.AppendAsync(Sample.Record(), CancellationToken.None);

        Assert.Null(await store.GetAsync(Guid.CreateVersion7(), CancellationToken.None));
    }

    [SkippableFact]
    public async Task Append_WhenTimeHasOffset_StoresSameInstantInUtc()
    {
        var store = await OpenStoreAsync();
        var local = new DateTimeOffset(2026, 3, 14, 11, 26, 53, TimeSpan.FromHours(2));
        var record = Sample.Record(at: local);

        await store.AppendAsync(record, CancellationToken.None);
        var read = await store.GetAsync(record.Id, CancellationToken.None);

        Assert.NotNull(read);
        Assert.Equal(Sample.Start, read.EvaluatedAt);
        Assert.Equal(TimeSpan.Zero, read.EvaluatedAt.Offset);
    }

    [SkippableFact]
    public async Task Append_WhenIdIsNotVersion7_ThrowsArgumentExceptionAndStoresNothing()
    {
        var store = await OpenStoreAsync();

        await Assert.ThrowsAsync<ArgumentException>(() => store.AppendAsync(Sample.Record() with { Id = Guid.NewGuid() }, CancellationToken.None).AsTask());

        Assert.Equal(0, await CountEvaluationsAsync());
    }

    [SkippableTheory]
    [InlineData("PASS")]
    [InlineData("ok")]
    [InlineData("")]
    public async Task Append_WhenVerdictUnknown_ThrowsArgumentOutOfRange(string verdict)
    {
        var store = await OpenStoreAsync();

        var e = await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => store.AppendAsync(Sample.Record() with { Verdict = verdict }, CancellationToken.None).AsTask());

        Assert.Equal("record", e.ParamName);
    }

    [SkippableFact]
    public async Task Append_WhenSuppliedHashDoesNotMatchBytes_ThrowsArgumentException()
    {
        var store = await OpenStoreAsync();
        var record = Sample.Record();

        await Assert.ThrowsAsync<ArgumentException>(() => store.AppendAsync(record with { ResponseSha256 = AuditDigest.Sha256Hex(record.Request) }, CancellationToken.None).AsTask());
        await store.AppendAsync(record with { ResponseSha256 = AuditDigest.Sha256Hex(record.Response) }, CancellationToken.None);

        Assert.Equal(1, await CountEvaluationsAsync());
    }

    [SkippableFact]
    public async Task Append_WhenRuleDigestIsNotLowerHex_ThrowsArgumentException()
    {
        var store = await OpenStoreAsync();

        await Assert.ThrowsAsync<ArgumentException>(() => store.AppendAsync(Sample.Record() with { RuleDigest = Sample.Digest.ToUpperInvariant() }, CancellationToken.None).AsTask());
    }

    [SkippableFact]
    public async Task Append_WhenTokenAlreadyCancelled_ThrowsAndStoresNothing()
    {
        var store = await OpenStoreAsync();

        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => store.AppendAsync(Sample.Record(), new CancellationToken(canceled: true)).AsTask());

        Assert.Equal(0, await CountEvaluationsAsync());
    }

    [SkippableFact]
    public async Task Append_WhenIdAlreadyStored_ThrowsUnavailableAndKeepsTheFirst()
    {
        var store = await OpenStoreAsync();
        var record = Sample.Record();
        await store.AppendAsync(record, CancellationToken.None);

        await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => store.AppendAsync(record with { Verdict = AuditVerdict.Fail }, CancellationToken.None).AsTask());

        Assert.Equal(1, await CountEvaluationsAsync());
        Assert.Equal(AuditVerdict.Pass, (await store.GetAsync(record.Id, CancellationToken.None))?.Verdict);
    }

    [SkippableFact]
    public async Task Append_WhenStoreDisposed_ThrowsAuditStoreUnavailable()
    {
        var store = await OpenStoreAsync();
        await store.DisposeAsync();

        await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => store.AppendAsync(Sample.Record(), CancellationToken.None).AsTask());
        await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => store.GetAsync(Guid.CreateVersion7(), CancellationToken.None));
    }

    [SkippableFact]
    public async Task Dispose_WhenAppendsAreQueued_FaultsThemAndStoresNone()
    {
        var store = await OpenStoreAsync();
        var release = new TaskCompletionSource();
        await HoldWriterAsync(store, release.Task);
        var queued = Enumerable.Range(0, 3).Select(i => store.AppendAsync(Sample.Record(asset: $"K-10{i}B"), CancellationToken.None).AsTask()).ToArray();

        var disposing = store.DisposeAsync();
        release.SetResult();
        await disposing;

        foreach (var append in queued)
        {
            await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => append);
        }

        Assert.Equal(0, await CountEvaluationsAsync());
    }

    // ---- Append-only ----

    private async Task SeedOlderAndNewerAsync()
    {
        var store = await OpenStoreAsync();
        await store.AppendAsync(Sample.Record(at: Sample.Start), CancellationToken.None);
        await store.AppendAsync(Sample.Record(at: Sample.Start.AddDays(30), asset: "K-102A"), CancellationToken.None);
    }

    [SkippableTheory]
    [InlineData("UPDATE evaluations SET verdict = 'pass';")]
    [InlineData("UPDATE evaluations SET response = request WHERE asset = 'K-101A';")]
    [InlineData("DELETE FROM evaluations;")]
    [InlineData("DELETE FROM evaluations WHERE asset = 'K-101A';")]
    public async Task RawSql_WhenItChangesOrRemovesEvaluations_IsRefusedByTrigger(string sql)
    {
        await SeedOlderAndNewerAsync();

        var e = await Assert.ThrowsAnyAsync<DbException>(() => ExecuteRawAsync(sql));

        Assert.Contains("evaluations are append-only", e.Message, StringComparison.Ordinal);
        Assert.Equal(2, await CountEvaluationsAsync());
        Assert.Equal(0, await ScalarAsync("SELECT count(*) FROM evaluations WHERE verdict <> 'pass' OR response = request;"));
    }

    [SkippableFact]
    public async Task RawSql_WhenARetentionGrantIsForged_IsRefusedOrDetected()
    {
        await SeedOlderAndNewerAsync();

        // The old route (a bare grant, then a delete below it) is refused: a grant must carry the chain's anchor.
        var bare = await Assert.ThrowsAnyAsync<DbException>(() => ExecuteRawAsync("""
            INSERT INTO retention_grants (granted_at, delete_before, granted_by, reason)
            VALUES ('2026-05-01T00:00:00.0000000Z', '2026-04-01T00:00:00.0000000Z', 'admin-ops', 'forged');
            """));
        Assert.Contains("retention grants are written only", bare.Message, StringComparison.Ordinal);

        // An anchor whose prefix holds a younger record is refused too.
        var young = await Assert.ThrowsAnyAsync<DbException>(() => ExecuteRawAsync($"""
            INSERT INTO retention_grants (granted_at, delete_before, granted_by, reason, anchor_seq, anchor_hash, prev_grant_hash, grant_hash)
            VALUES ('2026-05-01T00:00:00.0000000Z', '2026-04-01T00:00:00.0000000Z', 'admin-ops', 'forged', 2,
                    (SELECT record_hash FROM evaluations WHERE seq = 2), '{AuditChain.GenesisHash}', '{new string('a', 64)}');
            """));
        Assert.Contains("retention grants are written only", young.Message, StringComparison.Ordinal);
        await Assert.ThrowsAnyAsync<DbException>(() => ExecuteRawAsync("DELETE FROM evaluations;"));
        Assert.Equal(2, await CountEvaluationsAsync());

        // A grant that copies a real anchor passes the trigger, but its hash is not the chained hash of its fields.
        await ExecuteRawAsync($"""
            INSERT INTO retention_grants (granted_at, delete_before, granted_by, reason, anchor_seq, anchor_hash, prev_grant_hash, grant_hash)
            VALUES ('2026-05-01T00:00:00.0000000Z', '2026-04-01T00:00:00.0000000Z', 'admin-ops', 'forged', 1,
                    (SELECT record_hash FROM evaluations WHERE seq = 1), '{AuditChain.GenesisHash}', '{new string('a', 64)}');
            """);
        Assert.Equal(1, await ExecuteRawAsync("DELETE FROM evaluations WHERE seq = 1;"));
        var store = await OpenStoreAsync();
        var verification = await store.VerifyChainAsync(CancellationToken.None);
        Assert.False(verification.Intact);
        Assert.Contains("Retention grant", verification.FirstBreak!.Reason, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task ApplyRetention_WhenGranted_DeletesOnlyOlderRecordsAndKeepsTheGrant()
    {
        var store = await OpenStoreAsync();
        var old = Sample.Record(at: Sample.Start.AddDays(-400), asset: "K-101A");
        var recent = Sample.Record(at: Sample.Start, asset: "K-102A");
        await store.AppendAsync(old, CancellationToken.None);
        await store.AppendAsync(recent, CancellationToken.None);
        var cutoff = Sample.Start.AddDays(-365);

        Assert.Equal(1, await store.CountBeforeAsync(cutoff, CancellationToken.None));
        var result = await store.ApplyRetentionAsync(new RetentionGrant(cutoff, "key-admin-01", "keep 1 year (site records policy RP-7)", Sample.Start), CancellationToken.None);

        Assert.Equal(1, result.Deleted);
        Assert.True(result.GrantId > 0);
        Assert.Null(await store.GetAsync(old.Id, CancellationToken.None));
        Assert.NotNull(await store.GetAsync(recent.Id, CancellationToken.None));
        Assert.Equal(1, await ScalarAsync("SELECT count(*) FROM retention_grants WHERE granted_by = 'key-admin-01';"));
        Assert.Equal(0, await store.CountBeforeAsync(cutoff, CancellationToken.None));

        // The store still takes appends after a retention run.
        await store.AppendAsync(Sample.Record(at: Sample.Start.AddMinutes(1)), CancellationToken.None);
        Assert.Equal(2, await CountEvaluationsAsync());
    }

    [SkippableTheory]
    [InlineData("", "reason")]
    [InlineData("key-admin-01", " ")]
    public async Task ApplyRetention_WhenGrantHasNoAuthorOrReason_ThrowsAndDeletesNothing(string by, string reason)
    {
        var store = await OpenStoreAsync();
        await store.AppendAsync(Sample.Record(at: Sample.Start.AddDays(-400)), CancellationToken.None);

        await Assert.ThrowsAsync<ArgumentException>(() => store.ApplyRetentionAsync(new RetentionGrant(Sample.Start, by, reason, Sample.Start), CancellationToken.None));

        Assert.Equal(1, await CountEvaluationsAsync());
        Assert.Equal(0, await ScalarAsync("SELECT count(*) FROM retention_grants;"));
    }

    [SkippableFact]
    public async Task ApplyRetention_WhenCutoffIsInTheFuture_Throws()
    {
        var store = await OpenStoreAsync();

        await Assert.ThrowsAsync<ArgumentException>(() => store.ApplyRetentionAsync(new RetentionGrant(Sample.Start.AddDays(1), "key-admin-01", "r", Sample.Start), CancellationToken.None));
    }

    [SkippableTheory]
    [InlineData("UPDATE retention_grants SET delete_before = '9999-12-31T00:00:00.0000000Z';")]
    [InlineData("DELETE FROM retention_grants;")]
    public async Task RawSql_WhenItChangesRetentionGrants_IsRefusedByTrigger(string sql)
    {
        var store = await OpenStoreAsync();
        await store.ApplyRetentionAsync(new RetentionGrant(Sample.Start.AddDays(-800), "admin-ops", "test", Sample.Start), CancellationToken.None);

        var e = await Assert.ThrowsAnyAsync<DbException>(() => ExecuteRawAsync(sql));

        Assert.Contains("retention grants are append-only", e.Message, StringComparison.Ordinal);
    }

    // ---- Hash chain ----

    private async Task<(IAuditStore Store, AuditRecord[] Records)> SeedChainAsync(int count = 3)
    {
        var store = await OpenStoreAsync();
        var records = Enumerable.Range(0, count).Select(i => Sample.Record(at: Sample.Start.AddMinutes(i), asset: $"K-20{i}A")).ToArray();
        foreach (var record in records)
        {
            await store.AppendAsync(record, CancellationToken.None);
        }

        return (store, records);
    }

    [SkippableFact]
    public async Task VerifyChain_WhenNothingWasTouched_IsIntactAndEndsAtTheHead()
    {
        var (store, records) = await SeedChainAsync();
        await Task.WhenAll(Enumerable.Range(0, 40).Select(i => store.AppendAsync(Sample.Record(at: Sample.Start.AddSeconds(i)), CancellationToken.None).AsTask()));

        var verification = await store.VerifyChainAsync(CancellationToken.None);
        var head = await store.GetChainHeadAsync(CancellationToken.None);

        Assert.True(verification.Intact, verification.FirstBreak?.Reason);
        Assert.Equal(43, verification.Records);
        Assert.Equal(1, verification.FirstSequence);
        Assert.Equal(43, head.Sequence);
        Assert.Equal(head, verification.Head);
        var first = await store.GetAsync(records[0].Id, CancellationToken.None);
        Assert.Equal(1, first!.Sequence);
        Assert.Equal(AuditChain.GenesisHash, first.PreviousHash);
        Assert.Equal(AuditChain.RecordHash(1, AuditChain.GenesisHash, first), first.RecordHash);
    }

    [SkippableFact]
    public async Task VerifyChain_WhenAVerdictOrCallerIsChangedBehindTheGuards_ReportsThatRecord()
    {
        var (store, records) = await SeedChainAsync();
        await DropEvaluationGuardsAsync();

        Assert.Equal(1, await ExecuteRawAsync("UPDATE evaluations SET verdict = 'fail', caller = 'someone-else' WHERE seq = 2;"));
        var verification = await store.VerifyChainAsync(CancellationToken.None);

        Assert.False(verification.Intact);
        Assert.Equal(2, verification.FirstBreak!.Sequence);
        Assert.Equal(records[1].Id, verification.FirstBreak.RecordId);
        Assert.Contains("column", verification.FirstBreak.Reason, StringComparison.Ordinal);
        Assert.Equal(1, verification.Records);
    }

    [SkippableFact]
    public async Task VerifyChain_WhenABodyIsReplacedAndItsHashRecomputed_TheChainBreaksThere()
    {
        var (store, _) = await SeedChainAsync();
        await DropEvaluationGuardsAsync();

        await ExecuteRawAsync($"UPDATE evaluations SET response = {BlobLiteral("7b7d")}, response_sha256 = '{AuditDigest.Sha256Hex("{}"u8)}' WHERE seq = 3;");
        var verification = await store.VerifyChainAsync(CancellationToken.None);

        Assert.False(verification.Intact);
        Assert.Equal(3, verification.FirstBreak!.Sequence);
    }

    [SkippableTheory]
    [InlineData(2, 2)]
    [InlineData(3, 3)]
    public async Task VerifyChain_WhenARowIsDeletedBehindTheGuards_TheChainBreaks(long deleted, long breakAt)
    {
        var (store, _) = await SeedChainAsync();
        await DropEvaluationGuardsAsync();

        Assert.Equal(1, await ExecuteRawAsync($"DELETE FROM evaluations WHERE seq = {deleted};"));
        var verification = await store.VerifyChainAsync(CancellationToken.None);

        Assert.False(verification.Intact);
        Assert.Equal(breakAt, verification.FirstBreak!.Sequence);
        Assert.Contains(deleted == 3 ? "head" : "missing", verification.FirstBreak.Reason, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task CheckHealth_WhenAGuardTriggerIsDropped_IsUnhealthyNamingItAndReopeningIsRefused()
    {
        var (store, _) = await SeedChainAsync(1);
        Assert.Empty((await store.CheckHealthAsync(CancellationToken.None)).MissingGuards);

        await DropEvaluationGuardsAsync();
        var health = await store.CheckHealthAsync(CancellationToken.None);

        Assert.False(health.IsHealthy);
        Assert.Contains(health.MissingGuards, g => g.Contains("evaluations_no_update", StringComparison.Ordinal));
        var refused = await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => OpenStoreCoreAsync(256));
        Assert.Contains("evaluations_no_update", refused.Message, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task ApplyRetention_WhenItRemovesTheOldestRecords_TheRestVerifiesFromTheAnchorTheGrantStores()
    {
        var store = await OpenStoreAsync();
        foreach (var days in new[] { -500, -450, -10, -5 })
        {
            await store.AppendAsync(Sample.Record(at: Sample.Start.AddDays(days)), CancellationToken.None);
        }

        var result = await store.ApplyRetentionAsync(new RetentionGrant(Sample.Start.AddDays(-365), "key-admin-01", "keep 1 year", Sample.Start), CancellationToken.None);
        await store.AppendAsync(Sample.Record(at: Sample.Start), CancellationToken.None);
        var verification = await store.VerifyChainAsync(CancellationToken.None);

        Assert.Equal(2, result.Deleted);
        Assert.True(verification.Intact, verification.FirstBreak?.Reason);
        Assert.Equal(new AuditChainAnchor(2, verification.Anchor.Hash, result.GrantId), verification.Anchor);
        Assert.Equal(3, verification.FirstSequence);
        Assert.Equal(3, verification.Records);
        Assert.Equal(2, await ScalarAsync("SELECT anchor_seq FROM retention_grants;"));
    }

    [SkippableFact]
    public async Task Append_WhenTwoStoresWriteTheSameDatabaseAtOnce_TheChainDoesNotFork()
    {
        var first = await OpenStoreAsync();
        var second = await OpenStoreAsync();

        await Task.WhenAll(Enumerable.Range(0, 120).Select(i => Task.Run(() =>
            (i % 2 == 0 ? first : second).AppendAsync(Sample.Record(at: Sample.Start.AddMilliseconds(i)), CancellationToken.None).AsTask())));
        var verification = await first.VerifyChainAsync(CancellationToken.None);

        Assert.True(verification.Intact, verification.FirstBreak?.Reason);
        Assert.Equal(120, verification.Records);
    }

    // ---- Group commit ----

    [SkippableFact]
    public async Task Append_When500RunConcurrently_AllLandInFewerTransactions()
    {
        var store = await OpenStoreAsync();
        var records = Enumerable.Range(0, 500)
            .Select(i => Sample.Record(at: Sample.Start.AddMilliseconds(i), asset: $"K-{100 + (i % 7)}A"))
            .ToArray();

        await Task.WhenAll(records.Select(r => Task.Run(() => store.AppendAsync(r, CancellationToken.None).AsTask())));

        var stats = store.Statistics;
        Assert.Equal(500, stats.Records);
        Assert.InRange(stats.Batches, 1, 499);
        Assert.True(stats.LargestBatchSize > 1, $"largest batch was {stats.LargestBatchSize}");
        Assert.Equal(0, stats.FailedBatches);
        Assert.Equal(500, await CountEvaluationsAsync());
        foreach (var record in records.Where((_, i) => i % 50 == 0))
        {
            Assert.Equal(record.Response, (await store.GetAsync(record.Id, CancellationToken.None))?.Response);
        }
    }

    [SkippableFact]
    public async Task Append_WhenQueuedBehindBusyWriter_CommitsInBatchesOfAtMostMaxBatchSize()
    {
        var store = await OpenStoreAsync(maxBatchSize: 16);
        var release = new TaskCompletionSource();
        await HoldWriterAsync(store, release.Task);
        var appends = Enumerable.Range(0, 40)
            .Select(i => store.AppendAsync(Sample.Record(at: Sample.Start.AddSeconds(i)), CancellationToken.None).AsTask())
            .ToArray();

        release.SetResult();
        await Task.WhenAll(appends);

        var stats = store.Statistics;
        Assert.Equal(3, stats.Batches); // 16 + 16 + 8
        Assert.Equal(16, stats.LargestBatchSize);
        Assert.Equal(8, stats.LastBatchSize);
        Assert.Equal(40, stats.Records);
        Assert.Equal(40, await CountEvaluationsAsync());
    }

    [SkippableFact]
    public async Task Append_WhenOneRecordOfABatchIsRefused_NoneOfTheBatchIsStored()
    {
        var store = await OpenStoreAsync();
        var existing = Sample.Record();
        await store.AppendAsync(existing, CancellationToken.None);
        var release = new TaskCompletionSource();
        await HoldWriterAsync(store, release.Task);
        var fresh = Enumerable.Range(1, 3).Select(i => Sample.Record(at: Sample.Start.AddSeconds(i))).ToArray();
        var appends = fresh.Append(existing).Select(r => store.AppendAsync(r, CancellationToken.None).AsTask()).ToArray();

        release.SetResult();

        foreach (var append in appends)
        {
            await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => append);
        }

        Assert.Equal(1, await CountEvaluationsAsync());
        Assert.Equal(1, store.Statistics.FailedBatches);
        await store.AppendAsync(fresh[0], CancellationToken.None); // the writer reconnected
        Assert.Equal(2, await CountEvaluationsAsync());
    }

    // ---- Queries and keyset paging ----

    private async Task<(IAuditStore Store, List<AuditRecord> Records)> SeedQueryRecordsAsync()
    {
        var store = await OpenStoreAsync();
        string[] verdicts = [AuditVerdict.Pass, AuditVerdict.Review, AuditVerdict.Fail];

        // 25 records; every three share a timestamp, so the id tie-break decides their order.
        var records = Enumerable.Range(0, 25)
            .Select(i => Sample.Record(
                at: Sample.Start.AddMinutes(i / 3),
                asset: i % 2 == 0 ? "K-101A" : "K-102B",
                site: i % 5 == 0 ? "osprey-flats" : Sample.Site,
                verdict: verdicts[i % 3],
                caller: i % 4 == 0 ? AuditRecord.AnonymousCaller : "key-field-07"))
            .ToList();

        // Appended out of order, so the result order comes from the query, not insertion.
        foreach (var record in records.OrderBy(r => r.Id.ToString()[^4..], StringComparer.Ordinal))
        {
            await store.AppendAsync(record, CancellationToken.None);
        }

        return (store, records);
    }

    private static IEnumerable<AuditRecord> NewestFirst(IEnumerable<AuditRecord> records) => records
        .OrderByDescending(r => r.EvaluatedAt)
        .ThenByDescending(r => r.Id.ToString(), StringComparer.Ordinal);

    [SkippableFact]
    public async Task QueryPage_When25RecordsInPagesOf10_Returns3PagesNewestFirstWithoutGapsOrDuplicates()
    {
        var (store, records) = await SeedQueryRecordsAsync();
        var pages = new List<AuditPage>();
        string? cursor = null;
        do
        {
            var page = await store.QueryPageAsync(new AuditQuery { Limit = 10, Cursor = cursor }, CancellationToken.None);
            pages.Add(page);
            cursor = page.NextCursor;
        }
        while (cursor is not null && pages.Count < 10);

        Assert.Equal([10, 10, 5], pages.Select(p => p.Records.Count));
        Assert.Null(pages[^1].NextCursor);
        Assert.Equal(NewestFirst(records).Select(r => r.Id), pages.SelectMany(p => p.Records).Select(r => r.Id));
    }

    [SkippableFact]
    public async Task QueryPage_WhenExactlyOnePageMatches_HasNoNextCursor()
    {
        var (store, _) = await SeedQueryRecordsAsync();

        var page = await store.QueryPageAsync(new AuditQuery { Limit = 25 }, CancellationToken.None);

        Assert.Equal(25, page.Records.Count);
        Assert.Null(page.NextCursor);
    }

    [SkippableFact]
    public async Task Query_WhenFilteredByAssetAndVerdict_ReturnsOnlyMatchesNewestFirst()
    {
        var (store, records) = await SeedQueryRecordsAsync();

        var found = await ToListAsync(store.QueryAsync(new AuditQuery { Asset = "K-101A", Verdict = AuditVerdict.Fail }, CancellationToken.None));

        var expected = NewestFirst(records.Where(r => r.Asset == "K-101A" && r.Verdict == AuditVerdict.Fail)).Select(r => r.Id).ToList();
        Assert.NotEmpty(expected);
        Assert.Equal(expected, found.Select(r => r.Id));
    }

    [SkippableFact]
    public async Task Query_WhenFilteredBySiteAndCaller_ReturnsOnlyMatches()
    {
        var (store, records) = await SeedQueryRecordsAsync();

        var found = await ToListAsync(store.QueryAsync(new AuditQuery { SiteId = "osprey-flats", Caller = AuditRecord.AnonymousCaller }, CancellationToken.None));

        var expected = NewestFirst(records.Where(r => r.SiteId == "osprey-flats" && r.Caller == AuditRecord.AnonymousCaller)).Select(r => r.Id).ToList();
        Assert.NotEmpty(expected);
        Assert.Equal(expected, found.Select(r => r.Id));
    }

    [SkippableFact]
    public async Task Query_WhenNarrowedToSitesAndAssets_ReturnsOnlyRecordsInsideBothLists()
    {
        var (store, records) = await SeedQueryRecordsAsync();
        await store.AppendAsync(Sample.Record(at: Sample.Start.AddHours(1), site: null), CancellationToken.None);

        var bySite = await ToListAsync(store.QueryAsync(new AuditQuery { SiteIn = ["osprey-flats", "marlow-fen"] }, CancellationToken.None));
        var byBoth = await ToListAsync(store.QueryAsync(new AuditQuery { SiteIn = [Sample.Site], AssetIn = ["K-102B"] }, CancellationToken.None));
        var none = await ToListAsync(store.QueryAsync(new AuditQuery { SiteIn = [] }, CancellationToken.None));

        var expectedSite = NewestFirst(records.Where(r => r.SiteId == "osprey-flats")).Select(r => r.Id).ToList();
        var expectedBoth = NewestFirst(records.Where(r => r.SiteId == Sample.Site && r.Asset == "K-102B")).Select(r => r.Id).ToList();
        Assert.NotEmpty(expectedSite);
        Assert.NotEmpty(expectedBoth);
        Assert.Equal(expectedSite, bySite.Select(r => r.Id));
        Assert.Equal(expectedBoth, byBoth.Select(r => r.Id));
        Assert.Empty(none);
    }

    [SkippableFact]
    public async Task Query_WhenTimeWindowGiven_IncludesFromAndExcludesTo()
    {
        var (store, records) = await SeedQueryRecordsAsync();
        var from = Sample.Start.AddMinutes(2);
        var to = Sample.Start.AddMinutes(5);

        var found = await ToListAsync(store.QueryAsync(new AuditQuery { From = from, To = to }, CancellationToken.None));

        Assert.Equal(9, found.Count); // minutes 2, 3 and 4, three records each
        Assert.Contains(found, r => r.EvaluatedAt == from);
        Assert.DoesNotContain(found, r => r.EvaluatedAt >= to);
        Assert.Equal(NewestFirst(records.Where(r => r.EvaluatedAt >= from && r.EvaluatedAt < to)).Select(r => r.Id), found.Select(r => r.Id));
    }

    [SkippableFact]
    public async Task Query_WhenTimesDifferBelowAMicrosecond_OrdersAndPagesByTheTick()
    {
        var store = await OpenStoreAsync();
        var records = Enumerable.Range(0, 6).Select(i => Sample.Record(at: Sample.Start.AddTicks(i))).ToList();
        foreach (var record in Enumerable.Reverse(records))
        {
            await store.AppendAsync(record, CancellationToken.None);
        }

        var first = await store.QueryPageAsync(new AuditQuery { Limit = 4 }, CancellationToken.None);
        var second = await store.QueryPageAsync(new AuditQuery { Limit = 4, Cursor = first.NextCursor }, CancellationToken.None);
        var window = await ToListAsync(store.QueryAsync(new AuditQuery { From = Sample.Start.AddTicks(2), To = Sample.Start.AddTicks(4) }, CancellationToken.None));

        Assert.Equal(NewestFirst(records).Select(r => r.Id), first.Records.Concat(second.Records).Select(r => r.Id));
        Assert.Equal([records[3].Id, records[2].Id], window.Select(r => r.Id));
    }

    [SkippableFact]
    public async Task QueryPage_WhenFilteredAndPaged_PagesCoverExactlyTheFilteredSet()
    {
        var (store, records) = await SeedQueryRecordsAsync();
        var query = new AuditQuery { Asset = "K-102B", Limit = 5 };
        var ids = new List<Guid>();
        string? cursor = null;
        var pages = 0;
        do
        {
            var page = await store.QueryPageAsync(query with { Cursor = cursor }, CancellationToken.None);
            ids.AddRange(page.Records.Select(r => r.Id));
            cursor = page.NextCursor;
            pages++;
        }
        while (cursor is not null && pages < 10);

        Assert.Equal(NewestFirst(records.Where(r => r.Asset == "K-102B")).Select(r => r.Id), ids);
        Assert.Equal(3, pages); // 12 records in pages of 5
    }

    [SkippableFact]
    public async Task Query_WhenLimitSetOnStream_StopsAfterLimit()
    {
        var (store, records) = await SeedQueryRecordsAsync();

        var found = await ToListAsync(store.QueryAsync(new AuditQuery { Limit = 4 }, CancellationToken.None));

        Assert.Equal(NewestFirst(records).Take(4).Select(r => r.Id), found.Select(r => r.Id));
    }

    [SkippableTheory]
    [InlineData("not-a-cursor")]
    [InlineData("")]
    [InlineData("AQAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA==")] // padded: not the canonical spelling
    [InlineData("AgAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA")] // format byte 2 is unknown
    public async Task Query_WhenCursorIsNotAToken_ThrowsArgumentExceptionAtCall(string cursor)
    {
        var store = await OpenStoreAsync();

        Assert.Throws<ArgumentException>(() => store.QueryAsync(new AuditQuery { Cursor = cursor }, CancellationToken.None));
    }

    [SkippableFact]
    public async Task Query_WhenCursorIsOlderThanEveryRecord_ReturnsNothing()
    {
        var (store, _) = await SeedQueryRecordsAsync();

        // Format 1, tick 0, the zero id: well formed, and before every record.
        var found = await ToListAsync(store.QueryAsync(new AuditQuery { Cursor = "AQAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA" }, CancellationToken.None));

        Assert.Empty(found);
    }

    [SkippableFact]
    public async Task QueryPage_WhenLimitOutOfRange_ThrowsArgumentOutOfRange()
    {
        var store = await OpenStoreAsync();

        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => store.QueryPageAsync(new AuditQuery { Limit = 0 }, CancellationToken.None));
        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => store.QueryPageAsync(new AuditQuery { Limit = AuditQuery.MaxPageSize + 1 }, CancellationToken.None));
    }

    // ---- Health ----

    [SkippableFact]
    public async Task CheckHealth_WhenStoreIsOpen_ReportsReachableAndWritable()
    {
        var store = await OpenStoreAsync();
        await store.AppendAsync(Sample.Record(), CancellationToken.None);

        var health = await store.CheckHealthAsync(CancellationToken.None);

        Assert.True(health.Reachable);
        Assert.True(health.Writable);
        Assert.True(health.IsHealthy);
        Assert.Null(health.LastError);
        Assert.NotNull(health.LastCommitAt);
        Assert.Equal(1, await ScalarAsync("SELECT count(*) FROM health_probe;"));
        Assert.Equal(1, await CountEvaluationsAsync()); // the probe writes its own table, never evaluations
    }

    [SkippableFact]
    public async Task GetStorage_WhenRecordsAreStored_ReportsTheStoresSizeAndAnyVisibleFreeSpace()
    {
        var store = await OpenStoreAsync();
        await store.AppendAsync(Sample.Record(responsePadding: 100_000), CancellationToken.None);

        var storage = await store.GetStorageAsync(CancellationToken.None);

        Assert.True(storage.UsedBytes >= 100_000, $"used {storage.UsedBytes}");
        Assert.True(storage.AvailableBytes is null or > 0, $"available {storage.AvailableBytes}");
    }

    [SkippableFact]
    public async Task CheckHealth_WhenStoreDisposed_ReportsNeitherReachableNorWritable()
    {
        var store = await OpenStoreAsync();
        await store.DisposeAsync();

        var health = await store.CheckHealthAsync(CancellationToken.None);

        Assert.False(health.Reachable);
        Assert.False(health.Writable);
        Assert.Contains("closed", health.LastError, StringComparison.Ordinal);
    }

    protected static async Task<List<AuditRecord>> ToListAsync(IAsyncEnumerable<AuditRecord> source)
    {
        var list = new List<AuditRecord>();
        await foreach (var item in source)
        {
            list.Add(item);
        }

        return list;
    }
}
