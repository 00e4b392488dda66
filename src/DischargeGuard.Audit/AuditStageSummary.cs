namespace DischargeGuard.Audit;

/// <summary>
/// One stage of an evaluation as the audit store keeps it beside the response: the figures a history or trend needs, in
/// SI units, so they can be read back without parsing the stored response.
/// </summary>
/// <remarks>
/// <see cref="AuditVerdict"/> is a set of string constants, not a type, so the verdict is one of its strings.
/// Temperatures are absolute (kelvin) except <see cref="MarginKelvin"/>, a temperature difference; pressures are absolute.
/// </remarks>
/// <param name="Index">The stage's 0-based index in the request. A record's stages are stored in strictly increasing index order.</param>
/// <param name="Verdict">The stage's verdict: <see cref="AuditVerdict.Pass"/>, <see cref="AuditVerdict.Review"/> or <see cref="AuditVerdict.Fail"/>.</param>
/// <param name="GoverningRuleId">The rule of the governing finding (smallest margin), or <see langword="null"/> when none governed.</param>
/// <param name="MarginKelvin">Limit minus value of the governing finding, K (negative beyond the limit); null when none.</param>
/// <param name="IsentropicKelvin">The isentropic discharge temperature, K; null when the stage was not evaluated.</param>
/// <param name="EstimatedKelvin">The estimated (actual) discharge temperature, K; null when the stage was not evaluated.</param>
/// <param name="SuctionPressurePascal">Absolute suction pressure, Pa.</param>
/// <param name="DischargePressurePascal">Absolute discharge pressure, Pa.</param>
/// <param name="MeasuredKelvin">The measured discharge temperature, K, when the request gave one.</param>
public sealed record AuditStageSummary(
    int Index,
    string Verdict,
    string? GoverningRuleId,
    double? MarginKelvin,
    double? IsentropicKelvin,
    double? EstimatedKelvin,
    double SuctionPressurePascal,
    double DischargePressurePascal,
    double? MeasuredKelvin)
{
    /// <summary>Most stages one record stores.</summary>
    public const int MaxStages = 64;
}

/// <summary>One record's stage summaries as a history query returns them, without its request or response bytes.</summary>
/// <param name="RecordId">The record's id.</param>
/// <param name="EvaluatedAt">When it was evaluated (UTC, to the tick).</param>
/// <param name="Stages">Its stage summaries in index order; empty for a record stored without them (before schema 8 on SQLite, 5 on PostgreSQL).</param>
public sealed record AuditStageHistoryEntry(Guid RecordId, DateTimeOffset EvaluatedAt, IReadOnlyList<AuditStageSummary> Stages);
