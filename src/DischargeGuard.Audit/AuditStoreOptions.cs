namespace DischargeGuard.Audit;

/// <summary>Configuration of the audit store, bound from the <see cref="SectionName"/> section.</summary>
public sealed record AuditStoreOptions
{
    /// <summary>The configuration section.</summary>
    public const string SectionName = "Audit";

    /// <summary>Path of the SQLite database file. Its directory is created when missing.</summary>
    public required string SqlitePath { get; init; }

    /// <summary>Most appends committed in one transaction.</summary>
    public int MaxBatchSize { get; init; } = 256;

    /// <summary>
    /// Appends that may wait for the writer before <see cref="IAuditStore.AppendAsync"/> itself waits for room.
    /// </summary>
    public int QueueCapacity { get; init; } = 4096;

    /// <summary>
    /// How long a write or read waits for a lock held by another connection or process before failing.
    /// SQLite waits this long; the provider then retries up to the next whole second.
    /// </summary>
    public TimeSpan BusyTimeout { get; init; } = TimeSpan.FromSeconds(5);

    /// <summary>The host's meter factory for the commit instruments (<see cref="AuditMetrics"/>); null measures nothing.</summary>
    public System.Diagnostics.Metrics.IMeterFactory? MeterFactory { get; init; }

    /// <summary>Throws when a value is out of range, naming it.</summary>
    /// <exception cref="ArgumentException">The path is empty.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A number or the timeout is out of range.</exception>
    public void Validate()
    {
        if (string.IsNullOrWhiteSpace(SqlitePath))
        {
            throw new ArgumentException("The SQLite path must be set.", nameof(SqlitePath));
        }

        if (MaxBatchSize is < 1 or > 10_000)
        {
            throw new ArgumentOutOfRangeException(nameof(MaxBatchSize), MaxBatchSize, "The batch size must be 1 to 10000.");
        }

        if (QueueCapacity < MaxBatchSize)
        {
            throw new ArgumentOutOfRangeException(nameof(QueueCapacity), QueueCapacity, "The queue must hold at least one batch.");
        }

        if (BusyTimeout <= TimeSpan.Zero || BusyTimeout > TimeSpan.FromMinutes(5))
        {
            throw new ArgumentOutOfRangeException(nameof(BusyTimeout), BusyTimeout, "The busy timeout must be more than zero and at most 5 minutes.");
        }
    }
}
