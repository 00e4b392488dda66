using System.ComponentModel.DataAnnotations;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>Settings of the service host (section <c>DischargeGuard</c>).</summary>
public sealed class ServiceOptions
{
    /// <summary>The configuration section.</summary>
    public const string SectionName = "DischargeGuard";

    /// <summary>Rule directory (default.yaml, sites/, assets/); empty means the shipped rules beside the binary.</summary>
    public string RulesDirectory { get; set; } = string.Empty;

    /// <summary>Whether to reload the rules when the directory changes.</summary>
    public bool RulesWatch { get; set; } = true;

    /// <summary>Largest accepted request body, bytes (larger → 413).</summary>
    [Range(1024, 256 * 1024 * 1024)]
    public long MaxRequestBodyBytes { get; set; } = 1024 * 1024;

    /// <summary>Largest accepted body of <c>POST /v1/evaluations/batch</c> in JSON form, bytes (NDJSON limits each line to <see cref="MaxRequestBodyBytes"/> instead).</summary>
    [Range(1024, 1024L * 1024 * 1024)]
    public long MaxBatchBodyBytes { get; set; } = 64L * 1024 * 1024;

    /// <summary>Youngest records a retention run may delete, days: <c>deleteBefore</c> must be at least this long ago.</summary>
    [Range(1, 36_500)]
    public int MinimumRetentionDays { get; set; } = 730;

    /// <summary>
    /// How many replicas of the service the deployment runs against one audit store. Above 1 the service refuses the
    /// SQLite provider at start: a SQLite file must have one writer process (use PostgreSQL).
    /// </summary>
    [Range(1, 1000)]
    public int Replicas { get; set; } = 1;

    /// <summary>Seconds a client should wait before retrying after a 503.</summary>
    [Range(1, 3600)]
    public int RetryAfterSeconds { get; set; } = 5;

    /// <summary>The rule directory to use.</summary>
    public string ResolvedRulesDirectory =>
        string.IsNullOrWhiteSpace(RulesDirectory) ? Path.Combine(AppContext.BaseDirectory, "rules") : Path.GetFullPath(RulesDirectory);
}

/// <summary>Settings of the audit store (section <c>Audit</c>).</summary>
public sealed class AuditSettings
{
    /// <summary>The configuration section.</summary>
    public const string SectionName = "Audit";

    /// <summary>Store provider: sqlite (a local file) or postgresql (a server, see <see cref="ConnectionString"/>).</summary>
    [RegularExpression("^(sqlite|postgresql)$", ErrorMessage = "Audit:Provider must be 'sqlite' or 'postgresql'.")]
    public string Provider { get; set; } = "sqlite";

    /// <summary>SQLite file; a relative path is under the content root. Used when the provider is sqlite.</summary>
    [Required]
    public string SqlitePath { get; set; } = "data/audit.db";

    /// <summary>Npgsql connection string; required when the provider is postgresql (keep the password in a secret, not in appsettings).</summary>
    public string ConnectionString { get; set; } = string.Empty;

    /// <summary>Most records committed in one transaction.</summary>
    [Range(1, 10_000)]
    public int MaxBatchSize { get; set; } = 256;

    /// <summary>
    /// Free bytes the audit file's volume must keep (SQLite). Below it evaluations are refused with 503 and readiness is
    /// Unhealthy; below twice it readiness is Degraded. 0 turns the check off.
    /// </summary>
    [Range(0, long.MaxValue)]
    public long MinFreeBytes { get; set; } = 1024L * 1024 * 1024;

    /// <summary>
    /// PostgreSQL: the database size (<c>pg_database_size</c>) at which evaluations are refused with 503, as the free-space
    /// threshold does for SQLite (the server's disk is not visible to the service). 0 (the default) turns it off.
    /// </summary>
    [Range(0, long.MaxValue)]
    public long MaxDatabaseBytes { get; set; }
}

/// <summary>Storage quotas (section <c>Quotas</c>): bytes a key may store per UTC day, and the most one record may store.</summary>
public sealed class QuotaOptions
{
    /// <summary>The configuration section.</summary>
    public const string SectionName = "Quotas";

    /// <summary>Bytes per UTC day by role (a key with several roles gets the largest); a key's own <c>bytesPerDay</c> overrides.</summary>
    public Dictionary<string, long> BytesPerDay { get; } = new(StringComparer.Ordinal)
    {
        ["technician"] = 128L * 1024 * 1024,
        ["gate"] = 512L * 1024 * 1024,
        ["planner"] = 2048L * 1024 * 1024,
        ["admin"] = 0,
    };

    /// <summary>
    /// Bytes per UTC day without keys (loopback-only mode), all callers together; null (the default) sets no quota, since
    /// only the host itself can call an anonymous service. The free-space threshold still applies.
    /// </summary>
    [Range(0, long.MaxValue)]
    public long? AnonymousBytesPerDay { get; set; }

    /// <summary>Most bytes (request plus response) one record may store; a larger answer is refused with 413 and not recorded.</summary>
    [Range(1024, long.MaxValue)]
    public long MaxRecordBytes { get; set; } = 1024L * 1024;
}
