using DischargeGuard.Audit.Sqlite;

namespace DischargeGuard.Audit.Tests;

public sealed class MigrationTests : IAsyncLifetime
{
    private readonly TempAuditFolder _folder = new();

    public Task InitializeAsync()
    {
        Directory.CreateDirectory(Path.GetDirectoryName(_folder.DatabasePath)!);
        return Task.CompletedTask;
    }

    public async Task DisposeAsync() => await _folder.CleanUpAsync();

    [Fact]
    public async Task Open_WhenFileHasOnlyFirstMigration_UpgradesAndKeepsOldRows()
    {
        var oldId = Guid.CreateVersion7(Sample.Start);
        using (var raw = _folder.OpenRaw())
        {
            Assert.Equal([1], AuditSchema.Migrate(raw, targetVersion: 1));
            using var insert = raw.CreateCommand();

            // A row as version 1 wrote it: no replay_of column yet.
            insert.CommandText = """
                INSERT INTO evaluations (id, evaluated_at, caller, asset, site_id, verdict, rule_digest, engine_version, request, request_sha256, response, response_sha256)
                VALUES ($id, '2026-03-14T09:26:53.0000000Z', 'key-field-07', 'K-101A', 'kestrel-ridge', 'review', $digest, '0.0.9', x'7b7d', $hash, x'7b7d', $hash);
                """;
            insert.Parameters.AddWithValue("$id", oldId.ToString());
            insert.Parameters.AddWithValue("$digest", Sample.Digest);
            insert.Parameters.AddWithValue("$hash", AuditDigest.Sha256Hex("{}"u8));
            insert.ExecuteNonQuery();
        }

        var store = await _folder.OpenAsync();

        Assert.Equal(AuditSchema.LatestVersion, _folder.Scalar("SELECT max(version) FROM schema_migrations;"));
        Assert.Equal(AuditSchema.Migrations.Count, _folder.Scalar("SELECT count(*) FROM schema_migrations WHERE description <> '' AND length(applied_at) = 28;"));
        var old = await store.GetAsync(oldId, CancellationToken.None);
        Assert.NotNull(old);
        Assert.Equal(AuditVerdict.Review, old.Verdict);
        Assert.Null(old.ReplayOf);
        Assert.Equal(1, _folder.Scalar("SELECT count(*) FROM sqlite_master WHERE type = 'trigger' AND name = 'evaluations_no_update';"));
        Assert.Equal(1, _folder.Scalar("SELECT count(*) FROM sqlite_master WHERE type = 'index' AND name = 'ix_evaluations_asset';"));
        var replay = Sample.Record(at: Sample.Start.AddHours(1)) with { ReplayOf = oldId };
        await store.AppendAsync(replay, CancellationToken.None);
        Assert.Equal(oldId, (await store.GetAsync(replay.Id, CancellationToken.None))?.ReplayOf);
    }

    [Fact]
    public async Task Open_WhenFileWasWrittenBeforeTheChain_SealsItsRowsInOrderAndKeepsTheirBytes()
    {
        // A file at version 6 (no chain) with rows written out of time order and a grant from before the chain.
        var records = new[] { Sample.Record(at: Sample.Start.AddMinutes(5), asset: "K-101A"), Sample.Record(at: Sample.Start, asset: "K-102A"), Sample.Record(at: Sample.Start.AddMinutes(2), site: null) };
        using (var raw = _folder.OpenRaw())
        {
            AuditSchema.Migrate(raw, targetVersion: 6);
            foreach (var r in records)
            {
                using var insert = raw.CreateCommand();
                insert.CommandText = "INSERT INTO evaluations (" + SqliteAuditBackend.BaseColumns + ") VALUES ($id, $at, $caller, $asset, $site, $verdict, $digest, $engine, $req, $reqh, $res, $resh, NULL);";
                insert.Parameters.AddWithValue("$id", r.Id.ToString());
                insert.Parameters.AddWithValue("$at", AuditTime.Format(r.EvaluatedAt));
                insert.Parameters.AddWithValue("$caller", r.Caller);
                insert.Parameters.AddWithValue("$asset", r.Asset);
                insert.Parameters.AddWithValue("$site", (object?)r.SiteId ?? DBNull.Value);
                insert.Parameters.AddWithValue("$verdict", r.Verdict);
                insert.Parameters.AddWithValue("$digest", r.RuleDigest);
                insert.Parameters.AddWithValue("$engine", r.EngineVersion);
                insert.Parameters.AddWithValue("$req", r.Request);
                insert.Parameters.AddWithValue("$reqh", AuditDigest.Sha256Hex(r.Request));
                insert.Parameters.AddWithValue("$res", r.Response);
                insert.Parameters.AddWithValue("$resh", AuditDigest.Sha256Hex(r.Response));
                insert.ExecuteNonQuery();
            }

            using var grant = raw.CreateCommand();
            grant.CommandText = "INSERT INTO retention_grants (granted_at, delete_before, granted_by, reason) VALUES ('2026-03-01T00:00:00.1234567Z', '2024-01-01T00:00:00.0000000Z', 'ops-admin', 'before the chain');";
            grant.ExecuteNonQuery();
        }

        var store = await _folder.OpenAsync();
        var verification = await store.VerifyChainAsync(CancellationToken.None);

        Assert.True(verification.Intact, verification.FirstBreak?.Reason);
        Assert.Equal(3, verification.Records);
        Assert.Equal(0, verification.Anchor.Sequence);
        Assert.Equal(1, verification.Anchor.GrantId);
        foreach (var (record, sequence) in records.OrderBy(r => r.EvaluatedAt).Select((r, i) => (r, i + 1L)))
        {
            var read = await store.GetAsync(record.Id, CancellationToken.None);
            Assert.Equal(sequence, read!.Sequence);
            Assert.Equal(record.Request, read.Request);
            Assert.Equal(record.Response, read.Response);
        }

        await store.AppendAsync(Sample.Record(at: Sample.Start.AddHours(1)), CancellationToken.None);
        Assert.True((await store.VerifyChainAsync(CancellationToken.None)).Intact);
        Assert.Empty((await store.CheckHealthAsync(CancellationToken.None)).MissingGuards);
    }

