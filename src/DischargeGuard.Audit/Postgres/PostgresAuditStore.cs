using System.Globalization;
using System.Runtime.CompilerServices;
using System.Text;
using System.Threading.Channels;
using DischargeGuard.Audit.Sqlite;
using Npgsql;
using NpgsqlTypes;

namespace DischargeGuard.Audit.Postgres;

/// <summary>
/// The audit store on PostgreSQL: one writer that commits queued appends in groups (binary COPY in one
/// transaction), append-only triggers, and a schema brought up to date on open under an advisory lock.
/// </summary>
/// <remarks>
/// <para>
/// The contract is the one <see cref="SqliteAuditStore"/> keeps: every <see cref="AppendAsync"/> queues its record
/// and waits; the single writer takes whatever is queued (up to <see cref="PostgresAuditStoreOptions.MaxBatchSize"/>),
/// writes it in one transaction, and completes the waiting calls only after COMMIT has returned. If anything fails,
/// every call of the batch throws <see cref="AuditStoreUnavailableException"/>, the writer drops its connection, and the
/// next batch opens a new one, so the store recovers without a restart once the server is back.
/// </para>
/// <para>
/// Durability rests on the server's <c>synchronous_commit</c> (default <c>on</c>: COMMIT returns after the WAL is
/// flushed) and <c>fsync</c>. The writer refuses to connect to a server that reports either as <c>off</c>.
/// </para>
/// <para>
/// PostgreSQL keeps microseconds; the store keeps the 100 ns tick of <see cref="DateTimeOffset"/> in
/// <c>evaluated_at_tick</c> (0 to 9), so a record reads back to the tick and sorts exactly as in SQLite.
/// </para>
/// </remarks>
public sealed class PostgresAuditStore : IAuditStore
{
    /// <summary>The columns every schema version has, in <see cref="ReadRecord"/> order.</summary>
    internal const string BaseColumns =
        "id, evaluated_at, evaluated_at_tick, caller, asset, site_id, verdict, rule_digest, engine_version, request, request_sha256, response, response_sha256, replay_of";

    private const string Columns = BaseColumns + ", seq, prev_hash, record_hash";

    private const string CopySql = "COPY evaluations (" + Columns + ") FROM STDIN (FORMAT BINARY)";

    private readonly PostgresAuditStoreOptions _options;
    private readonly NpgsqlDataSource _writerSource;
    private readonly NpgsqlDataSource _readerSource;
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

    // Touched only by the writer loop (and by OpenAsync before the loop starts).
    private NpgsqlConnection? _writer;

