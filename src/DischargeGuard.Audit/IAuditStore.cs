namespace DischargeGuard.Audit;

/// <summary>
/// The durable record of every evaluation. Append-only: nothing here changes or removes a stored record.
/// </summary>
/// <remarks>
/// The store is not a log sink. A caller answers a request only after <see cref="AppendAsync"/> has completed,
/// and answers 503 when it throws <see cref="AuditStoreUnavailableException"/>.
/// </remarks>
public interface IAuditStore : IAsyncDisposable
{
    /// <summary>Counters of committed and failed batches since the store opened.</summary>
    AuditStoreStatistics Statistics { get; }

    /// <summary>
    /// Stores <paramref name="record"/>, completing only once it is committed durably.
    /// </summary>
    /// <param name="record">The record. Its hashes are computed here; if it carries them, they must match its bytes.</param>
    /// <param name="cancellationToken">
    /// Cancels the wait. A record that is already being written when the token fires may still be committed;
    /// it is never half-written.
    /// </param>
    /// <returns>A task that completes when the record is on disk.</returns>
    /// <exception cref="ArgumentException">The record is malformed (not a version 7 id, unknown verdict, bad digest, empty text).</exception>
    /// <exception cref="AuditStoreUnavailableException">The record was not stored: the store failed or is closed.</exception>
    ValueTask AppendAsync(AuditRecord record, CancellationToken cancellationToken);

    /// <summary>Reads one record, with the request and response bytes exactly as appended.</summary>
    /// <param name="id">The record's id.</param>
    /// <param name="cancellationToken">Cancels the read.</param>
    /// <returns>The record, or <see langword="null"/> when there is none with that id.</returns>
    /// <exception cref="AuditStoreUnavailableException">The store could not be read.</exception>
    Task<AuditRecord?> GetAsync(Guid id, CancellationToken cancellationToken);

    /// <summary>
    /// Streams the records matching <paramref name="query"/>, newest first (by evaluation time, then id),
    /// starting after its cursor and stopping after its limit. Rows are read as they are enumerated, not buffered.
    /// </summary>
    /// <param name="query">Filters, cursor and limit.</param>
    /// <param name="cancellationToken">Cancels the enumeration.</param>
    /// <returns>The matching records. Make the next cursor from the last one with <see cref="AuditCursor.After"/>.</returns>
    /// <exception cref="ArgumentException">The query's cursor is not a token this store issued, or its limit is not positive.</exception>
    /// <exception cref="AuditStoreUnavailableException">The store could not be read.</exception>
    IAsyncEnumerable<AuditRecord> QueryAsync(AuditQuery query, CancellationToken cancellationToken);

    /// <summary>
    /// The stage summaries (<see cref="AuditRecord.Stages"/>) of the newest records of one asset, newest first (by
    /// evaluation time, then id), without reading their request or response bytes: what a trend over the asset's history
    /// needs.
    /// </summary>
    /// <param name="query">
    /// <see cref="AuditQuery.Asset"/> is required; <see cref="AuditQuery.SiteId"/>, <see cref="AuditQuery.To"/> (before this
    /// instant, exclusive), the scope lists <see cref="AuditQuery.SiteIn"/> and <see cref="AuditQuery.AssetIn"/> and every
    /// other filter and the cursor apply as in <see cref="QueryAsync"/>. <see cref="AuditQuery.Limit"/> is the number of
    /// records N (1 to <see cref="AuditQuery.MaxPageSize"/>; <see cref="AuditQuery.DefaultPageSize"/> when null).
    /// </param>
    /// <param name="cancellationToken">Cancels the read.</param>
    /// <returns>
    /// At most N entries, one per record (a record stored without stages has an empty list), each with its stages in
    /// index order.
    /// </returns>
    /// <exception cref="ArgumentException">No asset, a bad cursor or verdict, or a limit outside 1 to <see cref="AuditQuery.MaxPageSize"/>.</exception>
    /// <exception cref="AuditStoreUnavailableException">The store could not be read.</exception>
    Task<IReadOnlyList<AuditStageHistoryEntry>> GetStageHistoryAsync(AuditQuery query, CancellationToken cancellationToken);

