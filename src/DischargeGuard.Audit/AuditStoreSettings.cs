namespace DischargeGuard.Audit;

/// <summary>
/// Which audit store a host opens and with what, as the hosts' <c>Audit</c> configuration section names it
/// (<c>Audit:Provider</c>, <c>Audit:SqlitePath</c>, <c>Audit:ConnectionString</c>, <c>Audit:MaxBatchSize</c>). Passed to
/// <see cref="AuditStore.OpenAsync(AuditStoreSettings, CancellationToken)"/>, the one place a backend is chosen.
/// </summary>
public sealed record AuditStoreSettings
{
    /// <summary>The provider name of the SQLite store (one local file).</summary>
    public const string Sqlite = "sqlite";

    /// <summary>The provider name of the PostgreSQL store (a server; several replicas may share it).</summary>
    public const string PostgreSql = "postgresql";

    /// <summary><see cref="Sqlite"/> (the default) or <see cref="PostgreSql"/>.</summary>
    public string Provider { get; init; } = Sqlite;

    /// <summary>The SQLite file (a full path; the host resolves a relative one); required for <see cref="Sqlite"/>.</summary>
    public string? SqlitePath { get; init; }

    /// <summary>The Npgsql connection string; required for <see cref="PostgreSql"/>.</summary>
    public string? ConnectionString { get; init; }

    /// <summary>Most records committed in one transaction.</summary>
    public int MaxBatchSize { get; init; } = 256;

    /// <summary>The host's meter factory for the commit instruments (<see cref="AuditMetrics"/>); null measures nothing.</summary>
    public System.Diagnostics.Metrics.IMeterFactory? MeterFactory { get; init; }
}
