namespace DischargeGuard.Audit;

/// <summary>One page of records, newest first, and the token for the next page.</summary>
/// <param name="Records">The records of this page, at most the page size.</param>
/// <param name="NextCursor">The token that continues after the last record, or <see langword="null"/> when this is the last page.</param>
public sealed record AuditPage(IReadOnlyList<AuditRecord> Records, string? NextCursor);