    /// <summary>
    /// Archives a rule set in canonical form under its digest, once: a digest already archived is left as it is (the first
    /// write wins; the bytes of one digest are the same anyway). Archived rule sets are never changed or deleted, retention
    /// included, so every stored <see cref="AuditRecord.RuleDigest"/> can be resolved to the rules that decided it.
    /// </summary>
    /// <param name="digest">Lower-case hex SHA-256 of <paramref name="canonical"/>, as the rules project computes it (<c>CanonicalForm.Digest</c>).</param>
    /// <param name="canonical">The canonical UTF-8 JSON bytes (<c>CanonicalForm.OfMerged</c>), 1 byte to 16 MiB. Copied.</param>
    /// <param name="cancellationToken">Cancels the wait (a write already started completes or rolls back whole).</param>
    /// <returns>A task that completes when the rule set is durably archived (or was already).</returns>
    /// <exception cref="ArgumentException">The digest is malformed, or is not the SHA-256 of the bytes: nothing is stored.</exception>
    /// <exception cref="AuditStoreUnavailableException">The rule set was not stored: the store failed or is closed.</exception>
    ValueTask ArchiveRuleSetAsync(string digest, ReadOnlyMemory<byte> canonical, CancellationToken cancellationToken);

    /// <summary>The canonical bytes archived under <paramref name="digest"/>, checked against it.</summary>
    /// <param name="digest">Lower-case hex SHA-256.</param>
    /// <param name="cancellationToken">Cancels the read.</param>
    /// <returns>The bytes exactly as archived, or <see langword="null"/> when none is archived under that digest.</returns>
    /// <exception cref="ArgumentException">The digest is not 64 lower-case hex digits.</exception>
    /// <exception cref="AuditStoreUnavailableException">The store could not be read, or the stored bytes no longer match the digest.</exception>
    Task<byte[]?> GetRuleSetAsync(string digest, CancellationToken cancellationToken);

    /// <summary>Counts the records evaluated before <paramref name="before"/> (what a retention run would delete).</summary>
    /// <param name="before">The instant (exclusive).</param>
    /// <param name="cancellationToken">Cancels the count.</param>
    /// <returns>The number of records.</returns>
    /// <exception cref="AuditStoreUnavailableException">The store could not be read.</exception>
    Task<long> CountBeforeAsync(DateTimeOffset before, CancellationToken cancellationToken);

    /// <summary>
    /// The only way records leave the store: in one transaction, stores <paramref name="grant"/> and deletes every record
    /// evaluated before its <see cref="RetentionGrant.DeleteBefore"/>. The schema refuses any other delete.
    /// </summary>
    /// <param name="grant">The decision, with who made it and why.</param>
    /// <param name="cancellationToken">Cancels the wait (a run already started completes or rolls back whole).</param>
    /// <returns>The grant id and the number of records deleted.</returns>
    /// <exception cref="ArgumentException">The grant has no author or reason, or reaches into the future.</exception>
    /// <exception cref="AuditStoreUnavailableException">Nothing was deleted: the store failed or is closed.</exception>
    Task<RetentionResult> ApplyRetentionAsync(RetentionGrant grant, CancellationToken cancellationToken);

    /// <summary>The newest link of the hash chain (sequence, record id, hash).</summary>
    /// <param name="cancellationToken">Cancels the read.</param>
    /// <returns>The head.</returns>
    /// <exception cref="AuditStoreUnavailableException">The store could not be read.</exception>
    Task<AuditChainHead> GetChainHeadAsync(CancellationToken cancellationToken);

    /// <summary>
    /// Verifies the whole chain: the retention grants, then every record in sequence order from the newest grant's anchor
    /// (its body hashes, its previous hash and its record hash), then the stored head. Streams the records; stops at the
    /// first broken link.
    /// </summary>
    /// <param name="cancellationToken">Cancels the walk.</param>
    /// <returns>What was found.</returns>
    /// <exception cref="AuditStoreUnavailableException">The store could not be read.</exception>
    Task<AuditChainVerification> VerifyChainAsync(CancellationToken cancellationToken);

    /// <summary>
    /// How much room the store has: for SQLite the free space of the audit file's volume and the file's size; for
    /// PostgreSQL the database's size (the server's free disk is not visible to a client).
    /// </summary>
    /// <param name="cancellationToken">Cancels the read.</param>
    /// <returns>The figures.</returns>
    /// <exception cref="AuditStoreUnavailableException">The store could not be read.</exception>
    Task<AuditStorage> GetStorageAsync(CancellationToken cancellationToken);

    /// <summary>Checks that the store can be read and written. Never throws for a store failure; reports it.</summary>
    /// <param name="cancellationToken">Cancels the check.</param>
    /// <returns>What the check found.</returns>
    Task<AuditHealth> CheckHealthAsync(CancellationToken cancellationToken);
}
