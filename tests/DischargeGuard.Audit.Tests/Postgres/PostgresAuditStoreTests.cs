using DischargeGuard.Audit.Postgres;
using Npgsql;

namespace DischargeGuard.Audit.Tests.Postgres;

/// <summary>What only the PostgreSQL store has: migration under an advisory lock, the durability check, its triggers and checks.</summary>
[Collection(PostgresServerGroup.Name)]
public sealed class PostgresAuditStoreTests(PostgresFixture fixture) : IAsyncLifetime
{
    private readonly List<IAuditStore> _stores = [];
    private string _connectionString = null!;

    public async Task InitializeAsync()
    {
        var server = fixture.RequireServer();
        _connectionString = server.ConnectionString(await server.CreateDatabaseAsync());
    }

    public async Task DisposeAsync()
    {
        foreach (var store in _stores)
        {
            await store.DisposeAsync();
        }
    }

    private async Task<PostgresAuditStore> OpenAsync(string? connectionString = null)
    {
        var store = await PostgresAuditStore.OpenAsync(new PostgresAuditStoreOptions { ConnectionString = connectionString ?? _connectionString }, CancellationToken.None);
        _stores.Add(store);
        return store;
    }

    [SkippableFact]
    public async Task Open_WhenReplicasStartAtOnceOnAFreshDatabase_AllSucceedAndEachMigrationIsAppliedOnce()
    {
        var opening = Enumerable.Range(0, 4).Select(_ => Task.Run(() => OpenAsync())).ToArray();

        var stores = await Task.WhenAll(opening);

        Assert.Equal(PostgresAuditSchema.Migrations.Count, await PostgresRaw.ScalarAsync(_connectionString, "SELECT count(*) FROM schema_migrations;"));
        Assert.Equal(PostgresAuditSchema.LatestVersion, await PostgresRaw.ScalarAsync(_connectionString, "SELECT max(version) FROM schema_migrations;"));
        await Task.WhenAll(stores.Select((s, i) => s.AppendAsync(Sample.Record(asset: $"K-10{i}A"), CancellationToken.None).AsTask()));
        Assert.Equal(4, await PostgresRaw.ScalarAsync(_connectionString, "SELECT count(*) FROM evaluations;"));
    }

