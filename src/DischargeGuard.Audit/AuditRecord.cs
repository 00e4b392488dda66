namespace DischargeGuard.Audit;

/// <summary>
/// One evaluation as the audit store keeps it: who asked, about which asset, what the service answered,
/// and the exact bytes of the request and the response.
/// </summary>
/// <remarks>
/// <para>
/// <see cref="Request"/> and <see cref="Response"/> are the bytes themselves, not a re-serialisation:
/// a later read returns them byte-identical, so a stored response can be served again or checked against
/// its hash. The store copies both arrays when a record is appended, so changing an array afterwards does
/// not change what is written.
/// </para>
/// <para>
/// Record equality compares the arrays by reference; compare the hashes to compare contents.
/// </para>
/// </remarks>
public sealed record AuditRecord
{
    /// <summary>Identifier, a version 7 UUID (<see cref="Guid.CreateVersion7(DateTimeOffset)"/>) so ids sort roughly by time.</summary>
    public required Guid Id { get; init; }

    /// <summary>When the evaluation was made. The store keeps it in UTC with 100 ns precision.</summary>
    public required DateTimeOffset EvaluatedAt { get; init; }

    /// <summary>The API key id that asked, or <see cref="AnonymousCaller"/>.</summary>
    public required string Caller { get; init; }

    /// <summary>The asset tag of the compressor stage, for example <c>K-101A</c>.</summary>
    public required string Asset { get; init; }

    /// <summary>The site the asset belongs to, when the request named one.</summary>
    public string? SiteId { get; init; }

    /// <summary>The verdict: one of <see cref="AuditVerdict.Pass"/>, <see cref="AuditVerdict.Review"/>, <see cref="AuditVerdict.Fail"/>.</summary>
    public required string Verdict { get; init; }

    /// <summary>Lower-case hex SHA-256 of the effective rule set that produced the verdict.</summary>
    public required string RuleDigest { get; init; }

    /// <summary>Version of the evaluation engine that produced the response.</summary>
    public required string EngineVersion { get; init; }

    /// <summary>The request as UTF-8 JSON, exactly as received (or as normalised by the caller before evaluation).</summary>
#pragma warning disable CA1819 // The audit contract is "these exact bytes"; a copy is taken on append.
    public required byte[] Request { get; init; }

    /// <summary>The response as UTF-8 JSON, exactly as sent.</summary>
    public required byte[] Response { get; init; }
#pragma warning restore CA1819

    /// <summary>
    /// Lower-case hex SHA-256 of <see cref="Request"/>. Computed by the store on append; leave it <see langword="null"/>
    /// when appending, or set it to have the store check it. Always set on a record read back from the store.
    /// </summary>
    public string? RequestSha256 { get; init; }

    /// <summary>Lower-case hex SHA-256 of <see cref="Response"/>; as for <see cref="RequestSha256"/>.</summary>
    public string? ResponseSha256 { get; init; }

    /// <summary>The evaluation this one replays, when it is a replay. Not checked against the store.</summary>
    public Guid? ReplayOf { get; init; }

    /// <summary>The record's place in the store's hash chain, from 1. Set by the store when it writes; ignored on append.</summary>
    public long? Sequence { get; init; }

    /// <summary>The <see cref="RecordHash"/> of the record before it (or the anchor). Set by the store; ignored on append.</summary>
    public string? PreviousHash { get; init; }

    /// <summary>Lower-case hex SHA-256 of the whole row and <see cref="PreviousHash"/> (<see cref="AuditChain.RecordHash"/>). Set by the store; ignored on append.</summary>
    public string? RecordHash { get; init; }

    /// <summary>
    /// Per-stage SI figures of the evaluation (verdict, governing rule and margin, temperatures, pressures), stored with
    /// the record and covered by its <see cref="RecordHash"/>, so a history reads them without the response bytes
    /// (<see cref="IAuditStore.GetStageHistoryAsync"/>). Empty by default, and for records stored before the stores kept them.
    /// </summary>
    public IReadOnlyList<AuditStageSummary> Stages { get; init; } = [];

    /// <summary>The <see cref="Caller"/> of a request that presented no API key.</summary>
    public const string AnonymousCaller = "anonymous";
}
