using System.Data.Common;
using System.Text;

namespace DischargeGuard.Audit.Tests;

/// <summary>The contract for stage summaries, the stage history query and the rule-set archive, on every store.</summary>
public abstract partial class AuditStoreContract
{
    // ---- Stage summaries ----

    // Figures of an invented two-stage air compressor at kestrel-ridge. 101 325 Pa is one standard atmosphere (ISO 2533,
    // a defined value); the others are made-up operating figures, chosen with digits that do not round-trip through a
    // short decimal (0.1 + 0.2) so the test sees any loss of precision.
    private static readonly AuditStageSummary[] TwoStages =
    [
        new(0, AuditVerdict.Pass, "R-API618-GEN", 0.1 + 0.2, 412.87654321, 421.35, 101_325, 354_638.75, null),
        new(1, AuditVerdict.Review, null, null, 423.15, 431.0000000001, 354_638.75, 1_241_235.5, 433.2),
    ];

    protected static AuditRecord WithStages(AuditRecord record, params AuditStageSummary[] stages) => record with { Stages = stages };

    [SkippableFact]
    public async Task Get_WhenRecordHasStages_ReturnsThemExactlyAndTheHashCoversThem()
    {
        var store = await OpenStoreAsync();
        var record = WithStages(Sample.Record(), TwoStages);

        await store.AppendAsync(record, CancellationToken.None);
        var read = await store.GetAsync(record.Id, CancellationToken.None);
        var queried = await ToListAsync(store.QueryAsync(new AuditQuery { Asset = record.Asset }, CancellationToken.None));

        Assert.NotNull(read);
        Assert.Equal(TwoStages, read.Stages);
        Assert.Equal(TwoStages, Assert.Single(queried).Stages);
        Assert.Equal(0.1 + 0.2, read.Stages[0].MarginKelvin); // bit for bit, not 0.3
        Assert.Equal(AuditChain.RecordHash(1, AuditChain.GenesisHash, read), read.RecordHash);
        Assert.NotEqual(AuditChain.RecordHash(1, AuditChain.GenesisHash, read with { Stages = [] }), read.RecordHash);
        Assert.True((await store.VerifyChainAsync(CancellationToken.None)).Intact);
    }

    [SkippableFact]
    public async Task Get_WhenRecordHasNoStages_ReturnsAnEmptyListAndTheVersion1Hash()
    {
        var store = await OpenStoreAsync();
        var record = Sample.Record();

        await store.AppendAsync(record, CancellationToken.None);
        var read = await store.GetAsync(record.Id, CancellationToken.None);

        Assert.Empty(read!.Stages);
        Assert.Equal(1, await ScalarAsync("SELECT count(*) FROM evaluations WHERE stages IS NULL;"));
        Assert.Equal(AuditChain.RecordHash(1, AuditChain.GenesisHash, read), read.RecordHash);
    }

    [SkippableFact]
    public async Task VerifyChain_WhenStagesAreChangedOrRemovedBehindTheGuards_ReportsThatRecord()
    {
        var store = await OpenStoreAsync();
        var records = Enumerable.Range(0, 3).Select(i => WithStages(Sample.Record(at: Sample.Start.AddMinutes(i)), TwoStages)).ToArray();
        foreach (var record in records)
        {
            await store.AppendAsync(record, CancellationToken.None);
        }

        await DropEvaluationGuardsAsync();
        Assert.Equal(1, await ExecuteRawAsync("UPDATE evaluations SET stages = replace(stages, '\"review\"', '\"pass\"') WHERE seq = 2;"));
        Assert.Equal(1, await ExecuteRawAsync("UPDATE evaluations SET stages = NULL WHERE seq = 3;"));
        var verification = await store.VerifyChainAsync(CancellationToken.None);

        Assert.False(verification.Intact);
        Assert.Equal(2, verification.FirstBreak!.Sequence);
        Assert.Equal(records[1].Id, verification.FirstBreak.RecordId);
        Assert.Contains("column", verification.FirstBreak.Reason, StringComparison.Ordinal);
    }

