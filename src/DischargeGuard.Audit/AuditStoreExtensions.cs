namespace DischargeGuard.Audit;

/// <summary>Operations every <see cref="IAuditStore"/> gets from its streaming query.</summary>
public static class AuditStoreExtensions
{
    /// <summary>
    /// Reads one page of <paramref name="query"/>: at most its limit (or <see cref="AuditQuery.DefaultPageSize"/>),
    /// with a next cursor only when more records follow.
    /// </summary>
    /// <param name="store">The store.</param>
    /// <param name="query">Filters, cursor and page size (1 to <see cref="AuditQuery.MaxPageSize"/>).</param>
    /// <param name="cancellationToken">Cancels the read.</param>
    /// <returns>The page.</returns>
    /// <exception cref="ArgumentOutOfRangeException">The page size is outside 1 to <see cref="AuditQuery.MaxPageSize"/>.</exception>
    public static async Task<AuditPage> QueryPageAsync(this IAuditStore store, AuditQuery query, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(query);
        var pageSize = query.Limit ?? AuditQuery.DefaultPageSize;
        if (pageSize is < 1 or > AuditQuery.MaxPageSize)
        {
            throw new ArgumentOutOfRangeException(nameof(query), pageSize, $"The page size must be 1 to {AuditQuery.MaxPageSize}.");
        }

        // One more than the page tells whether a next page exists without a second query.
        var records = new List<AuditRecord>(pageSize + 1);
        await foreach (var record in store.QueryAsync(query with { Limit = pageSize + 1 }, cancellationToken).ConfigureAwait(false))
        {
            records.Add(record);
        }

        if (records.Count <= pageSize)
        {
            return new AuditPage(records, null);
        }

        records.RemoveAt(pageSize);
        return new AuditPage(records, AuditCursor.After(records[^1]).ToString());
    }
}