    [SkippableFact]
    public async Task Open_WhenDatabaseWasWrittenBeforeTheChain_SealsItsRowsInOrderAndKeepsTheirBytes()
    {
        var records = new[] { Sample.Record(at: Sample.Start.AddMinutes(5).AddTicks(3), asset: "K-101A"), Sample.Record(at: Sample.Start, asset: "K-102A"), Sample.Record(at: Sample.Start.AddMinutes(2), site: null) };
        await using (var raw = await PostgresRaw.OpenAsync(_connectionString))
        {
            await PostgresAuditSchema.MigrateAsync(raw, 3, CancellationToken.None);
            foreach (var r in records)
            {
                var (at, tick) = PostgresAuditBackend.SplitTicks(r.EvaluatedAt);
                await using var insert = new NpgsqlCommand("INSERT INTO evaluations (" + PostgresAuditBackend.BaseColumns + ") VALUES (@id, @at, @tick, @caller, @asset, @site, @verdict, @digest, @engine, @req, @reqh, @res, @resh, NULL);", raw);
                insert.Parameters.AddWithValue("id", r.Id);
                insert.Parameters.AddWithValue("at", at);
                insert.Parameters.AddWithValue("tick", tick);
                insert.Parameters.AddWithValue("caller", r.Caller);
                insert.Parameters.AddWithValue("asset", r.Asset);
                insert.Parameters.Add(new NpgsqlParameter("site", NpgsqlTypes.NpgsqlDbType.Text) { Value = (object?)r.SiteId ?? DBNull.Value });
                insert.Parameters.AddWithValue("verdict", r.Verdict);
                insert.Parameters.AddWithValue("digest", r.RuleDigest);
                insert.Parameters.AddWithValue("engine", r.EngineVersion);
                insert.Parameters.AddWithValue("req", r.Request);
                insert.Parameters.AddWithValue("reqh", AuditDigest.Sha256Hex(r.Request));
                insert.Parameters.AddWithValue("res", r.Response);
                insert.Parameters.AddWithValue("resh", AuditDigest.Sha256Hex(r.Response));
                await insert.ExecuteNonQueryAsync();
            }

            await using var grant = new NpgsqlCommand("INSERT INTO retention_grants (granted_at, delete_before, granted_by, reason) VALUES ('2026-03-01T00:00:00.123456Z', '2024-01-01T00:00:00Z', 'ops-admin', 'before the chain');", raw);
            await grant.ExecuteNonQueryAsync();
        }

        var store = await OpenAsync();
        var verification = await store.VerifyChainAsync(CancellationToken.None);

        Assert.True(verification.Intact, verification.FirstBreak?.Reason);
        Assert.Equal(3, verification.Records);
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

    [SkippableFact]
    public async Task Open_WhenDatabaseHasTheSchemaBeforeStages_MigratesKeepsEveryRecordByteIdenticalAndTheChainVerifies()
    {
        // A database as the build before stage summaries left it: schema 4 (the old DDL, applied by the same shipped
        // steps), records chained by its writer's rules (version 1 hashes, checked by the chain trigger).
        var records = Enumerable.Range(0, 4).Select(i => Sample.Record(at: Sample.Start.AddMinutes(i).AddTicks(i), asset: "C-204B", site: i % 2 == 0 ? "marlow-fen" : null)).ToArray();
        await using (var raw = await PostgresRaw.OpenAsync(_connectionString))
        {
            Assert.Equal(Enumerable.Range(1, 4), await PostgresAuditSchema.MigrateAsync(raw, 4, CancellationToken.None));
            var previous = AuditChain.GenesisHash;
            foreach (var (r, sequence) in records.Select((r, i) => (r, i + 1L)))
            {
                var stored = r with { RequestSha256 = AuditDigest.Sha256Hex(r.Request), ResponseSha256 = AuditDigest.Sha256Hex(r.Response) };
                var hash = AuditChain.RecordHash(sequence, previous, stored);
                var (at, tick) = PostgresAuditBackend.SplitTicks(r.EvaluatedAt);
                await using var insert = new NpgsqlCommand("INSERT INTO evaluations (" + PostgresAuditBackend.BaseColumns + ", seq, prev_hash, record_hash) VALUES (@id, @at, @tick, @caller, @asset, @site, @verdict, @digest, @engine, @req, @reqh, @res, @resh, NULL, @seq, @prev, @hash);", raw);
                insert.Parameters.AddWithValue("id", r.Id);
                insert.Parameters.AddWithValue("at", at);
                insert.Parameters.AddWithValue("tick", tick);
                insert.Parameters.AddWithValue("caller", r.Caller);
                insert.Parameters.AddWithValue("asset", r.Asset);
                insert.Parameters.Add(new NpgsqlParameter("site", NpgsqlTypes.NpgsqlDbType.Text) { Value = (object?)r.SiteId ?? DBNull.Value });
                insert.Parameters.AddWithValue("verdict", r.Verdict);
                insert.Parameters.AddWithValue("digest", r.RuleDigest);
                insert.Parameters.AddWithValue("engine", r.EngineVersion);
                insert.Parameters.AddWithValue("req", r.Request);
                insert.Parameters.AddWithValue("reqh", stored.RequestSha256!);
                insert.Parameters.AddWithValue("res", r.Response);
                insert.Parameters.AddWithValue("resh", stored.ResponseSha256!);
                insert.Parameters.AddWithValue("seq", sequence);
                insert.Parameters.AddWithValue("prev", previous);
                insert.Parameters.AddWithValue("hash", hash);
                await insert.ExecuteNonQueryAsync();
                previous = hash;
            }
        }

        var store = await OpenAsync();
        var verification = await store.VerifyChainAsync(CancellationToken.None);

        Assert.Equal(PostgresAuditSchema.LatestVersion, await PostgresRaw.ScalarAsync(_connectionString, "SELECT max(version) FROM schema_migrations;"));
        Assert.True(verification.Intact, verification.FirstBreak?.Reason);
        Assert.Equal(4, verification.Records);
        Assert.Equal(records.Length, await PostgresRaw.ScalarAsync(_connectionString, "SELECT count(*) FROM evaluations WHERE stages IS NULL;"));
        await MigratedStoreChecks.OldRecordsReadBackAndTheChainExtendsAsync(store, records);
    }

    [SkippableFact]
    public async Task Open_WhenAGuardFunctionIsReplacedWithANoOp_IsRefusedNamingIt()
    {
        await (await OpenAsync()).DisposeAsync();
        await ExecuteAsync("CREATE OR REPLACE FUNCTION evaluations_append_only() RETURNS trigger LANGUAGE plpgsql AS $fn$ BEGIN RETURN OLD; END; $fn$;");

        var e = await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => OpenAsync());

        Assert.Contains("function evaluations_append_only (altered)", e.Message, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task Open_WhenDatabaseIsCurrent_AppliesNothing()
    {
        await (await OpenAsync()).DisposeAsync();
        var appliedAt = await PostgresRaw.ScalarAsync(_connectionString, "SELECT extract(epoch FROM max(applied_at))::bigint FROM schema_migrations;");

        await OpenAsync();

        Assert.Equal(PostgresAuditSchema.Migrations.Count, await PostgresRaw.ScalarAsync(_connectionString, "SELECT count(*) FROM schema_migrations;"));
        Assert.Equal(appliedAt, await PostgresRaw.ScalarAsync(_connectionString, "SELECT extract(epoch FROM max(applied_at))::bigint FROM schema_migrations;"));
    }

    [SkippableFact]
    public async Task Open_WhenSchemaIsNewerThanThisBuild_ThrowsUnavailable()
    {
        await (await OpenAsync()).DisposeAsync();
        await ExecuteAsync("INSERT INTO schema_migrations (version, description) VALUES (99, 'from a later build');");

        var e = await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => OpenAsync());

        Assert.Contains("version 99", e.Message, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task Open_WhenSessionHasSynchronousCommitOff_RefusesToStart()
    {
        var relaxed = new NpgsqlConnectionStringBuilder(_connectionString) { Options = "-c synchronous_commit=off" }.ConnectionString;

        var e = await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => OpenAsync(relaxed));

        Assert.Contains("synchronous_commit=off", e.Message, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task Open_WhenNothingListens_ThrowsUnavailable()
    {
        var listener = new System.Net.Sockets.TcpListener(System.Net.IPAddress.Loopback, 0);
        listener.Start();
        var port = ((System.Net.IPEndPoint)listener.LocalEndpoint).Port;
        listener.Stop();
        var nowhere = new NpgsqlConnectionStringBuilder(_connectionString) { Port = port }.ConnectionString;

        await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => OpenAsync(nowhere));
    }

    [SkippableTheory]
    [InlineData("TRUNCATE evaluations;", "evaluations are append-only")]
    [InlineData("TRUNCATE retention_grants;", "retention grants are append-only")]
    [InlineData("INSERT INTO evaluations SELECT * FROM evaluations ON CONFLICT (id) DO UPDATE SET verdict = 'fail';", "evaluations are append-only")]
    [InlineData("INSERT INTO evaluations SELECT * FROM evaluations;", "evaluations_pkey")]
    [InlineData("INSERT INTO evaluations SELECT gen_random_uuid(), evaluated_at, evaluated_at_tick, caller, asset, site_id, verdict, rule_digest, engine_version, request, request_sha256, '\\x7b7d', response_sha256, replay_of FROM evaluations;", "evaluations_response_hash")]
    public async Task RawSql_WhenItWouldRewriteOrForgeARecord_IsRefused(string sql, string reason)
    {
        var store = await OpenAsync();
        await store.AppendAsync(Sample.Record(), CancellationToken.None);

        var e = await Assert.ThrowsAsync<PostgresException>(() => ExecuteAsync(sql));

        Assert.Contains(reason, e.Message + " " + e.ConstraintName, StringComparison.Ordinal);
        Assert.Equal(1, await PostgresRaw.ScalarAsync(_connectionString, "SELECT count(*) FROM evaluations WHERE verdict = 'pass';"));
    }

    private async Task ExecuteAsync(string sql)
    {
        await using var connection = await PostgresRaw.OpenAsync(_connectionString);
        await using var command = new NpgsqlCommand(sql, connection);
        await command.ExecuteNonQueryAsync();
    }
}
