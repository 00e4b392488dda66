using Microsoft.Data.Sqlite;

namespace DischargeGuard.Audit.Tests;

public sealed class AppendOnlyTests : IAsyncLifetime
{
    private readonly TempAuditFolder _folder = new();
    private AuditRecord _older = null!;
    private AuditRecord _newer = null!;

    public async Task InitializeAsync()
    {
        var store = await _folder.OpenAsync();
        _older = Sample.Record(at: Sample.Start);
        _newer = Sample.Record(at: Sample.Start.AddDays(30), asset: "K-102A");
        await store.AppendAsync(_older, CancellationToken.None);
        await store.AppendAsync(_newer, CancellationToken.None);
    }

    public async Task DisposeAsync() => await _folder.CleanUpAsync();

    [Theory]
    [InlineData("UPDATE evaluations SET verdict = 'pass';")]
    [InlineData("UPDATE evaluations SET response = x'7b7d' WHERE asset = 'K-101A';")]
    [InlineData("DELETE FROM evaluations;")]
    [InlineData("DELETE FROM evaluations WHERE asset = 'K-101A';")]
    public void RawSql_WhenItChangesOrRemovesEvaluations_IsRefusedByTrigger(string sql)
    {
        using var raw = _folder.OpenRaw();
        using var command = raw.CreateCommand();
        command.CommandText = sql;

        var e = Assert.Throws<SqliteException>(() => command.ExecuteNonQuery());

        Assert.Contains("evaluations are append-only", e.Message, StringComparison.Ordinal);
        Assert.Equal(2, _folder.CountEvaluations());
        Assert.Equal(0, _folder.Scalar("SELECT count(*) FROM evaluations WHERE verdict <> 'pass' OR length(response) = 2;"));
    }

    [Fact]
    public void RawSql_WhenInsertOrReplaceReusesAnId_IsRefusedByTrigger()
    {
        using var raw = _folder.OpenRaw();
        using var command = raw.CreateCommand();
        command.CommandText = """
            INSERT OR REPLACE INTO evaluations (id, evaluated_at, caller, asset, site_id, verdict, rule_digest, engine_version, request, request_sha256, response, response_sha256)
            SELECT id, evaluated_at, caller, asset, site_id, 'fail', rule_digest, engine_version, request, request_sha256, x'7b7d', response_sha256 FROM evaluations WHERE asset = 'K-101A';
            """;

        var e = Assert.Throws<SqliteException>(() => command.ExecuteNonQuery());

        Assert.Contains("append-only", e.Message, StringComparison.Ordinal);
        Assert.Equal(0, _folder.Scalar("SELECT count(*) FROM evaluations WHERE verdict = 'fail';"));
    }

    [Fact]
    public void RawSql_WhenRetentionGrantCoversOnlyOlderRows_DeletesThoseAndStillRefusesNewer()
    {
        // The documented route for a future retention operation: record a grant, then delete below it.
        using var raw = _folder.OpenRaw();
        using (var grant = raw.CreateCommand())
        {
            grant.CommandText = """
                INSERT INTO retention_grants (granted_at, delete_before, granted_by, reason)
                VALUES ('2026-05-01T00:00:00.0000000Z', '2026-04-01T00:00:00.0000000Z', 'admin-ops', 'retention test');
                """;
            grant.ExecuteNonQuery();
        }

        using (var deleteOlder = raw.CreateCommand())
        {
            deleteOlder.CommandText = "DELETE FROM evaluations WHERE asset = 'K-101A';";
            Assert.Equal(1, deleteOlder.ExecuteNonQuery());
        }

        using var deleteNewer = raw.CreateCommand();
        deleteNewer.CommandText = "DELETE FROM evaluations WHERE asset = 'K-102A';";
        Assert.Throws<SqliteException>(() => deleteNewer.ExecuteNonQuery());
        Assert.Equal(1, _folder.CountEvaluations());
    }

    [Theory]
    [InlineData("UPDATE retention_grants SET delete_before = '9999-12-31T00:00:00.0000000Z';")]
    [InlineData("DELETE FROM retention_grants;")]
    public void RawSql_WhenItChangesRetentionGrants_IsRefusedByTrigger(string sql)
    {
        using var raw = _folder.OpenRaw();
        using (var grant = raw.CreateCommand())
        {
            grant.CommandText = "INSERT INTO retention_grants (granted_at, delete_before, granted_by, reason) VALUES ('2026-05-01T00:00:00.0000000Z', '2026-01-01T00:00:00.0000000Z', 'admin-ops', 'test');";
            grant.ExecuteNonQuery();
        }

        using var command = raw.CreateCommand();
        command.CommandText = sql;

        var e = Assert.Throws<SqliteException>(() => command.ExecuteNonQuery());
        Assert.Contains("retention grants are append-only", e.Message, StringComparison.Ordinal);
    }
}
