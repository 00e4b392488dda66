using System.Diagnostics;
using System.Runtime.CompilerServices;
using System.Threading.Channels;
using DischargeGuard.Audit.Postgres;
using DischargeGuard.Audit.Sqlite;

namespace DischargeGuard.Audit;

/// <summary>
/// The audit engine every database shares: validation, one writer that commits queued appends in groups, the hash chain,
/// durability before an append completes, retention, the rule-set archive, health and statistics. A database supplies
/// only its SQL and connections (<see cref="SqliteAuditStore"/>, <see cref="PostgresAuditStore"/>).
/// </summary>
/// <remarks>
/// <para>
/// Every <see cref="AppendAsync"/> validates and copies its record, queues it and waits. The single writer takes whatever is
/// queued (up to the batch size), and in one transaction locks the chain head, computes each record's chained hash,
/// inserts the batch and commits; only after the commit has returned does it complete the waiting calls. If anything
/// fails, the transaction is rolled back whole, every call of the batch throws <see cref="AuditStoreUnavailableException"/>,
/// and the writer drops its connection so the next batch reconnects: the store recovers without a restart.
/// </para>
/// <para>
/// Retention runs, rule-set archiving, health probes and test hooks are queued like appends and run on the writer between
/// batches, so the database sees one writer per store.
/// </para>
/// </remarks>
public abstract class AuditStore : IAuditStore
{
    private const int MaxTextLength = 256;

    /// <summary>Largest canonical rule set the archive takes, bytes.</summary>
    public const int MaxRuleSetBytes = 16 * 1024 * 1024;

    private readonly IAuditBackend _backend;
    private readonly int _maxBatchSize;
    private readonly Channel<AuditWorkItem> _queue;
    private readonly CancellationTokenSource _closing = new();
    private readonly Lock _stateLock = new();
    private readonly AuditMetrics _metrics;
    private Task _writerLoop = Task.CompletedTask;
    private int _disposed;

    // Guarded by _stateLock.
    private AuditStoreStatistics _statistics;
    private string? _lastError;
    private DateTimeOffset? _lastErrorAt;
    private DateTimeOffset? _lastCommitAt;

    private protected AuditStore(IAuditBackend backend, int maxBatchSize, int queueCapacity, System.Diagnostics.Metrics.IMeterFactory? meterFactory)
    {
        _backend = backend;
        _maxBatchSize = maxBatchSize;
        _metrics = new AuditMetrics(meterFactory, backend.Kind);
        _queue = Channel.CreateBounded<AuditWorkItem>(new BoundedChannelOptions(queueCapacity)
        {
            SingleReader = true,
            FullMode = BoundedChannelFullMode.Wait,
        });
    }

    /// <inheritdoc />
    public AuditStoreStatistics Statistics
    {
        get
        {
            lock (_stateLock)
            {
                return _statistics;
            }
        }
    }

    internal IAuditBackend Backend => _backend;

    /// <summary>
    /// Opens the store <paramref name="settings"/> name (SQLite or PostgreSQL): the one place a host chooses the backend.
    /// </summary>
    /// <param name="settings">The provider and its settings, as in the hosts' <c>Audit</c> configuration section.</param>
    /// <param name="cancellationToken">Cancels the open.</param>
    /// <returns>The open store; dispose it on shutdown.</returns>
    /// <exception cref="ArgumentException">The provider is unknown or its settings are missing or out of range.</exception>
    /// <exception cref="AuditStoreUnavailableException">The store could not be opened or migrated.</exception>
    public static async Task<AuditStore> OpenAsync(AuditStoreSettings settings, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(settings);
        switch (settings.Provider)
        {
            case AuditStoreSettings.Sqlite:
                if (string.IsNullOrWhiteSpace(settings.SqlitePath))
                {
                    throw new ArgumentException("Audit:SqlitePath must be set when Audit:Provider is 'sqlite'.", nameof(settings));
                }

                return await SqliteAuditStore.OpenAsync(
                    new AuditStoreOptions { SqlitePath = settings.SqlitePath, MaxBatchSize = settings.MaxBatchSize, MeterFactory = settings.MeterFactory },
                    cancellationToken).ConfigureAwait(false);
            case AuditStoreSettings.PostgreSql:
                if (string.IsNullOrWhiteSpace(settings.ConnectionString))
                {
                    throw new ArgumentException("Audit:ConnectionString must be set when Audit:Provider is 'postgresql'.", nameof(settings));
                }

                return await PostgresAuditStore.OpenAsync(
                    new PostgresAuditStoreOptions { ConnectionString = settings.ConnectionString, MaxBatchSize = settings.MaxBatchSize, MeterFactory = settings.MeterFactory },
                    cancellationToken).ConfigureAwait(false);
            default:
                throw new ArgumentException($"Audit:Provider must be '{AuditStoreSettings.Sqlite}' or '{AuditStoreSettings.PostgreSql}', not '{settings.Provider}'.", nameof(settings));
        }
    }