    public static TheoryData<AuditStageSummary[]> BadStages() => new()
    {
        new AuditStageSummary[] { new(1, AuditVerdict.Pass, null, null, 400, 410, 101_325, 300_000, null), new(0, AuditVerdict.Pass, null, null, 400, 410, 101_325, 300_000, null) },
        new AuditStageSummary[] { new(0, AuditVerdict.Pass, null, null, 400, 410, 101_325, 300_000, null), new(0, AuditVerdict.Pass, null, null, 400, 410, 101_325, 300_000, null) },
        new AuditStageSummary[] { new(-1, AuditVerdict.Pass, null, null, 400, 410, 101_325, 300_000, null) },
        new AuditStageSummary[] { new(0, "PASS", null, null, 400, 410, 101_325, 300_000, null) },
        new AuditStageSummary[] { new(0, AuditVerdict.Fail, " ", -3, 400, 410, 101_325, 300_000, null) },
        new AuditStageSummary[] { new(0, AuditVerdict.Pass, null, double.NaN, 400, 410, 101_325, 300_000, null) },
        new AuditStageSummary[] { new(0, AuditVerdict.Pass, null, null, 400, double.PositiveInfinity, 101_325, 300_000, null) },
        new AuditStageSummary[] { new(0, AuditVerdict.Pass, null, null, -400, 410, 101_325, 300_000, null) }, // absolute temperature below 0 K
        new AuditStageSummary[] { new(0, AuditVerdict.Pass, null, null, 400, 410, 0, 300_000, null) }, // absolute pressure of zero
    };

    [SkippableTheory]
    [MemberData(nameof(BadStages))]
    public async Task Append_WhenAStageIsOutOfOrderOrNotPhysical_ThrowsArgumentExceptionAndStoresNothing(AuditStageSummary[] stages)
    {
        var store = await OpenStoreAsync();

        await Assert.ThrowsAnyAsync<ArgumentException>(() => store.AppendAsync(WithStages(Sample.Record(), stages), CancellationToken.None).AsTask());

        Assert.Equal(0, await CountEvaluationsAsync());
    }

    [SkippableFact]
    public async Task Append_WhenANegativeMarginIsGiven_StoresIt()
    {
        // A margin is a difference: beyond the limit it is negative, and that is the case a history most needs.
        var store = await OpenStoreAsync();
        var record = WithStages(Sample.Record(verdict: AuditVerdict.Fail), new AuditStageSummary(0, AuditVerdict.Fail, "R-API618-GEN", -7.25, 440, 452.4, 101_325, 480_000, 455));

        await store.AppendAsync(record, CancellationToken.None);

        Assert.Equal(-7.25, (await store.GetAsync(record.Id, CancellationToken.None))!.Stages[0].MarginKelvin);
    }

    // ---- Stage history ----

    private static AuditStageSummary Stage(int index, double estimatedKelvin) =>
        new(index, AuditVerdict.Pass, "R-API618-GEN", 450 - estimatedKelvin, estimatedKelvin - 8, estimatedKelvin, 101_325, 400_000, estimatedKelvin + 1);

    /// <summary>
    /// Asset C-204B at marlow-fen and kestrel-ridge, one record a minute, appended out of time order, the oldest two
    /// without stages (as written before the stores kept them); K-101A beside it; minute m's estimate is 400 + m K.
    /// </summary>
    private async Task<(IAuditStore Store, List<AuditRecord> Records)> SeedHistoryAsync()
    {
        var store = await OpenStoreAsync();
        var records = new List<AuditRecord>();
        for (var minute = 0; minute < 10; minute++)
        {
            var record = Sample.Record(at: Sample.Start.AddMinutes(minute), asset: "C-204B", site: minute % 3 == 0 ? "marlow-fen" : Sample.Site);
            records.Add(minute < 2 ? record : WithStages(record, Stage(0, 400 + minute), Stage(1, 410 + minute)));
        }

        records.Add(WithStages(Sample.Record(at: Sample.Start.AddMinutes(30), asset: "K-101A"), Stage(0, 390)));
        foreach (var record in records.OrderBy(r => r.Id.ToString()[^4..], StringComparer.Ordinal))
        {
            await store.AppendAsync(record, CancellationToken.None);
        }

        return (store, records);
    }