    private PostgresAuditStore(PostgresAuditStoreOptions options)
    {
        _options = options;
        _metrics = new AuditMetrics(options.MeterFactory, "postgresql");
        var seconds = (int)Math.Ceiling(options.CommandTimeout.TotalSeconds);
        var builder = new NpgsqlConnectionStringBuilder(options.ConnectionString)
        {
            CommandTimeout = seconds,
            Timeout = seconds,
        };

        // The writer's connection lives as long as the store; one dropped after a failure must really close.
        var writer = new NpgsqlConnectionStringBuilder(builder.ConnectionString) { Pooling = false, ApplicationName = "dischargeguard-audit-writer" };
        var reader = new NpgsqlConnectionStringBuilder(builder.ConnectionString) { Pooling = true, ApplicationName = "dischargeguard-audit-reader" };
        _writerSource = NpgsqlDataSource.Create(writer.ConnectionString);
        _readerSource = NpgsqlDataSource.Create(reader.ConnectionString);
        _queue = Channel.CreateBounded<AuditWorkItem>(new BoundedChannelOptions(options.QueueCapacity)
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

    /// <summary>Connects, applies every pending migration (under the advisory lock), and starts the writer.</summary>
    /// <param name="options">Where the server is and how the writer batches.</param>
    /// <param name="cancellationToken">Cancels the open.</param>
    /// <returns>The open store; dispose it to stop the writer and close its connections.</returns>
    /// <exception cref="ArgumentException">An option is out of range.</exception>
    /// <exception cref="AuditStoreUnavailableException">
    /// The server could not be reached or migrated, its schema is newer than this build, or it does not commit durably.
    /// </exception>
    public static async Task<PostgresAuditStore> OpenAsync(PostgresAuditStoreOptions options, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(options);
        options.Validate();
        var store = new PostgresAuditStore(options);
        try
        {
            await store.EnsureWriterAsync(migrate: true, cancellationToken).ConfigureAwait(false);
        }
        catch (Exception e) when (e is NpgsqlException or InvalidOperationException or TimeoutException)
        {
            await store.DiscardWriterAsync().ConfigureAwait(false);
            await store._writerSource.DisposeAsync().ConfigureAwait(false);
            await store._readerSource.DisposeAsync().ConfigureAwait(false);
            throw new AuditStoreUnavailableException($"The audit store could not be opened: {e.Message}", e);
        }

        store._writerLoop = Task.Run(store.RunWriterAsync, CancellationToken.None);
        return store;
    }

    /// <inheritdoc />
    public async ValueTask AppendAsync(AuditRecord record, CancellationToken cancellationToken)
    {
        var item = AuditWorkItem.ForAppend(SqliteAuditStore.Prepare(record), cancellationToken);
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
            var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
            await using (connection.ConfigureAwait(false))
            {
                using var command = new NpgsqlCommand("SELECT " + Columns + " FROM evaluations WHERE id = @id;", connection);
                command.Parameters.Add(new NpgsqlParameter<Guid>("id", NpgsqlDbType.Uuid) { TypedValue = id });
                var reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
                await using (reader.ConfigureAwait(false))
                {
                    return await reader.ReadAsync(cancellationToken).ConfigureAwait(false) ? ReadRecord(reader) : null;
                }
            }
        }
        catch (NpgsqlException e)
        {
            throw ReadFailed(e);
        }
    }

    /// <inheritdoc />
    public IAsyncEnumerable<AuditRecord> QueryAsync(AuditQuery query, CancellationToken cancellationToken)
    {
        // Build (and so validate) before enumeration starts, so a bad cursor fails at the call, not at the first MoveNext.
        var plan = QueryPlan.Build(query);
        return EnumerateAsync(plan, cancellationToken);
    }

    /// <inheritdoc />
    public async Task<long> CountBeforeAsync(DateTimeOffset before, CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
            await using (connection.ConfigureAwait(false))
            {
                using var command = connection.CreateCommand();
                command.CommandText = "SELECT count(*) FROM evaluations WHERE seq < coalesce((SELECT min(seq) FROM evaluations WHERE evaluated_at >= @before), (SELECT max(seq) + 1 FROM evaluations), 0);";
                command.Parameters.Add(new NpgsqlParameter("before", NpgsqlTypes.NpgsqlDbType.TimestampTz) { Value = before.ToUniversalTime() });
                return Convert.ToInt64(await command.ExecuteScalarAsync(cancellationToken).ConfigureAwait(false), System.Globalization.CultureInfo.InvariantCulture);
            }
        }
        catch (NpgsqlException e)
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

        // On the writer connection, between batches: the grant and the delete commit together or not at all.
        var item = AuditWorkItem.ForControl(
            async () =>
            {
                var connection = await EnsureWriterAsync(migrate: false, CancellationToken.None).ConfigureAwait(false);
                var transaction = await connection.BeginTransactionAsync().ConfigureAwait(false);
                await using (transaction.ConfigureAwait(false))
                {
                    // Locks the head too, so retention runs of several replicas and their appends take turns.
                    await LockHeadAsync(connection).ConfigureAwait(false);
                    var grantedAt = AuditChain.ToMicroseconds(grant.GrantedAt);
                    var deleteBefore = AuditChain.ToMicroseconds(grant.DeleteBefore);
                    long lastAnchorSeq = 0;
                    string lastAnchorHash = AuditChain.GenesisHash, lastGrantHash = AuditChain.GenesisHash;
                    using (var last = new NpgsqlCommand("SELECT anchor_seq, anchor_hash, grant_hash FROM retention_grants ORDER BY id DESC LIMIT 1;", connection))
                    {
                        var reader = await last.ExecuteReaderAsync().ConfigureAwait(false);
                        await using (reader.ConfigureAwait(false))
                        {
                            if (await reader.ReadAsync().ConfigureAwait(false))
                            {
                                (lastAnchorSeq, lastAnchorHash, lastGrantHash) = (reader.GetInt64(0), reader.GetString(1), reader.GetString(2));
                            }
                        }
                    }

                    long prefixEnd;
                    using (var end = new NpgsqlCommand("SELECT coalesce((SELECT min(seq) FROM evaluations WHERE evaluated_at >= @before) - 1, (SELECT max(seq) FROM evaluations), 0);", connection))
                    {
                        end.Parameters.Add(new NpgsqlParameter("before", NpgsqlDbType.TimestampTz) { Value = deleteBefore });
                        prefixEnd = Convert.ToInt64(await end.ExecuteScalarAsync().ConfigureAwait(false), CultureInfo.InvariantCulture);
                    }

                    var (anchorSeq, anchorHash) = (lastAnchorSeq, lastAnchorHash);
                    if (prefixEnd > lastAnchorSeq)
                    {
                        using var anchor = new NpgsqlCommand("SELECT record_hash FROM evaluations WHERE seq = @seq;", connection);
                        anchor.Parameters.AddWithValue("seq", prefixEnd);
                        (anchorSeq, anchorHash) = (prefixEnd, (string)(await anchor.ExecuteScalarAsync().ConfigureAwait(false))!);
                    }

                    var grantHash = AuditChain.GrantHash(lastGrantHash, grantedAt, deleteBefore, grant.GrantedBy, grant.Reason, anchorSeq, anchorHash);
                    long grantId;
                    using (var insert = connection.CreateCommand())
                    {
                        insert.CommandText = """
                            INSERT INTO retention_grants (granted_at, delete_before, granted_by, reason, anchor_seq, anchor_hash, prev_grant_hash, grant_hash)
                            VALUES (@at, @before, @by, @reason, @anchor_seq, @anchor_hash, @prev, @hash) RETURNING id;
                            """;
                        insert.Parameters.Add(new NpgsqlParameter("at", NpgsqlDbType.TimestampTz) { Value = grantedAt });
                        insert.Parameters.Add(new NpgsqlParameter("before", NpgsqlDbType.TimestampTz) { Value = deleteBefore });
                        insert.Parameters.Add(new NpgsqlParameter("by", grant.GrantedBy));
                        insert.Parameters.Add(new NpgsqlParameter("reason", grant.Reason));
                        insert.Parameters.Add(new NpgsqlParameter("anchor_seq", anchorSeq));
                        insert.Parameters.Add(new NpgsqlParameter("anchor_hash", anchorHash));
                        insert.Parameters.Add(new NpgsqlParameter("prev", lastGrantHash));
                        insert.Parameters.Add(new NpgsqlParameter("hash", grantHash));
                        grantId = Convert.ToInt64(await insert.ExecuteScalarAsync().ConfigureAwait(false), CultureInfo.InvariantCulture);
                    }

                    long deleted;
                    using (var delete = connection.CreateCommand())
                    {
                        delete.CommandText = "DELETE FROM evaluations WHERE seq <= @anchor;";
                        delete.Parameters.Add(new NpgsqlParameter("anchor", anchorSeq));
                        deleted = await delete.ExecuteNonQueryAsync().ConfigureAwait(false);
                    }

                    await transaction.CommitAsync().ConfigureAwait(false);
                    result = new RetentionResult(grantId, deleted);
                }
            },
            cancellationToken);
        await item.EnqueueAndWaitAsync(_queue.Writer, cancellationToken).ConfigureAwait(false);
        return result!;
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
            var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
            await using (connection.ConfigureAwait(false))
            {
                var version = await PostgresAuditSchema.CurrentVersionAsync(connection, cancellationToken).ConfigureAwait(false);
                reachable = version == PostgresAuditSchema.LatestVersion;
                if (!reachable)
                {
                    RecordFailure(string.Create(CultureInfo.InvariantCulture, $"The schema is at version {version}, expected {PostgresAuditSchema.LatestVersion}."));
                }
                else
                {
                    missingGuards = await PostgresGuards.MissingAsync(connection, cancellationToken).ConfigureAwait(false);
                    if (missingGuards.Count > 0)
                    {
                        RecordFailure("The audit database's guards are missing or altered: " + string.Join(", ", missingGuards) + ".");
                    }
                }
            }
        }
        catch (NpgsqlException e)
        {
            _readerSource.Clear();
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

    /// <inheritdoc />
    public async Task<AuditStorage> GetStorageAsync(CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
            await using (connection.ConfigureAwait(false))
            {
                using var command = new NpgsqlCommand("SELECT pg_database_size(current_database());", connection);
                var used = Convert.ToInt64(await command.ExecuteScalarAsync(cancellationToken).ConfigureAwait(false), CultureInfo.InvariantCulture);
                return new AuditStorage(null, used);
            }
        }
        catch (NpgsqlException e)
        {
            throw ReadFailed(e);
        }
    }

