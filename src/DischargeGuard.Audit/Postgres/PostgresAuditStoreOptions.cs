using Npgsql;

namespace DischargeGuard.Audit.Postgres;

/// <summary>Configuration of the PostgreSQL audit store.</summary>
public sealed record PostgresAuditStoreOptions
{
    /// <summary>An Npgsql connection string (host, port, database, user, password or trust).</summary>
    public required string ConnectionString { get; init; }

    /// <summary>Most appends committed in one transaction.</summary>
    public int MaxBatchSize { get; init; } = 256;

    /// <summary>Appends that may wait for the writer before <see cref="IAuditStore.AppendAsync"/> itself waits for room.</summary>
    public int QueueCapacity { get; init; } = 4096;

    /// <summary>How long one statement (and opening a connection) may take before it fails.</summary>
    public TimeSpan CommandTimeout { get; init; } = TimeSpan.FromSeconds(5);

    /// <summary>The host's meter factory for the commit instruments (<see cref="AuditMetrics"/>); null measures nothing.</summary>
    public System.Diagnostics.Metrics.IMeterFactory? MeterFactory { get; init; }

    /// <summary>Throws when a value is out of range, naming it.</summary>
    /// <exception cref="ArgumentException">The connection string is empty or malformed.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A number or the timeout is out of range.</exception>
    public void Validate()
    {
        if (string.IsNullOrWhiteSpace(ConnectionString))
        {
            throw new ArgumentException("The PostgreSQL connection string must be set.", nameof(ConnectionString));
        }

        try
        {
            _ = new NpgsqlConnectionStringBuilder(ConnectionString);
        }
        catch (ArgumentException e)
        {
            throw new ArgumentException($"The PostgreSQL connection string is malformed: {e.Message}", nameof(ConnectionString), e);
        }

        if (MaxBatchSize is < 1 or > 10_000)
        {
            throw new ArgumentOutOfRangeException(nameof(MaxBatchSize), MaxBatchSize, "The batch size must be 1 to 10000.");
        }

        if (QueueCapacity < MaxBatchSize)
        {
            throw new ArgumentOutOfRangeException(nameof(QueueCapacity), QueueCapacity, "The queue must hold at least one batch.");
        }

        if (CommandTimeout < TimeSpan.FromSeconds(1) || CommandTimeout > TimeSpan.FromMinutes(5))
        {
            throw new ArgumentOutOfRangeException(nameof(CommandTimeout), CommandTimeout, "The command timeout must be 1 second to 5 minutes.");
        }
    }
}
