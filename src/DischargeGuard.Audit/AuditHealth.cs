namespace DischargeGuard.Audit;

/// <summary>What a health check of the audit store found.</summary>
/// <param name="Reachable">The database could be opened and read.</param>
/// <param name="Writable">A probe write committed within the busy timeout. When false, appends fail too.</param>
/// <param name="LastError">The most recent failure of a write, a read or a probe, or <see langword="null"/> when there has been none.</param>
/// <param name="LastErrorAt">When <paramref name="LastError"/> happened (UTC).</param>
/// <param name="LastCommitAt">When the last batch of appends committed (UTC), or <see langword="null"/> when none has since the store opened.</param>
public sealed record AuditHealth(
    bool Reachable,
    bool Writable,
    string? LastError,
    DateTimeOffset? LastErrorAt,
    DateTimeOffset? LastCommitAt)
{
    /// <summary>The guard triggers, constraints and tables that are missing or altered (empty when all are in place).</summary>
    public IReadOnlyList<string> MissingGuards { get; init; } = [];

    /// <summary>Reachable, writable and guarded: the store can take evaluations.</summary>
    public bool IsHealthy => Reachable && Writable && MissingGuards.Count == 0;
}