    /// <inheritdoc />
    public async Task<AuditChainHead> GetChainHeadAsync(CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
            await using (connection.ConfigureAwait(false))
            {
                return await ReadChainHeadAsync(connection, cancellationToken).ConfigureAwait(false);
            }
        }
        catch (NpgsqlException e)
        {
            throw ReadFailed(e);
        }
    }

    private static async Task<AuditChainHead> ReadChainHeadAsync(NpgsqlConnection connection, CancellationToken cancellationToken)
    {
        using var command = new NpgsqlCommand("SELECT seq, record_id, hash FROM audit_chain_head WHERE id = 1;", connection);
        var reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
        await using (reader.ConfigureAwait(false))
        {
            return await reader.ReadAsync(cancellationToken).ConfigureAwait(false)
                ? new AuditChainHead(reader.GetInt64(0), reader.IsDBNull(1) ? null : reader.GetGuid(1), reader.GetString(2))
                : new AuditChainHead(-1, null, "(no chain head row)");
        }
    }

    /// <inheritdoc />
    public async Task<AuditChainVerification> VerifyChainAsync(CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
            await using (connection.ConfigureAwait(false))
            {
                // One repeatable-read snapshot: grants, rows and head agree while appends go on.
                var transaction = await connection.BeginTransactionAsync(System.Data.IsolationLevel.RepeatableRead, cancellationToken).ConfigureAwait(false);
                await using (transaction.ConfigureAwait(false))
                {
                    var grants = new List<StoredGrant>();
                    using (var command = new NpgsqlCommand("SELECT id, granted_at, delete_before, granted_by, reason, anchor_seq, anchor_hash, prev_grant_hash, grant_hash FROM retention_grants ORDER BY id;", connection))
                    {
                        var reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
                        await using (reader.ConfigureAwait(false))
                        {
                            while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
                            {
                                grants.Add(new StoredGrant(reader.GetInt64(0), reader.GetFieldValue<DateTimeOffset>(1), reader.GetFieldValue<DateTimeOffset>(2), reader.GetString(3), reader.GetString(4),
                                    reader.IsDBNull(5) ? -1 : reader.GetInt64(5), reader.IsDBNull(6) ? string.Empty : reader.GetString(6),
                                    reader.IsDBNull(7) ? string.Empty : reader.GetString(7), reader.IsDBNull(8) ? string.Empty : reader.GetString(8)));
                            }
                        }
                    }

                    var head = await ReadChainHeadAsync(connection, cancellationToken).ConfigureAwait(false);
                    var result = await AuditChain.VerifyAsync(grants, ReadChainAsync(connection, cancellationToken), head, cancellationToken).ConfigureAwait(false);
                    await transaction.CommitAsync(cancellationToken).ConfigureAwait(false);
                    return result;
                }
            }
        }
        catch (NpgsqlException e)
        {
            throw ReadFailed(e);
        }
    }

    private static async IAsyncEnumerable<AuditRecord> ReadChainAsync(NpgsqlConnection connection, [EnumeratorCancellation] CancellationToken cancellationToken)
    {
        using var command = new NpgsqlCommand("SELECT " + Columns + " FROM evaluations ORDER BY seq NULLS FIRST;", connection);
        var reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
        await using (reader.ConfigureAwait(false))
        {
            while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
            {
                yield return ReadRecord(reader);
            }
        }
    }

    /// <summary>
    /// Stops taking appends, lets the batch being written finish, fails every append still queued with
    /// <see cref="AuditStoreUnavailableException"/>, and closes the connections.
    /// </summary>
    /// <returns>A task that completes when the connections are closed.</returns>
    public async ValueTask DisposeAsync()
    {
        if (Interlocked.Exchange(ref _disposed, 1) != 0)
        {
            return;
        }

        _queue.Writer.TryComplete();
        await _closing.CancelAsync().ConfigureAwait(false);
        await _writerLoop.ConfigureAwait(false);
        await DiscardWriterAsync().ConfigureAwait(false);
        await _writerSource.DisposeAsync().ConfigureAwait(false);
        await _readerSource.DisposeAsync().ConfigureAwait(false);
        _closing.Dispose();
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

    private async Task RunWriterAsync()
    {
        var reader = _queue.Reader;
        var batch = new List<AuditWorkItem>(_options.MaxBatchSize);
        try
        {
            while (await reader.WaitToReadAsync().ConfigureAwait(false))
            {
                if (_closing.IsCancellationRequested)
                {
                    break;
                }

                AuditWorkItem? control = null;
                while (batch.Count < _options.MaxBatchSize && reader.TryRead(out var item))
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
                item.Completion.TrySetException(Closed(null));
            }
        }
    }

    private async Task CommitBatchAsync(List<AuditWorkItem> batch)
    {
        var startedAt = System.Diagnostics.Stopwatch.GetTimestamp();
        try
        {
            // Not cancellable by any caller: once taken, a batch is committed or rolled back whole.
            var connection = await EnsureWriterAsync(migrate: false, CancellationToken.None).ConfigureAwait(false);
            var transaction = await connection.BeginTransactionAsync().ConfigureAwait(false);
            await using (transaction.ConfigureAwait(false))
            {
                // The head row is locked for the transaction: writers of several replicas take turns, so the chain cannot fork.
                var (sequence, previous) = await LockHeadAsync(connection).ConfigureAwait(false);
                var importer = await connection.BeginBinaryImportAsync(CopySql).ConfigureAwait(false);
                await using (importer.ConfigureAwait(false))
                {
                    importer.Timeout = _options.CommandTimeout;
                    foreach (var item in batch)
                    {
                        sequence++;
                        var hash = AuditChain.RecordHash(sequence, previous, item.Record!);
                        await WriteRowAsync(importer, item.Record!, sequence, previous, hash).ConfigureAwait(false);
                        previous = hash;
                    }

                    await importer.CompleteAsync().ConfigureAwait(false);
                }

                // Completion waits for this: with synchronous_commit=on it returns after the WAL is flushed.
                await transaction.CommitAsync().ConfigureAwait(false);
            }
        }
#pragma warning disable CA1031 // Whatever failed, the batch is not stored and its callers must hear so; the loop goes on.
        catch (Exception e)
#pragma warning restore CA1031
        {
            _metrics.Record(batch.Count, startedAt, committed: false);
            await DiscardWriterAsync().ConfigureAwait(false);
            _readerSource.Clear();
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

    private static async Task<(long Sequence, string Hash)> LockHeadAsync(NpgsqlConnection connection)
    {
        using var command = new NpgsqlCommand("SELECT seq, hash FROM audit_chain_head WHERE id = 1 FOR UPDATE;", connection);
        var reader = await command.ExecuteReaderAsync().ConfigureAwait(false);
        await using (reader.ConfigureAwait(false))
        {
            if (!await reader.ReadAsync().ConfigureAwait(false))
            {
                throw new InvalidOperationException("The audit chain head is missing.");
            }

            return (reader.GetInt64(0), reader.GetString(1));
        }
    }

    private static async Task WriteRowAsync(NpgsqlBinaryImporter importer, AuditRecord record, long sequence, string previousHash, string recordHash)
    {
        var (at, tick) = SplitTicks(record.EvaluatedAt);
        await importer.StartRowAsync().ConfigureAwait(false);
        await importer.WriteAsync(record.Id, NpgsqlDbType.Uuid).ConfigureAwait(false);
        await importer.WriteAsync(at, NpgsqlDbType.TimestampTz).ConfigureAwait(false);
        await importer.WriteAsync(tick, NpgsqlDbType.Smallint).ConfigureAwait(false);
        await importer.WriteAsync(record.Caller, NpgsqlDbType.Text).ConfigureAwait(false);
        await importer.WriteAsync(record.Asset, NpgsqlDbType.Text).ConfigureAwait(false);
        if (record.SiteId is null)
        {
            await importer.WriteNullAsync().ConfigureAwait(false);
        }
        else
        {
            await importer.WriteAsync(record.SiteId, NpgsqlDbType.Text).ConfigureAwait(false);
        }

        await importer.WriteAsync(record.Verdict, NpgsqlDbType.Text).ConfigureAwait(false);
        await importer.WriteAsync(record.RuleDigest, NpgsqlDbType.Text).ConfigureAwait(false);
        await importer.WriteAsync(record.EngineVersion, NpgsqlDbType.Text).ConfigureAwait(false);
        await importer.WriteAsync(record.Request, NpgsqlDbType.Bytea).ConfigureAwait(false);
        await importer.WriteAsync(record.RequestSha256!, NpgsqlDbType.Text).ConfigureAwait(false);
        await importer.WriteAsync(record.Response, NpgsqlDbType.Bytea).ConfigureAwait(false);
        await importer.WriteAsync(record.ResponseSha256!, NpgsqlDbType.Text).ConfigureAwait(false);
        if (record.ReplayOf is { } replayOf)
        {
            await importer.WriteAsync(replayOf, NpgsqlDbType.Uuid).ConfigureAwait(false);
        }
        else
        {
            await importer.WriteNullAsync().ConfigureAwait(false);
        }

        await importer.WriteAsync(sequence, NpgsqlDbType.Bigint).ConfigureAwait(false);
        await importer.WriteAsync(previousHash, NpgsqlDbType.Text).ConfigureAwait(false);
        await importer.WriteAsync(recordHash, NpgsqlDbType.Text).ConfigureAwait(false);
    }

    /// <summary>The microsecond instant PostgreSQL stores and the 100 ns tick (0 to 9) it cannot.</summary>
    internal static (DateTimeOffset Micros, short Tick) SplitTicks(DateTimeOffset value)
    {
        var ticks = value.UtcTicks;
        var tick = (short)(ticks % 10);
        return (new DateTimeOffset(ticks - tick, TimeSpan.Zero), tick);
    }

    private async Task RunControlAsync(AuditWorkItem control)
    {
        try
        {
            await control.Control!().ConfigureAwait(false);
            control.Completion.TrySetResult();
        }
#pragma warning disable CA1031 // A failed probe or test hook is reported to its caller; the loop goes on.
        catch (Exception e)
#pragma warning restore CA1031
        {
            await DiscardWriterAsync().ConfigureAwait(false);
            RecordFailure(e.Message);
            control.Completion.TrySetException(new AuditStoreUnavailableException($"The audit store is not writable: {e.Message}", e));
        }
    }

    private async Task ProbeWriteAsync()
    {
        var connection = await EnsureWriterAsync(migrate: false, CancellationToken.None).ConfigureAwait(false);
        var transaction = await connection.BeginTransactionAsync().ConfigureAwait(false);
        await using (transaction.ConfigureAwait(false))
        {
            await PostgresAuditSchema.ExecuteAsync(connection,
                "INSERT INTO health_probe (id, checked_at) VALUES (1, now()) ON CONFLICT (id) DO UPDATE SET checked_at = excluded.checked_at;",
                CancellationToken.None).ConfigureAwait(false);
            await transaction.CommitAsync().ConfigureAwait(false);
        }
    }

    private async Task<NpgsqlConnection> EnsureWriterAsync(bool migrate, CancellationToken cancellationToken)
    {
        if (_writer is not null)
        {
            return _writer;
        }

        var connection = await _writerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        try
        {
            await RequireDurableCommitAsync(connection, cancellationToken).ConfigureAwait(false);
            if (migrate)
            {
                await PostgresAuditSchema.MigrateAsync(connection, PostgresAuditSchema.LatestVersion, cancellationToken).ConfigureAwait(false);

                // A database whose guards were dropped, disabled or altered is refused rather than run "healthy".
                var missing = await PostgresGuards.MissingAsync(connection, cancellationToken).ConfigureAwait(false);
                if (missing.Count > 0)
                {
                    throw new InvalidOperationException("The audit database's guards are missing or altered: " + string.Join(", ", missing) + ". Restore them (or the database) before starting.");
                }
            }

            _writer = connection;
            return connection;
        }
        catch
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw;
        }
    }

    /// <summary>Refuses a session whose COMMIT would return before the WAL is on disk.</summary>
    private static async Task RequireDurableCommitAsync(NpgsqlConnection connection, CancellationToken cancellationToken)
    {
        using var command = new NpgsqlCommand("SELECT current_setting('synchronous_commit'), current_setting('fsync');", connection);
        var reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
        await using (reader.ConfigureAwait(false))
        {
            await reader.ReadAsync(cancellationToken).ConfigureAwait(false);
            var synchronousCommit = reader.GetString(0);
            var fsync = reader.GetString(1);

            // on, remote_write, remote_apply and local all flush the local WAL before COMMIT returns; off does not.
            if (string.Equals(synchronousCommit, "off", StringComparison.OrdinalIgnoreCase))
            {
                throw new InvalidOperationException("The PostgreSQL server reports synchronous_commit=off: a committed audit record could be lost in a crash. Set it to on.");
            }

            if (!string.Equals(fsync, "on", StringComparison.OrdinalIgnoreCase))
            {
                throw new InvalidOperationException($"The PostgreSQL server reports fsync={fsync}: a committed audit record could be lost in a crash. Set it to on.");
            }
        }
    }

    private async Task DiscardWriterAsync()
    {
        var writer = _writer;
        _writer = null;
        if (writer is not null)
        {
            try
            {
                await writer.DisposeAsync().ConfigureAwait(false);
            }
#pragma warning disable CA1031 // Closing a broken connection may fail; the connection is gone either way.
            catch (Exception)
#pragma warning restore CA1031
            {
            }
        }
    }

    private async IAsyncEnumerable<AuditRecord> EnumerateAsync(QueryPlan plan, [EnumeratorCancellation] CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        NpgsqlConnection connection;
        try
        {
            connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        }
        catch (NpgsqlException e)
        {
            throw ReadFailed(e);
        }

        await using (connection.ConfigureAwait(false))
        {
            using var command = new NpgsqlCommand { Connection = connection };
            plan.Apply(command);
            NpgsqlDataReader reader;
            try
            {
                reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            }
            catch (NpgsqlException e)
            {
                throw ReadFailed(e);
            }

            await using (reader.ConfigureAwait(false))
            {
                while (true)
                {
                    AuditRecord? record;
                    try
                    {
                        record = await reader.ReadAsync(cancellationToken).ConfigureAwait(false) ? ReadRecord(reader) : null;
                    }
                    catch (NpgsqlException e)
                    {
                        throw ReadFailed(e);
                    }

                    if (record is null)
                    {
                        break;
                    }

                    yield return record;
                }
            }
        }
    }

    internal static AuditRecord ReadRecord(NpgsqlDataReader reader) => new()
    {
        Id = reader.GetGuid(0),
        EvaluatedAt = reader.GetFieldValue<DateTimeOffset>(1).AddTicks(reader.GetInt16(2)),
        Caller = reader.GetString(3),
        Asset = reader.GetString(4),
        SiteId = reader.IsDBNull(5) ? null : reader.GetString(5),
        Verdict = reader.GetString(6),
        RuleDigest = reader.GetString(7),
        EngineVersion = reader.GetString(8),
        Request = reader.GetFieldValue<byte[]>(9),
        RequestSha256 = reader.GetString(10),
        Response = reader.GetFieldValue<byte[]>(11),
        ResponseSha256 = reader.GetString(12),
        ReplayOf = reader.IsDBNull(13) ? null : reader.GetGuid(13),
        Sequence = reader.FieldCount > 14 && !reader.IsDBNull(14) ? reader.GetInt64(14) : null,
        PreviousHash = reader.FieldCount > 15 && !reader.IsDBNull(15) ? reader.GetString(15) : null,
        RecordHash = reader.FieldCount > 16 && !reader.IsDBNull(16) ? reader.GetString(16) : null,
    };

    private void ThrowIfDisposed()
    {
        if (Volatile.Read(ref _disposed) != 0)
        {
            throw Closed(null);
        }
    }

    private static AuditStoreUnavailableException Closed(Exception? inner) => AuditWorkItem.Closed(inner);

    private AuditStoreUnavailableException ReadFailed(NpgsqlException e)
    {
        // Idle pooled connections may be dead too (a restarted server); drop them so the next read connects afresh.
        if (e is not PostgresException)
        {
            _readerSource.Clear();
        }

        RecordFailure(e.Message);
        return new AuditStoreUnavailableException($"The audit store could not be read: {e.Message}", e);
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


    /// <summary>The SQL and parameters of one query, validated before anything is read.</summary>
    internal sealed class QueryPlan
    {
        private readonly string _sql;
        private readonly List<NpgsqlParameter> _parameters;

        private QueryPlan(string sql, List<NpgsqlParameter> parameters)
        {
            _sql = sql;
            _parameters = parameters;
        }

        /// <summary>The statement, for tests that check its query plan.</summary>
        public string Sql => _sql;

        public static QueryPlan Build(AuditQuery query)
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

            var sql = new StringBuilder("SELECT " + Columns + " FROM evaluations WHERE true");
            var parameters = new List<NpgsqlParameter>();
            void Equal(string column, string? value)
            {
                if (value is not null)
                {
                    sql.Append(CultureInfo.InvariantCulture, $" AND {column} = @{column}");
                    parameters.Add(new NpgsqlParameter<string>(column, NpgsqlDbType.Text) { TypedValue = value });
                }
            }

            void Instant(string name, DateTimeOffset value)
            {
                var (at, tick) = SplitTicks(value);
                parameters.Add(new NpgsqlParameter<DateTimeOffset>(name + "_at", NpgsqlDbType.TimestampTz) { TypedValue = at });
                parameters.Add(new NpgsqlParameter<short>(name + "_tick", NpgsqlDbType.Smallint) { TypedValue = tick });
            }

            Equal("asset", query.Asset);
            Equal("site_id", query.SiteId);
            Equal("verdict", query.Verdict);
            Equal("caller", query.Caller);
            void In(string column, IReadOnlyList<string>? values)
            {
                if (values is not null)
                {
                    sql.Append(CultureInfo.InvariantCulture, $" AND {column} = ANY(@{column}_in)");
                    parameters.Add(new NpgsqlParameter<string[]>(column + "_in", NpgsqlDbType.Array | NpgsqlDbType.Text) { TypedValue = [.. values] });
                }
            }

            In("site_id", query.SiteIn);
            In("asset", query.AssetIn);
            if (query.From is { } from)
            {
                sql.Append(" AND (evaluated_at, evaluated_at_tick) >= (@from_at, @from_tick)");
                Instant("from", from);
            }

            if (query.To is { } to)
            {
                sql.Append(" AND (evaluated_at, evaluated_at_tick) < (@to_at, @to_tick)");
                Instant("to", to);
            }

            if (query.Cursor is not null)
            {
                if (!AuditCursor.TryParse(query.Cursor, out var cursor))
                {
                    throw new ArgumentException("The cursor is not a token issued by the audit store.", nameof(query));
                }

                // Strictly after the cursor in (evaluated_at DESC, evaluated_at_tick DESC, id DESC) order; a row
                // comparison the btree index scans from directly.
                sql.Append(" AND (evaluated_at, evaluated_at_tick, id) < (@cursor_at, @cursor_tick, @cursor_id)");
                Instant("cursor", cursor.EvaluatedAt);
                parameters.Add(new NpgsqlParameter<Guid>("cursor_id", NpgsqlDbType.Uuid) { TypedValue = cursor.Id });
            }

            sql.Append(" ORDER BY evaluated_at DESC, evaluated_at_tick DESC, id DESC");
            if (query.Limit is { } limit)
            {
                sql.Append(" LIMIT @limit");
                parameters.Add(new NpgsqlParameter<int>("limit", NpgsqlDbType.Integer) { TypedValue = limit });
            }

            return new QueryPlan(sql.Append(';').ToString(), parameters);
        }

        public void Apply(NpgsqlCommand command)
        {
            command.CommandText = _sql;
            foreach (var parameter in _parameters)
            {
                command.Parameters.Add(parameter.Clone());
            }
        }
    }
}
