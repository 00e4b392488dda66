namespace DischargeGuard.Audit;

/// <summary>
/// Which records to read: every filter that is set must match. Results are ordered newest first by
/// (<see cref="AuditRecord.EvaluatedAt"/>, <see cref="AuditRecord.Id"/>).
/// </summary>
public sealed record AuditQuery
{
    /// <summary>Page size when <see cref="Limit"/> is not set and a page is asked for.</summary>
    public const int DefaultPageSize = 50;

    /// <summary>Largest page <see cref="AuditStoreExtensions.QueryPageAsync"/> returns.</summary>
    public const int MaxPageSize = 1000;

    /// <summary>Only this asset tag (exact match).</summary>
    public string? Asset { get; init; }

    /// <summary>Only this site (exact match).</summary>
    public string? SiteId { get; init; }

    /// <summary>Only this verdict.</summary>
    public string? Verdict { get; init; }

    /// <summary>Only records evaluated at or after this instant (inclusive).</summary>
    public DateTimeOffset? From { get; init; }

    /// <summary>Only records evaluated before this instant (exclusive), so consecutive windows neither overlap nor leave gaps.</summary>
    public DateTimeOffset? To { get; init; }

    /// <summary>Only this caller (key id or <see cref="AuditRecord.AnonymousCaller"/>).</summary>
    public string? Caller { get; init; }

    /// <summary>
    /// Only records of one of these sites (exact match; a record without a site never matches). <see langword="null"/>
    /// does not filter; an empty list matches nothing. Used to narrow a query to what an API key is bound to.
    /// </summary>
    public IReadOnlyList<string>? SiteIn { get; init; }

    /// <summary>Only records of one of these asset tags; as for <see cref="SiteIn"/>.</summary>
    public IReadOnlyList<string>? AssetIn { get; init; }

    /// <summary>Continue after this position: a token from <see cref="AuditCursor.ToString"/> or <see cref="AuditPage.NextCursor"/>.</summary>
    public string? Cursor { get; init; }

    /// <summary>
    /// Most records to return. <see langword="null"/> streams every match (for exports);
    /// a page uses <see cref="DefaultPageSize"/> instead.
    /// </summary>
    public int? Limit { get; init; }
}
