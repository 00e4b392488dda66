using DischargeGuard.Audit.Sqlite;

namespace DischargeGuard.Audit.Tests;

/// <summary>The store contract on a SQLite file in a temp folder of its own.</summary>
public sealed class SqliteAuditStoreContractTests : AuditStoreContract
{
    private readonly TempAuditFolder _folder = new();

    protected override async Task<IAuditStore> OpenStoreCoreAsync(int maxBatchSize) =>
        await SqliteAuditStore.OpenAsync(_folder.Options(maxBatchSize), CancellationToken.None);

    protected override async Task<int> ExecuteRawAsync(string sql)
    {
        using var raw = _folder.OpenRaw();
        using var command = raw.CreateCommand();
        command.CommandText = sql;
        return await command.ExecuteNonQueryAsync();
    }

    protected override Task<long> ScalarAsync(string sql) => Task.FromResult(_folder.Scalar(sql));

    protected override Task HoldWriterAsync(IAuditStore store, Task release) =>
        ((SqliteAuditStore)store).HoldWriterForTestingAsync(release);

    protected override Task CleanUpDatabaseAsync() => _folder.CleanUpAsync();

    protected override async Task DropEvaluationGuardsAsync() =>
        await ExecuteRawAsync("DROP TRIGGER evaluations_no_update; DROP TRIGGER evaluations_no_delete;");

    protected override string BlobLiteral(string hex) => $"x'{hex}'";
}