    [Fact]
    public async Task Open_WhenFileHasTheSchemaBeforeStages_MigratesKeepsEveryRecordByteIdenticalAndTheChainVerifies()
    {
        // A file as the build before stage summaries left it: schema 7 (the old DDL, applied by the same shipped steps),
        // records chained by its writer's rules (version 1 hashes, checked by the chain trigger).
        var records = Enumerable.Range(0, 4).Select(i => Sample.Record(at: Sample.Start.AddMinutes(i).AddTicks(i), asset: "C-204B", site: i % 2 == 0 ? "marlow-fen" : null)).ToArray();
        using (var raw = _folder.OpenRaw())
        {
            Assert.Equal(Enumerable.Range(1, 7), AuditSchema.Migrate(raw, targetVersion: 7));
            var previous = AuditChain.GenesisHash;
            foreach (var (r, sequence) in records.Select((r, i) => (r, i + 1L)))
            {
                var stored = r with { RequestSha256 = AuditDigest.Sha256Hex(r.Request), ResponseSha256 = AuditDigest.Sha256Hex(r.Response) };
                var hash = AuditChain.RecordHash(sequence, previous, stored);
                using var insert = raw.CreateCommand();
                insert.CommandText = "INSERT INTO evaluations (" + SqliteAuditBackend.ChainColumns + ") VALUES ($id, $at, $caller, $asset, $site, $verdict, $digest, $engine, $req, $reqh, $res, $resh, NULL, $seq, $prev, $hash);";
                insert.Parameters.AddWithValue("$id", r.Id.ToString());
                insert.Parameters.AddWithValue("$at", AuditTime.Format(r.EvaluatedAt));
                insert.Parameters.AddWithValue("$caller", r.Caller);
                insert.Parameters.AddWithValue("$asset", r.Asset);
                insert.Parameters.AddWithValue("$site", (object?)r.SiteId ?? DBNull.Value);
                insert.Parameters.AddWithValue("$verdict", r.Verdict);
                insert.Parameters.AddWithValue("$digest", r.RuleDigest);
                insert.Parameters.AddWithValue("$engine", r.EngineVersion);
                insert.Parameters.AddWithValue("$req", r.Request);
                insert.Parameters.AddWithValue("$reqh", stored.RequestSha256);
                insert.Parameters.AddWithValue("$res", r.Response);
                insert.Parameters.AddWithValue("$resh", stored.ResponseSha256);
                insert.Parameters.AddWithValue("$seq", sequence);
                insert.Parameters.AddWithValue("$prev", previous);
                insert.Parameters.AddWithValue("$hash", hash);
                insert.ExecuteNonQuery();
                previous = hash;
            }
        }

        var store = await _folder.OpenAsync();
        var verification = await store.VerifyChainAsync(CancellationToken.None);

        Assert.Equal(AuditSchema.LatestVersion, _folder.Scalar("SELECT max(version) FROM schema_migrations;"));
        Assert.True(verification.Intact, verification.FirstBreak?.Reason);
        Assert.Equal(4, verification.Records);
        Assert.Equal(records.Length, _folder.Scalar("SELECT count(*) FROM evaluations WHERE stages IS NULL;"));
        await MigratedStoreChecks.OldRecordsReadBackAndTheChainExtendsAsync(store, records);
    }

    [Fact]
    public async Task Open_WhenFileIsCurrent_AppliesNothingTwice()
    {
        await using (await SqliteAuditStore.OpenAsync(_folder.Options(), CancellationToken.None))
        {
        }

        using (var raw = _folder.OpenRaw())
        {
            Assert.Empty(AuditSchema.Migrate(raw, AuditSchema.LatestVersion));
        }

        await _folder.OpenAsync();

        Assert.Equal(AuditSchema.Migrations.Count, _folder.Scalar("SELECT count(*) FROM schema_migrations;"));
    }

    [Fact]
    public async Task Open_WhenFileIsNewerThanThisBuild_ThrowsUnavailable()
    {
        using (var raw = _folder.OpenRaw())
        {
            AuditSchema.Migrate(raw, AuditSchema.LatestVersion);
            using var insert = raw.CreateCommand();
            insert.CommandText = "INSERT INTO schema_migrations VALUES (1000, '2030-01-01T00:00:00.0000000Z', 'from a later build');";
            insert.ExecuteNonQuery();
        }

        var e = await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => SqliteAuditStore.OpenAsync(_folder.Options(), CancellationToken.None));

        Assert.Contains("1000", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Migrations_WhenListed_AreNumberedOneUpWithoutGaps()
    {
        Assert.Equal(Enumerable.Range(1, AuditSchema.Migrations.Count), AuditSchema.Migrations.Select(m => m.Version));
    }

    [Fact]
    public async Task Open_WhenFileIsNew_UsesWalJournal()
    {
        await _folder.OpenAsync();

        using var raw = _folder.OpenRaw();
        using var command = raw.CreateCommand();
        command.CommandText = "PRAGMA journal_mode;";
        Assert.Equal("wal", command.ExecuteScalar() as string);
    }
}
