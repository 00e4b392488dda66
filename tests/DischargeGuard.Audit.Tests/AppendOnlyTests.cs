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
}