    [SkippableFact]
    public async Task GetStageHistory_WhenLimited_ReturnsTheNewestRecordsOfTheAssetNewestFirstWithTheirStages()
    {
        var (store, records) = await SeedHistoryAsync();

        var history = await store.GetStageHistoryAsync(new AuditQuery { Asset = "C-204B", Limit = 4 }, CancellationToken.None);

        Assert.Equal(records.Where(r => r.Asset == "C-204B").OrderByDescending(r => r.EvaluatedAt).Take(4).Select(r => r.Id), history.Select(h => h.RecordId));
        Assert.Equal([Sample.Start.AddMinutes(9), Sample.Start.AddMinutes(8), Sample.Start.AddMinutes(7), Sample.Start.AddMinutes(6)], history.Select(h => h.EvaluatedAt));
        Assert.All(history, h => Assert.Equal(2, h.Stages.Count));
        Assert.Equal([Stage(0, 409), Stage(1, 419)], history[0].Stages);
    }

    [SkippableFact]
    public async Task GetStageHistory_WhenSiteAndBeforeAreGiven_ReturnsOnlyThatSiteStrictlyBefore()
    {
        var (store, _) = await SeedHistoryAsync();

        var history = await store.GetStageHistoryAsync(
            new AuditQuery { Asset = "C-204B", SiteId = "marlow-fen", To = Sample.Start.AddMinutes(9), Limit = 10 }, CancellationToken.None);

        // marlow-fen has minutes 0, 3, 6 and 9; 9 is not before the cut-off; minute 0 has no stages.
        Assert.Equal([Sample.Start.AddMinutes(6), Sample.Start.AddMinutes(3), Sample.Start], history.Select(h => h.EvaluatedAt));
        Assert.Equal(406, history[0].Stages[0].EstimatedKelvin);
        Assert.Empty(history[2].Stages);
    }

    [SkippableFact]
    public async Task GetStageHistory_WhenScopedToSitesTheCallerMayRead_LeavesOutTheOthers()
    {
        var (store, _) = await SeedHistoryAsync();

        var scoped = await store.GetStageHistoryAsync(new AuditQuery { Asset = "C-204B", SiteIn = [Sample.Site], Limit = 100 }, CancellationToken.None);
        var none = await store.GetStageHistoryAsync(new AuditQuery { Asset = "C-204B", AssetIn = ["K-101A"] }, CancellationToken.None);

        Assert.Equal(6, scoped.Count); // minutes 1, 2, 4, 5, 7, 8
        Assert.Equal(Sample.Start.AddMinutes(8), scoped[0].EvaluatedAt);
        Assert.Empty(none);
    }