    /// <summary>Opens the backend (connect, migrate, check guards) and starts the writer; on failure disposes the backend.</summary>
    private protected async Task StartAsync(CancellationToken cancellationToken)
    {
        try
        {
            await _backend.OpenAsync(cancellationToken).ConfigureAwait(false);
        }
        catch (Exception e) when (IsFailure(e) || e is InvalidOperationException)
        {
            await _backend.DiscardWriterAsync().ConfigureAwait(false);
            await _backend.DisposeAsync().ConfigureAwait(false);
            throw new AuditStoreUnavailableException($"The audit store could not be opened: {e.Message}", e);
        }

        _writerLoop = Task.Run(RunWriterAsync, CancellationToken.None);
    }

    /// <inheritdoc />
    public async ValueTask AppendAsync(AuditRecord record, CancellationToken cancellationToken)
    {
        var item = AuditWorkItem.ForAppend(Prepare(record), cancellationToken);
        cancellationToken.ThrowIfCancellationRequested();
        ThrowIfDisposed();
        await item.EnqueueAndWaitAsync(_queue.Writer, cancellationToken).ConfigureAwait(false);
    }

    /// <inheritdoc />
    public async Task<AuditRecord?> GetAsync(Guid id, CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            return await _backend.GetAsync(id, cancellationToken).ConfigureAwait(false);
        }
        catch (Exception e) when (IsFailure(e))
        {
            throw ReadFailed(e);
        }
    }

    /// <inheritdoc />
    public IAsyncEnumerable<AuditRecord> QueryAsync(AuditQuery query, CancellationToken cancellationToken)
    {
        // Validated before enumeration starts, so a bad cursor fails at the call, not at the first MoveNext.
        var cursor = ValidateQuery(query);
        return GuardAsync(() => _backend.QueryAsync(query, cursor, cancellationToken), cancellationToken);
    }

    /// <inheritdoc />
    public async Task<IReadOnlyList<AuditStageHistoryEntry>> GetStageHistoryAsync(AuditQuery query, CancellationToken cancellationToken)
    {
        var cursor = ValidateQuery(query);
        if (string.IsNullOrEmpty(query.Asset))
        {
            throw new ArgumentException("A stage history is for one asset: set Asset.", nameof(query));
        }

        var limit = query.Limit ?? AuditQuery.DefaultPageSize;
        if (limit > AuditQuery.MaxPageSize)
        {
            throw new ArgumentOutOfRangeException(nameof(query), limit, $"The limit must be 1 to {AuditQuery.MaxPageSize}.");
        }

        var entries = new List<AuditStageHistoryEntry>(limit);
        await foreach (var entry in GuardAsync(() => _backend.QueryStagesAsync(query, cursor, limit, cancellationToken), cancellationToken).ConfigureAwait(false))
        {
            entries.Add(entry);
        }

        return entries;
    }

    /// <inheritdoc />
    public async Task<long> CountBeforeAsync(DateTimeOffset before, CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            return await _backend.CountBeforeAsync(before, cancellationToken).ConfigureAwait(false);
        }
        catch (Exception e) when (IsFailure(e))
        {
            throw ReadFailed(e);
        }
    }

    /// <inheritdoc />
    public async Task<RetentionResult> ApplyRetentionAsync(RetentionGrant grant, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(grant);
        grant.Validate();
        ThrowIfDisposed();
        RetentionResult? result = null;

        // On the writer, between batches: the grant and the delete are one transaction, so either both are stored or neither.
        var item = AuditWorkItem.ForControl(
            async () =>
            {
                var transaction = await _backend.BeginWriteAsync().ConfigureAwait(false);
                await using (transaction.ConfigureAwait(false))
                {
                    // Holding the head too, so retention runs and appends of several stores on one database take turns.
                    await transaction.LockChainHeadAsync().ConfigureAwait(false);
                    var grantedAt = AuditChain.ToMicroseconds(grant.GrantedAt);
                    var deleteBefore = AuditChain.ToMicroseconds(grant.DeleteBefore);

                    // Retention removes the longest run at the start of the chain evaluated before the cut-off, so the rest
                    // stays verifiable from the last removed record (the anchor the grant stores).
                    var (lastAnchorSeq, lastAnchorHash, lastGrantHash) = await transaction.ReadLastGrantAsync().ConfigureAwait(false);
                    var prefixEnd = await transaction.RetentionPrefixEndAsync(deleteBefore).ConfigureAwait(false);
                    var (anchorSeq, anchorHash) = (lastAnchorSeq, lastAnchorHash);
                    if (prefixEnd > lastAnchorSeq)
                    {
                        (anchorSeq, anchorHash) = (prefixEnd, await transaction.RecordHashAtAsync(prefixEnd).ConfigureAwait(false));
                    }

                    var grantHash = AuditChain.GrantHash(lastGrantHash, grantedAt, deleteBefore, grant.GrantedBy, grant.Reason, anchorSeq, anchorHash);
                    var grantId = await transaction.InsertGrantAsync(
                        new StoredGrant(0, grantedAt, deleteBefore, grant.GrantedBy, grant.Reason, anchorSeq, anchorHash, lastGrantHash, grantHash)).ConfigureAwait(false);
                    var deleted = await transaction.DeleteThroughAsync(anchorSeq).ConfigureAwait(false);
                    await transaction.CommitAsync().ConfigureAwait(false);
                    result = new RetentionResult(grantId, deleted);
                }
            },
            cancellationToken);
        await item.EnqueueAndWaitAsync(_queue.Writer, cancellationToken).ConfigureAwait(false);
        return result!;
    }

    /// <inheritdoc />
    public async ValueTask ArchiveRuleSetAsync(string digest, ReadOnlyMemory<byte> canonical, CancellationToken cancellationToken)
    {
        if (!AuditDigest.IsSha256Hex(digest))
        {
            throw new ArgumentException("The rule-set digest must be 64 lower-case hex digits.", nameof(digest));
        }

        if (canonical.Length is 0 or > MaxRuleSetBytes)
        {
            throw new ArgumentException($"The canonical rule set must be 1 to {MaxRuleSetBytes} bytes.", nameof(canonical));
        }

        // The digest the rules project takes (CanonicalForm.Digest): SHA-256 of the canonical UTF-8 bytes, lower-case hex.
        if (!string.Equals(AuditDigest.Sha256Hex(canonical.Span), digest, StringComparison.Ordinal))
        {
            throw new ArgumentException("The digest is not the SHA-256 of the canonical bytes: the rule set was not archived.", nameof(canonical));
        }

        cancellationToken.ThrowIfCancellationRequested();
        ThrowIfDisposed();

        // Archived already (the usual case after the first evaluation of a rule set): a read, no write.
        if (await GetRuleSetAsync(digest, cancellationToken).ConfigureAwait(false) is not null)
        {
            return;
        }

        var copy = canonical.ToArray();
        var item = AuditWorkItem.ForControl(
            async () =>
            {
                var transaction = await _backend.BeginWriteAsync().ConfigureAwait(false);
                await using (transaction.ConfigureAwait(false))
                {
                    await transaction.InsertRuleSetIfMissingAsync(digest, copy).ConfigureAwait(false);
                    await transaction.CommitAsync().ConfigureAwait(false);
                }
            },
            cancellationToken);
        await item.EnqueueAndWaitAsync(_queue.Writer, cancellationToken).ConfigureAwait(false);
    }

    /// <inheritdoc />
    public async Task<byte[]?> GetRuleSetAsync(string digest, CancellationToken cancellationToken)
    {
        if (!AuditDigest.IsSha256Hex(digest))
        {
            throw new ArgumentException("The rule-set digest must be 64 lower-case hex digits.", nameof(digest));
        }

        ThrowIfDisposed();
        byte[]? canonical;
        try
        {
            canonical = await _backend.GetRuleSetAsync(digest, cancellationToken).ConfigureAwait(false);
        }
        catch (Exception e) when (IsFailure(e))
        {
            throw ReadFailed(e);
        }

        if (canonical is not null && !string.Equals(AuditDigest.Sha256Hex(canonical), digest, StringComparison.Ordinal))
        {
            RecordFailure($"The archived rule set {digest} does not match its digest.");
            throw new AuditStoreUnavailableException($"The archived rule set {digest} does not match its digest: the archive was changed.");
        }

        return canonical;
    }

    /// <inheritdoc />
    public async Task<AuditChainHead> GetChainHeadAsync(CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            return await _backend.ReadChainHeadAsync(cancellationToken).ConfigureAwait(false);
        }
        catch (Exception e) when (IsFailure(e))
        {
            throw ReadFailed(e);
        }
    }

    /// <inheritdoc />
    public async Task<AuditChainVerification> VerifyChainAsync(CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            // One read snapshot, so the grants, the rows and the head agree while appends go on.
            var snapshot = await _backend.OpenChainSnapshotAsync(cancellationToken).ConfigureAwait(false);
            await using (snapshot.ConfigureAwait(false))
            {
                return await AuditChain.VerifyAsync(snapshot.Grants, snapshot.ReadRecordsAsync(cancellationToken), snapshot.Head, cancellationToken).ConfigureAwait(false);
            }
        }
        catch (Exception e) when (IsFailure(e))
        {
            throw ReadFailed(e);
        }
    }

    /// <inheritdoc />
    public async Task<AuditStorage> GetStorageAsync(CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            return await _backend.GetStorageAsync(cancellationToken).ConfigureAwait(false);
        }
        catch (Exception e) when (IsFailure(e) || e is ArgumentException)
        {
            _backend.OnReadFailure(e);
            RecordFailure(e.Message);
            throw new AuditStoreUnavailableException($"The room of the audit store could not be read: {e.Message}", e);
        }
    }

    /// <inheritdoc />
    public async Task<AuditHealth> CheckHealthAsync(CancellationToken cancellationToken)
    {
        if (Volatile.Read(ref _disposed) != 0)
        {
            return new AuditHealth(false, false, "The audit store is closed.", null, LastCommitAt());
        }

        var reachable = false;
        IReadOnlyList<string> missingGuards = [];
        try
        {
            var (version, missing) = await _backend.InspectAsync(cancellationToken).ConfigureAwait(false);
            reachable = version == _backend.LatestSchemaVersion;
            if (!reachable)
            {
                RecordFailure(FormattableString.Invariant($"The schema is at version {version}, expected {_backend.LatestSchemaVersion}."));
            }
            else if (missing.Count > 0)
            {
                missingGuards = missing;
                RecordFailure("The audit database's guards are missing or altered: " + string.Join(", ", missing) + ".");
            }
        }
        catch (Exception e) when (IsFailure(e))
        {
            _backend.OnReadFailure(e);
            RecordFailure(e.Message);
        }

        var writable = false;
        if (reachable)
        {
            var probe = AuditWorkItem.ForControl(ProbeWriteAsync, cancellationToken);
            try
            {
                await _queue.Writer.WriteAsync(probe, cancellationToken).ConfigureAwait(false);
                await probe.Completion.Task.WaitAsync(cancellationToken).ConfigureAwait(false);
                writable = true;
            }
            catch (ChannelClosedException)
            {
                RecordFailure("The audit store is closed.");
            }
            catch (AuditStoreUnavailableException)
            {
                // The probe recorded the cause as the last error.
            }
        }

        lock (_stateLock)
        {
            return new AuditHealth(reachable, writable, _lastError, _lastErrorAt, _lastCommitAt) { MissingGuards = missingGuards };
        }
    }

    /// <summary>
    /// Stops taking appends, lets the batch being written finish, fails every append still queued with
    /// <see cref="AuditStoreUnavailableException"/>, and closes the connections.
    /// </summary>
    /// <returns>A task that completes when the database is closed.</returns>
    public async ValueTask DisposeAsync()
    {
        if (Interlocked.Exchange(ref _disposed, 1) != 0)
        {
            return;
        }

        _queue.Writer.TryComplete();
        await _closing.CancelAsync().ConfigureAwait(false);
        await _writerLoop.ConfigureAwait(false);
        await _backend.DiscardWriterAsync().ConfigureAwait(false);
        await _backend.DisposeAsync().ConfigureAwait(false);
        _closing.Dispose();
        GC.SuppressFinalize(this);
    }

    /// <summary>Runs <paramref name="work"/> on the writer between batches and waits for it (test hooks, backend controls).</summary>
    private protected async Task RunOnWriterAsync(Func<Task> work)
    {
        var item = AuditWorkItem.ForControl(work, CancellationToken.None);
        await _queue.Writer.WriteAsync(item).ConfigureAwait(false);
        await item.Completion.Task.ConfigureAwait(false);
    }

    /// <summary>
    /// Holds the writer until <paramref name="release"/> completes, so tests can queue appends that must then
    /// be taken as one batch.
    /// </summary>
    /// <param name="release">Completes when the writer may go on.</param>
    /// <returns>A task that completes once the writer is held.</returns>
    internal async Task HoldWriterForTestingAsync(Task release)
    {
        var held = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        var item = AuditWorkItem.ForControl(
            async () =>
            {
                held.SetResult();
                await release.ConfigureAwait(false);
            },
            CancellationToken.None);
        await _queue.Writer.WriteAsync(item).ConfigureAwait(false);
        await held.Task.ConfigureAwait(false);
    }

    /// <summary>Validates a record and returns the copy the store writes: bytes copied, hashes computed, chain fields cleared.</summary>
    /// <exception cref="ArgumentException">The record is malformed.</exception>
    internal static AuditRecord Prepare(AuditRecord record)
    {
        ArgumentNullException.ThrowIfNull(record);
        if (record.Id.Version != 7)
        {
            throw new ArgumentException("The record id must be a version 7 UUID (Guid.CreateVersion7).", nameof(record));
        }

        RequireText(record.Caller, nameof(AuditRecord.Caller));
        RequireText(record.Asset, nameof(AuditRecord.Asset));
        RequireText(record.EngineVersion, nameof(AuditRecord.EngineVersion));
        if (record.SiteId is not null)
        {
            RequireText(record.SiteId, nameof(AuditRecord.SiteId));
        }

        if (!AuditVerdict.IsKnown(record.Verdict))
        {
            throw new ArgumentOutOfRangeException(nameof(record), record.Verdict, "The verdict must be pass, review or fail.");
        }

        if (!AuditDigest.IsSha256Hex(record.RuleDigest))
        {
            throw new ArgumentException("The rule digest must be 64 lower-case hex digits.", nameof(record));
        }

        if (record.Request is null || record.Response is null)
        {
            throw new ArgumentException("The record must carry its request and response bytes.", nameof(record));
        }

        AuditStageCodec.Validate(record);

        // Copy first, then hash the copy: what is hashed is exactly what is written.
        var request = record.Request.ToArray();
        var response = record.Response.ToArray();
        var requestSha256 = AuditDigest.Sha256Hex(request);
        var responseSha256 = AuditDigest.Sha256Hex(response);
        if (record.RequestSha256 is not null && !string.Equals(record.RequestSha256, requestSha256, StringComparison.Ordinal))
        {
            throw new ArgumentException("The record's request hash does not match its request bytes.", nameof(record));
        }

        if (record.ResponseSha256 is not null && !string.Equals(record.ResponseSha256, responseSha256, StringComparison.Ordinal))
        {
            throw new ArgumentException("The record's response hash does not match its response bytes.", nameof(record));
        }

        return record with
        {
            EvaluatedAt = record.EvaluatedAt.ToUniversalTime(),
            Request = request,
            Response = response,
            RequestSha256 = requestSha256,
            ResponseSha256 = responseSha256,
            Stages = [.. record.Stages],
            Sequence = null,
            PreviousHash = null,
            RecordHash = null,
        };

        static void RequireText(string? value, string name)
        {
            if (string.IsNullOrWhiteSpace(value) || value.Length > MaxTextLength)
            {
                throw new ArgumentException($"{name} must be non-blank text of at most {MaxTextLength} characters.", nameof(record));
            }
        }
    }

    /// <summary>Checks a query's limit and verdict and parses its cursor.</summary>
    /// <exception cref="ArgumentException">The cursor is not a token this store issued, or the limit or verdict is out of range.</exception>
    internal static AuditCursor? ValidateQuery(AuditQuery query)
    {
        ArgumentNullException.ThrowIfNull(query);
        if (query.Limit is < 1)
        {
            throw new ArgumentOutOfRangeException(nameof(query), query.Limit, "The limit must be positive.");
        }

        if (query.Verdict is not null && !AuditVerdict.IsKnown(query.Verdict))
        {
            throw new ArgumentOutOfRangeException(nameof(query), query.Verdict, "The verdict must be pass, review or fail.");
        }

        if (query.Cursor is null)
        {
            return null;
        }

        return AuditCursor.TryParse(query.Cursor, out var cursor)
            ? cursor
            : throw new ArgumentException("The cursor is not a token issued by the audit store.", nameof(query));
    }

    private async IAsyncEnumerable<T> GuardAsync<T>(Func<IAsyncEnumerable<T>> source, [EnumeratorCancellation] CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        IAsyncEnumerator<T> enumerator;
        try
        {
            enumerator = source().GetAsyncEnumerator(cancellationToken);
        }
        catch (Exception e) when (IsFailure(e))
        {
            throw ReadFailed(e);
        }

        await using (enumerator.ConfigureAwait(false))
        {
            while (true)
            {
                bool more;
                try
                {
                    more = await enumerator.MoveNextAsync().ConfigureAwait(false);
                }
                catch (Exception e) when (IsFailure(e))
                {
                    throw ReadFailed(e);
                }

                if (!more)
                {
                    break;
                }

                yield return enumerator.Current;
            }
        }
    }

    private async Task RunWriterAsync()
    {
        var reader = _queue.Reader;
        var batch = new List<AuditWorkItem>(_maxBatchSize);
        try
        {
            while (await reader.WaitToReadAsync().ConfigureAwait(false))
            {
                if (_closing.IsCancellationRequested)
                {
                    break;
                }

                AuditWorkItem? control = null;
                while (batch.Count < _maxBatchSize && reader.TryRead(out var item))
                {
                    if (item.Control is not null)
                    {
                        // Appends queued before it are committed first; those after it wait for the next round.
                        control = item;
                        break;
                    }

                    if (item.CancellationToken.IsCancellationRequested)
                    {
                        item.Completion.TrySetCanceled(item.CancellationToken);
                        continue;
                    }

                    batch.Add(item);
                }

                if (batch.Count > 0)
                {
                    await CommitBatchAsync(batch).ConfigureAwait(false);
                    batch.Clear();
                }

                if (control is not null)
                {
                    await RunControlAsync(control).ConfigureAwait(false);
                }
            }
        }
        finally
        {
            while (reader.TryRead(out var item))
            {
                item.Completion.TrySetException(AuditWorkItem.Closed(null));
            }
        }
    }

    private async Task CommitBatchAsync(List<AuditWorkItem> batch)
    {
        var startedAt = Stopwatch.GetTimestamp();
        try
        {
            // Not cancellable by any caller: once taken, a batch is committed or rolled back whole.
            var transaction = await _backend.BeginWriteAsync().ConfigureAwait(false);
            await using (transaction.ConfigureAwait(false))
            {
                // The head is read under the write lock, so the chain cannot fork; the database's trigger checks each link.
                var (sequence, previous) = await transaction.LockChainHeadAsync().ConfigureAwait(false);
                var chained = new AuditRecord[batch.Count];
                for (var i = 0; i < batch.Count; i++)
                {
                    sequence++;
                    var record = batch[i].Record!;
                    var hash = AuditChain.RecordHash(sequence, previous, record);
                    chained[i] = record with { Sequence = sequence, PreviousHash = previous, RecordHash = hash };
                    previous = hash;
                }

                await transaction.InsertAsync(chained).ConfigureAwait(false);

                // Completion waits for this: the backend returns only once the commit is durable.
                await transaction.CommitAsync().ConfigureAwait(false);
            }
        }
#pragma warning disable CA1031 // Whatever failed, the batch is not stored and its callers must hear so; the loop goes on.
        catch (Exception e)
#pragma warning restore CA1031
        {
            _metrics.Record(batch.Count, startedAt, committed: false);
            await _backend.DiscardWriterAsync().ConfigureAwait(false);
            RecordFailure(e.Message, failedBatch: true);
            foreach (var item in batch)
            {
                item.Completion.TrySetException(new AuditStoreUnavailableException(
                    $"The evaluation was not stored: the audit batch of {batch.Count} was rolled back ({e.Message}).", e));
            }

            return;
        }

        _metrics.Record(batch.Count, startedAt, committed: true);
        lock (_stateLock)
        {
            var s = _statistics;
            _statistics = s with
            {
                Batches = s.Batches + 1,
                Records = s.Records + batch.Count,
                LastBatchSize = batch.Count,
                LargestBatchSize = Math.Max(s.LargestBatchSize, batch.Count),
            };
            _lastCommitAt = DateTimeOffset.UtcNow;
        }

        foreach (var item in batch)
        {
            item.Completion.TrySetResult();
        }
    }

    private async Task RunControlAsync(AuditWorkItem control)
    {
        try
        {
            await control.Control!().ConfigureAwait(false);
            control.Completion.TrySetResult();
        }
#pragma warning disable CA1031 // A failed retention run, archive, probe or test hook is reported to its caller; the loop goes on.
        catch (Exception e)
#pragma warning restore CA1031
        {
            await _backend.DiscardWriterAsync().ConfigureAwait(false);
            RecordFailure(e.Message);
            control.Completion.TrySetException(new AuditStoreUnavailableException($"The audit store is not writable: {e.Message}", e));
        }
    }

    private async Task ProbeWriteAsync()
    {
        var transaction = await _backend.BeginWriteAsync().ConfigureAwait(false);
        await using (transaction.ConfigureAwait(false))
        {
            await transaction.ProbeAsync().ConfigureAwait(false);
            await transaction.CommitAsync().ConfigureAwait(false);
        }
    }

    // The provider's failures, and a stored value this store cannot read back (a damaged row).
    private bool IsFailure(Exception e) => e is AuditStoreUnavailableException || _backend.IsStoreFailure(e);

    private void ThrowIfDisposed()
    {
        if (Volatile.Read(ref _disposed) != 0)
        {
            throw AuditWorkItem.Closed(null);
        }
    }

    private AuditStoreUnavailableException ReadFailed(Exception e)
    {
        _backend.OnReadFailure(e);
        RecordFailure(e.Message);
        return e as AuditStoreUnavailableException ?? new AuditStoreUnavailableException($"The audit store could not be read: {e.Message}", e);
    }

    private void RecordFailure(string message, bool failedBatch = false)
    {
        lock (_stateLock)
        {
            _lastError = message;
            _lastErrorAt = DateTimeOffset.UtcNow;
            if (failedBatch)
            {
                _statistics = _statistics with { FailedBatches = _statistics.FailedBatches + 1 };
            }
        }
    }

    private DateTimeOffset? LastCommitAt()
    {
        lock (_stateLock)
        {
            return _lastCommitAt;
        }
    }
}
