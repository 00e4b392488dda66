using System.Globalization;
using DischargeGuard.Audit.Postgres;
using Npgsql;

namespace DischargeGuard.Audit.Tests.Postgres;

/// <summary>The store contract on a real PostgreSQL server, a fresh database per test.</summary>
[Collection(PostgresServerGroup.Name)]
public sealed class PostgresAuditStoreContractTests(PostgresFixture fixture) : AuditStoreContract
{
    private string _connectionString = null!;

    public override async Task InitializeAsync()
    {
        var server = fixture.RequireServer();
        _connectionString = server.ConnectionString(await server.CreateDatabaseAsync());
    }

    protected override async Task<IAuditStore> OpenStoreCoreAsync(int maxBatchSize) =>
        await PostgresAuditStore.OpenAsync(new PostgresAuditStoreOptions { ConnectionString = _connectionString, MaxBatchSize = maxBatchSize }, CancellationToken.None);

    protected override async Task<int> ExecuteRawAsync(string sql)
    {
        await using var connection = await PostgresRaw.OpenAsync(_connectionString);
        await using var command = new NpgsqlCommand(sql, connection);
        return await command.ExecuteNonQueryAsync();
    }

    protected override Task<long> ScalarAsync(string sql) => PostgresRaw.ScalarAsync(_connectionString, sql);

    protected override Task HoldWriterAsync(IAuditStore store, Task release) =>
        ((PostgresAuditStore)store).HoldWriterForTestingAsync(release);

    protected override Task CleanUpDatabaseAsync() => Task.CompletedTask; // the cluster is deleted with the fixture

    // The table owner can drop its triggers; the service's role should own nothing (docs/audit.md).
    protected override async Task DropEvaluationGuardsAsync() =>
        await ExecuteRawAsync("DROP TRIGGER evaluations_no_update_or_delete ON evaluations;");

    protected override string BlobLiteral(string hex) => $"'\\x{hex}'::bytea";
}

/// <summary>Connections of the test's own, outside any store.</summary>
internal static class PostgresRaw
{
    public static async Task<NpgsqlConnection> OpenAsync(string connectionString)
    {
        var connection = new NpgsqlConnection(connectionString + ";Pooling=false");
        await connection.OpenAsync();
        return connection;
    }

    public static async Task<long> ScalarAsync(string connectionString, string sql)
    {
        await using var connection = await OpenAsync(connectionString);
        await using var command = new NpgsqlCommand(sql, connection);
        return Convert.ToInt64(await command.ExecuteScalarAsync(), CultureInfo.InvariantCulture);
    }
}
