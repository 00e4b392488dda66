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