    [SkippableFact]
    public async Task GetStageHistory_WhenNoAssetOrTheLimitIsOutOfRange_ThrowsAtTheCall()
    {
        var store = await OpenStoreAsync();

        await Assert.ThrowsAsync<ArgumentException>(() => store.GetStageHistoryAsync(new AuditQuery { SiteId = Sample.Site }, CancellationToken.None));
        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => store.GetStageHistoryAsync(new AuditQuery { Asset = "C-204B", Limit = 0 }, CancellationToken.None));
        await Assert.ThrowsAsync<ArgumentOutOfRangeException>(() => store.GetStageHistoryAsync(new AuditQuery { Asset = "C-204B", Limit = AuditQuery.MaxPageSize + 1 }, CancellationToken.None));
    }

    // ---- Rule-set archive ----

    // A canonical form as the rules project writes one (compact JSON, SI values); its digest is computed here with the
    // store's own SHA-256, and RuleSetArchiveTests checks one the rules project made itself.
    private static readonly byte[] Canonical = Encoding.UTF8.GetBytes("""{"kind":"Merged","rules":[{"id":"R-DEMO","limitKelvin":423.15}],"site":"marlow-fen"}""");

    private static string CanonicalDigest => AuditDigest.Sha256Hex(Canonical);

    [SkippableFact]
    public async Task ArchiveRuleSet_WhenArchivedTwice_KeepsOneCopyAndReadsTheBytesBack()
    {
        var store = await OpenStoreAsync();

        await store.ArchiveRuleSetAsync(CanonicalDigest, Canonical, CancellationToken.None);
        await store.ArchiveRuleSetAsync(CanonicalDigest, Canonical.ToArray(), CancellationToken.None);
        await Task.WhenAll(Enumerable.Range(0, 8).Select(_ => store.ArchiveRuleSetAsync(CanonicalDigest, Canonical, CancellationToken.None).AsTask()));

        Assert.Equal(1, await ScalarAsync("SELECT count(*) FROM rule_sets;"));
        Assert.Equal(Canonical, await store.GetRuleSetAsync(CanonicalDigest, CancellationToken.None));
    }

    [SkippableFact]
    public async Task ArchiveRuleSet_WhenTheDigestIsNotTheBytesSha256_IsRefusedAndStoresNothing()
    {
        var store = await OpenStoreAsync();
        var other = AuditDigest.Sha256Hex("{}"u8);

        await Assert.ThrowsAsync<ArgumentException>(() => store.ArchiveRuleSetAsync(other, Canonical, CancellationToken.None).AsTask());
        await Assert.ThrowsAsync<ArgumentException>(() => store.ArchiveRuleSetAsync(CanonicalDigest.ToUpperInvariant(), Canonical, CancellationToken.None).AsTask());
        await Assert.ThrowsAsync<ArgumentException>(() => store.ArchiveRuleSetAsync(AuditDigest.Sha256Hex([]), ReadOnlyMemory<byte>.Empty, CancellationToken.None).AsTask());

        Assert.Equal(0, await ScalarAsync("SELECT count(*) FROM rule_sets;"));
        Assert.Null(await store.GetRuleSetAsync(other, CancellationToken.None));
    }

    [SkippableFact]
    public async Task GetRuleSet_WhenStoreWasReopenedAndRecordsWereRetired_ReturnsTheArchivedBytes()
    {
        var first = await OpenStoreCoreAsync(256);
        await using (first)
        {
            await first.AppendAsync(Sample.Record(at: Sample.Start.AddDays(-400)), CancellationToken.None);
            await first.ArchiveRuleSetAsync(CanonicalDigest, Canonical, CancellationToken.None);
            await first.ApplyRetentionAsync(new RetentionGrant(Sample.Start.AddDays(-365), "key-admin-01", "keep 1 year", Sample.Start), CancellationToken.None);
        }

        var second = await OpenStoreAsync();

        Assert.Equal(Canonical, await second.GetRuleSetAsync(CanonicalDigest, CancellationToken.None));
        Assert.Equal(0, await CountEvaluationsAsync());
    }

    [SkippableTheory]
    [InlineData("UPDATE rule_sets SET archived_at = archived_at;")]
    [InlineData("DELETE FROM rule_sets;")]
    public async Task RawSql_WhenItChangesArchivedRuleSets_IsRefusedByTrigger(string sql)
    {
        var store = await OpenStoreAsync();
        await store.ArchiveRuleSetAsync(CanonicalDigest, Canonical, CancellationToken.None);

        var e = await Assert.ThrowsAnyAsync<DbException>(() => ExecuteRawAsync(sql));

        Assert.Contains("archived rule sets are append-only", e.Message, StringComparison.Ordinal);
        Assert.Equal(Canonical, await store.GetRuleSetAsync(CanonicalDigest, CancellationToken.None));
    }
}
