namespace DischargeGuard.Audit;

/// <summary>
/// What a database gives <see cref="AuditStore"/>: SQL and connection handling, nothing else. Validation, the group-commit
/// queue, the chain hashes, retention decisions, health and statistics live in <see cref="AuditStore"/> and are the same
/// for every database. DEVELOPERS.md ("A third audit store") walks through an implementation.
/// </summary>
/// <remarks>
/// <para>
/// Writer members (<see cref="OpenAsync"/>, <see cref="BeginWriteAsync"/>, <see cref="DiscardWriterAsync"/>) are called
/// only from the store's single writer loop, one at a time, so the writer connection needs no locking. Read members may be
/// called from any thread at once and use connections of their own.
/// </para>
/// <para>
/// Failures surface as the provider's own exceptions; <see cref="IsStoreFailure"/> tells the store which of them mean "the
/// store could not do it", and the store turns those into <see cref="AuditStoreUnavailableException"/>.
/// </para>
/// </remarks>
internal interface IAuditBackend : IAsyncDisposable
{
    /// <summary>The store kind for metrics and messages: <c>sqlite</c> or <c>postgresql</c>.</summary>
    string Kind { get; }

    /// <summary>The schema version this build brings a database to.</summary>
    int LatestSchemaVersion { get; }

    /// <summary>Connects the writer, applies every pending migration, and refuses a database whose guards are missing.</summary>
    Task OpenAsync(CancellationToken cancellationToken);

    /// <summary>Starts a write transaction on the writer connection, reconnecting first when it was discarded.</summary>
    Task<IAuditWriteTransaction> BeginWriteAsync();

    /// <summary>Drops the writer connection after a failure, so the next transaction connects afresh.</summary>
    ValueTask DiscardWriterAsync();

    /// <summary>Whether <paramref name="exception"/> is the database or its file failing (rather than a bug).</summary>
    bool IsStoreFailure(Exception exception);

    /// <summary>Called after a read failed with a store failure (a server backend drops its idle pooled connections).</summary>
    void OnReadFailure(Exception exception);

    /// <summary>One record with its stages, or null.</summary>
    Task<AuditRecord?> GetAsync(Guid id, CancellationToken cancellationToken);

    /// <summary>
    /// The records matching <paramref name="query"/> newest first (evaluated_at, then id), after <paramref name="cursor"/>,
    /// at most <see cref="AuditQuery.Limit"/> (all when null). The query is already validated.
    /// </summary>
    IAsyncEnumerable<AuditRecord> QueryAsync(AuditQuery query, AuditCursor? cursor, CancellationToken cancellationToken);

    /// <summary>
    /// As <see cref="QueryAsync"/> with the limit <paramref name="limit"/>, but only each record's id, time and stage
    /// summaries: never the request or response columns.
    /// </summary>
    IAsyncEnumerable<AuditStageHistoryEntry> QueryStagesAsync(AuditQuery query, AuditCursor? cursor, int limit, CancellationToken cancellationToken);

    /// <summary>Records in the chain's first run evaluated before <paramref name="before"/>.</summary>
    Task<long> CountBeforeAsync(DateTimeOffset before, CancellationToken cancellationToken);

    /// <summary>The stored chain head (sequence -1 when its row is missing).</summary>
    Task<AuditChainHead> ReadChainHeadAsync(CancellationToken cancellationToken);

    /// <summary>A read snapshot of the grants, the head and the records in sequence order, for verification.</summary>
    Task<IAuditChainSnapshot> OpenChainSnapshotAsync(CancellationToken cancellationToken);

    /// <summary>Free space (when visible) and bytes used.</summary>
    Task<AuditStorage> GetStorageAsync(CancellationToken cancellationToken);

    /// <summary>The schema version and the guards that are missing or altered.</summary>
    Task<(int Version, IReadOnlyList<string> MissingGuards)> InspectAsync(CancellationToken cancellationToken);

    /// <summary>The archived canonical rule set stored under <paramref name="digest"/>, or null.</summary>
    Task<byte[]?> GetRuleSetAsync(string digest, CancellationToken cancellationToken);
}

/// <summary>
/// One transaction on the writer connection. Disposing it without <see cref="CommitAsync"/> rolls it back. Operations run
/// in the order the store calls them; the database's guards (triggers, constraints) check each.
/// </summary>
internal interface IAuditWriteTransaction : IAsyncDisposable
{
    /// <summary>Reads the chain head, locked for the rest of the transaction, so concurrent writers cannot fork the chain.</summary>
    /// <exception cref="InvalidOperationException">The head row is missing.</exception>
    Task<(long Sequence, string Hash)> LockChainHeadAsync();

    /// <summary>Inserts records whose <see cref="AuditRecord.Sequence"/>, previous hash and record hash are set, in order.</summary>
    Task InsertAsync(IReadOnlyList<AuditRecord> chained);

    /// <summary>The newest grant's anchor and hash, or the genesis when there is none.</summary>
    Task<(long AnchorSequence, string AnchorHash, string GrantHash)> ReadLastGrantAsync();

    /// <summary>The last sequence of the chain's first run evaluated before <paramref name="deleteBefore"/> (0 when none).</summary>
    Task<long> RetentionPrefixEndAsync(DateTimeOffset deleteBefore);

    /// <summary>The record hash stored at <paramref name="sequence"/>.</summary>
    Task<string> RecordHashAtAsync(long sequence);

    /// <summary>Inserts a grant (its <see cref="StoredGrant.Id"/> is ignored) and returns the id the database gave it.</summary>
    Task<long> InsertGrantAsync(StoredGrant grant);

    /// <summary>Deletes the records with sequence at or below <paramref name="anchorSequence"/>; returns how many.</summary>
    Task<long> DeleteThroughAsync(long anchorSequence);

    /// <summary>Stores a rule set unless one is already stored under its digest; returns whether it inserted.</summary>
    Task<bool> InsertRuleSetIfMissingAsync(string digest, byte[] canonical);

    /// <summary>Rewrites the health probe row and proves the database can still allocate room (rolled back).</summary>
    Task ProbeAsync();

    /// <summary>Commits: returns only once the commit is durable.</summary>
    Task CommitAsync();
}

/// <summary>One consistent read of the chain for verification. Disposing it ends the read transaction.</summary>
internal interface IAuditChainSnapshot : IAsyncDisposable
{
    /// <summary>Every retention grant in id order.</summary>
    IReadOnlyList<StoredGrant> Grants { get; }

    /// <summary>The stored head.</summary>
    AuditChainHead Head { get; }

    /// <summary>Every record with its stages, in sequence order (records without a sequence first), streamed.</summary>
    IAsyncEnumerable<AuditRecord> ReadRecordsAsync(CancellationToken cancellationToken);
}
