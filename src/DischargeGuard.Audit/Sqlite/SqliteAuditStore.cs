using System.Globalization;
using System.Runtime.CompilerServices;
using System.Text;
using System.Threading.Channels;
using Microsoft.Data.Sqlite;

namespace DischargeGuard.Audit.Sqlite;

/// <summary>
/// The audit store on one SQLite file: WAL journal, <c>synchronous=FULL</c>, one writer that commits queued appends
/// in groups, append-only triggers, and a schema brought up to date on open.
/// </summary>
/// <remarks>
/// <para>
/// Every <see cref="AppendAsync"/> queues its record and waits. A single writer takes whatever is queued (up to
/// <see cref="AuditStoreOptions.MaxBatchSize"/>), inserts it in one transaction with one prepared statement, commits,
/// and only then completes the waiting calls. If the transaction fails, it is rolled back whole and every call of
/// that batch throws <see cref="AuditStoreUnavailableException"/>; the writer then drops its connection and the next
/// batch opens a new one, so the store recovers without a restart once the cause (full disk, lock) is gone.
/// </para>
/// <para>
/// Reads use pooled connections of their own and, thanks to WAL, neither wait for nor delay the writer.
/// The writer's connection is not pooled: it lives as long as the store, and a connection dropped after a
/// failure must really close rather than return to a pool with its state.
/// </para>
/// </remarks>
public sealed class SqliteAuditStore : IAuditStore
{
    /// <summary>The columns every schema version since 4 has, in <see cref="ReadRecord"/> order.</summary>
    internal const string BaseColumns =
        "id, evaluated_at, caller, asset, site_id, verdict, rule_digest, engine_version, request, request_sha256, response, response_sha256, replay_of";

    internal const string Columns = BaseColumns + ", seq, prev_hash, record_hash";

    private const string InsertSql =
        "INSERT INTO evaluations (" + Columns + ") VALUES ($id, $evaluated_at, $caller, $asset, $site_id, $verdict, $rule_digest, $engine_version, $request, $request_sha256, $response, $response_sha256, $replay_of, $seq, $prev_hash, $record_hash);";

    private const int MaxTextLength = 256;

    private readonly AuditStoreOptions _options;
    private readonly string _writerConnectionString;
    private readonly string _readerConnectionString;
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
    private SqliteConnection? _writer;
    private SqliteCommand? _insert;
    private long? _maxPageCountForTesting;
    private long _defaultMaxPageCount;

    private SqliteAuditStore(AuditStoreOptions options, string fullPath)
    {
        _options = options;
        _metrics = new AuditMetrics(options.MeterFactory, "sqlite");
        DatabasePath = fullPath;
        var timeoutSeconds = (int)Math.Ceiling(options.BusyTimeout.TotalSeconds);
        _writerConnectionString = new SqliteConnectionStringBuilder
        {
            DataSource = fullPath,
            Mode = SqliteOpenMode.ReadWriteCreate,
            Pooling = false,
            DefaultTimeout = timeoutSeconds,
        }.ToString();
        _readerConnectionString = new SqliteConnectionStringBuilder
        {
            DataSource = fullPath,
            Mode = SqliteOpenMode.ReadWrite,
            Pooling = true,
            DefaultTimeout = timeoutSeconds,
        }.ToString();
        _queue = Channel.CreateBounded<AuditWorkItem>(new BoundedChannelOptions(options.QueueCapacity)
        {
            SingleReader = true,
            FullMode = BoundedChannelFullMode.Wait,
        });
    }

    /// <summary>The full path of the database file.</summary>
    public string DatabasePath { get; }

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

    /// <summary>
    /// Opens (creating when missing) the database at <see cref="AuditStoreOptions.SqlitePath"/>, applies every
    /// pending migration, and starts the writer.
    /// </summary>
    /// <param name="options">Where the file is and how the writer batches.</param>
    /// <param name="cancellationToken">Cancels the open.</param>
    /// <returns>The open store; dispose it to stop the writer and close the file.</returns>
    /// <exception cref="ArgumentException">An option is out of range.</exception>
    /// <exception cref="AuditStoreUnavailableException">The file could not be created, opened or migrated, or its schema is newer than this build.</exception>
    public static async Task<SqliteAuditStore> OpenAsync(AuditStoreOptions options, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(options);
        options.Validate();
        var fullPath = Path.GetFullPath(options.SqlitePath);
        var store = new SqliteAuditStore(options, fullPath);
        try
        {
            await Task.Run(
                () =>
                {
                    var directory = Path.GetDirectoryName(fullPath);
                    if (!string.IsNullOrEmpty(directory))
                    {
                        Directory.CreateDirectory(directory);
                    }

                    store.EnsureWriter(migrate: true);
                },
                cancellationToken).ConfigureAwait(false);
        }
        catch (Exception e) when (e is SqliteException or IOException or UnauthorizedAccessException or InvalidOperationException)
        {
            store.DiscardWriter();
            throw new AuditStoreUnavailableException($"The audit store could not be opened: {e.Message}", e);
        }

        store._writerLoop = Task.Run(store.RunWriterAsync, CancellationToken.None);
        return store;
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
            var connection = await OpenReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (connection.ConfigureAwait(false))
            {
                using var command = connection.CreateCommand();
                command.CommandText = "SELECT " + Columns + " FROM evaluations WHERE id = $id;";
                command.Parameters.AddWithValue("$id", FormatId(id));
                var reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
                await using (reader.ConfigureAwait(false))
                {
                    return await reader.ReadAsync(cancellationToken).ConfigureAwait(false) ? ReadRecord(reader) : null;
                }
            }
        }
        catch (SqliteException e)
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
            var connection = await OpenReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (connection.ConfigureAwait(false))
            {
                using var command = connection.CreateCommand();
                command.CommandText = CountPrefixSql;
                command.Parameters.AddWithValue("$before", AuditTime.Format(before));
                return Convert.ToInt64(await command.ExecuteScalarAsync(cancellationToken).ConfigureAwait(false), CultureInfo.InvariantCulture);
            }
        }
        catch (SqliteException e)
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
            () =>
            {
                var connection = EnsureWriter(migrate: false);
                AuditSchema.Execute(connection, "BEGIN IMMEDIATE;");
                var grantedAt = AuditChain.ToMicroseconds(grant.GrantedAt);
                var deleteBefore = AuditChain.ToMicroseconds(grant.DeleteBefore);

                // Retention removes the longest run at the start of the chain evaluated before the cut-off, so the rest
                // stays verifiable from the last removed record (the anchor the grant stores).
                var (lastAnchorSeq, lastAnchorHash, lastGrantHash) = LastGrant(connection);
                long prefixEnd;
                using (var count = connection.CreateCommand())
                {
                    count.CommandText = "SELECT coalesce((SELECT min(seq) FROM evaluations WHERE evaluated_at >= $before) - 1, (SELECT max(seq) FROM evaluations), 0);";
                    count.Parameters.AddWithValue("$before", AuditTime.Format(deleteBefore));
                    prefixEnd = Convert.ToInt64(count.ExecuteScalar(), CultureInfo.InvariantCulture);
                }

                var (anchorSeq, anchorHash) = (lastAnchorSeq, lastAnchorHash);
                if (prefixEnd > lastAnchorSeq)
                {
                    using var anchor = connection.CreateCommand();
                    anchor.CommandText = "SELECT record_hash FROM evaluations WHERE seq = $seq;";
                    anchor.Parameters.AddWithValue("$seq", prefixEnd);
                    (anchorSeq, anchorHash) = (prefixEnd, (string)anchor.ExecuteScalar()!);
                }

                var grantHash = AuditChain.GrantHash(lastGrantHash, grantedAt, deleteBefore, grant.GrantedBy, grant.Reason, anchorSeq, anchorHash);
                long grantId;
                using (var insert = connection.CreateCommand())
                {
                    insert.CommandText = """
                        INSERT INTO retention_grants (granted_at, delete_before, granted_by, reason, anchor_seq, anchor_hash, prev_grant_hash, grant_hash)
                        VALUES ($at, $before, $by, $reason, $anchor_seq, $anchor_hash, $prev, $hash) RETURNING id;
                        """;
                    insert.Parameters.AddWithValue("$at", AuditTime.Format(grantedAt));
                    insert.Parameters.AddWithValue("$before", AuditTime.Format(deleteBefore));
                    insert.Parameters.AddWithValue("$by", grant.GrantedBy);
                    insert.Parameters.AddWithValue("$reason", grant.Reason);
                    insert.Parameters.AddWithValue("$anchor_seq", anchorSeq);
                    insert.Parameters.AddWithValue("$anchor_hash", anchorHash);
                    insert.Parameters.AddWithValue("$prev", lastGrantHash);
                    insert.Parameters.AddWithValue("$hash", grantHash);
                    grantId = Convert.ToInt64(insert.ExecuteScalar(), CultureInfo.InvariantCulture);
                }

                long deleted;
                using (var delete = connection.CreateCommand())
                {
                    delete.CommandText = "DELETE FROM evaluations WHERE seq <= $anchor;";
                    delete.Parameters.AddWithValue("$anchor", anchorSeq);
                    deleted = delete.ExecuteNonQuery();
                }

                AuditSchema.Execute(connection, "COMMIT;");
                result = new RetentionResult(grantId, deleted);
                return Task.CompletedTask;
            },
            cancellationToken);
        await item.EnqueueAndWaitAsync(_queue.Writer, cancellationToken).ConfigureAwait(false);
        return result!;
    }

    // Records a retention run with this cut-off would delete: the chain's first run evaluated before it.
    private const string CountPrefixSql =
        "SELECT count(*) FROM evaluations WHERE seq < coalesce((SELECT min(seq) FROM evaluations WHERE evaluated_at >= $before), (SELECT max(seq) + 1 FROM evaluations), 0);";

    private static (long AnchorSeq, string AnchorHash, string GrantHash) LastGrant(SqliteConnection connection)
    {
        using var command = connection.CreateCommand();
        command.CommandText = "SELECT anchor_seq, anchor_hash, grant_hash FROM retention_grants ORDER BY id DESC LIMIT 1;";
        using var reader = command.ExecuteReader();
        return reader.Read()
            ? (reader.GetInt64(0), reader.GetString(1), reader.GetString(2))
            : (0, AuditChain.GenesisHash, AuditChain.GenesisHash);
    }

    /// <inheritdoc />
    public Task<AuditStorage> GetStorageAsync(CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            // The volume of the file's directory (a mounted volume, not the root file system, in a container).
            var drive = new DriveInfo(Path.GetDirectoryName(DatabasePath)!);
            var used = SizeOf(DatabasePath) + SizeOf(DatabasePath + "-wal");
            return Task.FromResult(new AuditStorage(drive.AvailableFreeSpace, used));
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException or ArgumentException)
        {
            RecordFailure(e.Message);
            throw new AuditStoreUnavailableException($"The free space of the audit volume could not be read: {e.Message}", e);
        }

        static long SizeOf(string path) => File.Exists(path) ? new FileInfo(path).Length : 0;
    }

    /// <inheritdoc />
    public async Task<AuditChainHead> GetChainHeadAsync(CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            var connection = await OpenReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (connection.ConfigureAwait(false))
            {
                return ReadChainHead(connection);
            }
        }
        catch (SqliteException e)
        {
            throw ReadFailed(e);
        }
    }

    private static AuditChainHead ReadChainHead(SqliteConnection connection)
    {
        using var command = connection.CreateCommand();
        command.CommandText = "SELECT seq, record_id, hash FROM audit_chain_head WHERE id = 1;";
        using var reader = command.ExecuteReader();
        return reader.Read()
            ? new AuditChainHead(reader.GetInt64(0), reader.IsDBNull(1) ? null : Guid.ParseExact(reader.GetString(1), "D"), reader.GetString(2))
            : new AuditChainHead(-1, null, "(no chain head row)");
    }

    /// <inheritdoc />
    public async Task<AuditChainVerification> VerifyChainAsync(CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        try
        {
            // One read transaction, so the grants, the rows and the head are one consistent snapshot while appends go on.
            var connection = await OpenReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (connection.ConfigureAwait(false))
            {
                AuditSchema.Execute(connection, "BEGIN;");
                var grants = new List<StoredGrant>();
                using (var command = connection.CreateCommand())
                {
                    command.CommandText = "SELECT id, granted_at, delete_before, granted_by, reason, anchor_seq, anchor_hash, prev_grant_hash, grant_hash FROM retention_grants ORDER BY id;";
                    using var reader = command.ExecuteReader();
                    while (reader.Read())
                    {
                        grants.Add(new StoredGrant(reader.GetInt64(0), AuditTime.Parse(reader.GetString(1)), AuditTime.Parse(reader.GetString(2)), reader.GetString(3), reader.GetString(4),
                            reader.IsDBNull(5) ? -1 : reader.GetInt64(5), reader.IsDBNull(6) ? string.Empty : reader.GetString(6),
                            reader.IsDBNull(7) ? string.Empty : reader.GetString(7), reader.IsDBNull(8) ? string.Empty : reader.GetString(8)));
                    }
                }

                var head = ReadChainHead(connection);
                var result = await AuditChain.VerifyAsync(grants, ReadChainAsync(connection, cancellationToken), head, cancellationToken).ConfigureAwait(false);
                AuditSchema.Execute(connection, "COMMIT;");
                return result;
            }
        }
        catch (SqliteException e)
        {
            throw ReadFailed(e);
        }
    }

    private static async IAsyncEnumerable<AuditRecord> ReadChainAsync(SqliteConnection connection, [EnumeratorCancellation] CancellationToken cancellationToken)
    {
        using var command = connection.CreateCommand();
        command.CommandText = "SELECT " + Columns + " FROM evaluations ORDER BY seq;";
        var reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
        await using (reader.ConfigureAwait(false))
        {
            while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
            {
                yield return ReadRecord(reader);
            }
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
            var connection = await OpenReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (connection.ConfigureAwait(false))
            {
                var version = AuditSchema.CurrentVersion(connection);
                reachable = version == AuditSchema.LatestVersion;
                if (!reachable)
                {
                    RecordFailure(string.Create(CultureInfo.InvariantCulture, $"The schema is at version {version}, expected {AuditSchema.LatestVersion}."));
                }
                else
                {
                    missingGuards = SqliteGuards.Missing(connection);
                    if (missingGuards.Count > 0)
                    {
                        RecordFailure("The audit database's guards are missing or altered: " + string.Join(", ", missingGuards) + ".");
                    }
                }
            }
        }
        catch (SqliteException e)
        {
            RecordFailure(e.Message);
        }

        var writable = false;
        if (reachable)
        {
            var probe = AuditWorkItem.ForControl(ProbeWrite, cancellationToken);
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
    /// <see cref="AuditStoreUnavailableException"/>, and closes the file.
    /// </summary>
    /// <returns>A task that completes when the file is closed.</returns>
    public async ValueTask DisposeAsync()
    {
        if (Interlocked.Exchange(ref _disposed, 1) != 0)
        {
            return;
        }

        _queue.Writer.TryComplete();
        await _closing.CancelAsync().ConfigureAwait(false);
        await _writerLoop.ConfigureAwait(false);
        DiscardWriter();
        using (var pooled = new SqliteConnection(_readerConnectionString))
        {
            // Idle pooled readers hold the file open; release them so the file can be moved or deleted.
            SqliteConnection.ClearPool(pooled);
        }

        _closing.Dispose();
    }

    /// <summary>
    /// Caps the writer connection's <c>max_page_count</c> (tests simulate a full disk with it);
    /// <see langword="null"/> restores SQLite's default. The cap is re-applied when the writer reconnects.
    /// </summary>
    /// <param name="maxPages">The cap, or null to lift it.</param>
    /// <returns>The database's page count when the cap was applied.</returns>
    internal async Task<long> SetMaxPageCountForTestingAsync(long? maxPages)
    {
        long pageCount = 0;
        var item = AuditWorkItem.ForControl(
            () =>
            {
                _maxPageCountForTesting = maxPages;
                var connection = EnsureWriter(migrate: false);
                ApplyMaxPageCount(connection);
                using var command = connection.CreateCommand();
                command.CommandText = "PRAGMA page_count;";
                pageCount = Convert.ToInt64(command.ExecuteScalar(), CultureInfo.InvariantCulture);
                return Task.CompletedTask;
            },
            CancellationToken.None);
        await _queue.Writer.WriteAsync(item).ConfigureAwait(false);
        await item.Completion.Task.ConfigureAwait(false);
        return pageCount;
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
                    CommitBatch(batch);
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

    private void CommitBatch(List<AuditWorkItem> batch)
    {
        var startedAt = System.Diagnostics.Stopwatch.GetTimestamp();
        try
        {
            var connection = EnsureWriter(migrate: false);
            var insert = _insert!;
            AuditSchema.Execute(connection, "BEGIN IMMEDIATE;");

            // The head is read under the write lock, so the chain cannot fork; the trigger checks each link against it.
            var (sequence, previous) = ReadHead(connection);
            foreach (var item in batch)
            {
                sequence++;
                var hash = AuditChain.RecordHash(sequence, previous, item.Record!);
                Bind(insert, item.Record!, sequence, previous, hash);
                insert.ExecuteNonQuery();
                previous = hash;
            }

            AuditSchema.Execute(connection, "COMMIT;");
        }
#pragma warning disable CA1031 // Whatever failed, the batch is not stored and its callers must hear so; the loop goes on.
        catch (Exception e)
#pragma warning restore CA1031
        {
            if (_writer is not null)
            {
                AuditSchema.RollbackQuietly(_writer);
            }

            _metrics.Record(batch.Count, startedAt, committed: false);
            DiscardWriter();
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
#pragma warning disable CA1031 // A failed probe or test hook is reported to its caller; the loop goes on.
        catch (Exception e)
#pragma warning restore CA1031
        {
            if (_writer is not null)
            {
                AuditSchema.RollbackQuietly(_writer);
            }

            DiscardWriter();
            RecordFailure(e.Message);
            control.Completion.TrySetException(new AuditStoreUnavailableException($"The audit store is not writable: {e.Message}", e));
        }
    }

    private Task ProbeWrite()
    {
        var connection = EnsureWriter(migrate: false);
        AuditSchema.Execute(connection, "BEGIN IMMEDIATE;");
        using (var command = connection.CreateCommand())
        {
            command.CommandText = "INSERT INTO health_probe (id, checked_at) VALUES (1, $at) ON CONFLICT (id) DO UPDATE SET checked_at = excluded.checked_at;";
            command.Parameters.AddWithValue("$at", AuditTime.Format(DateTimeOffset.UtcNow));
            command.ExecuteNonQuery();
        }

        // An in-place update needs no new page, so a full file would still pass; allocating (and rolling back) a few
        // pages proves an append would find room.
        AuditSchema.Execute(connection, "SAVEPOINT room;");
        AuditSchema.Execute(connection, "INSERT INTO health_probe_room (pad) VALUES (zeroblob(16384));");
        AuditSchema.Execute(connection, "ROLLBACK TO room;");
        AuditSchema.Execute(connection, "RELEASE room;");
        AuditSchema.Execute(connection, "COMMIT;");
        return Task.CompletedTask;
    }

    private SqliteConnection EnsureWriter(bool migrate)
    {
        if (_writer is not null)
        {
            return _writer;
        }

        var connection = new SqliteConnection(_writerConnectionString);
        try
        {
            connection.Open();
            using (var command = connection.CreateCommand())
            {
                command.CommandText = "PRAGMA journal_mode = WAL;";
                var mode = Convert.ToString(command.ExecuteScalar(), CultureInfo.InvariantCulture);
                if (!string.Equals(mode, "wal", StringComparison.OrdinalIgnoreCase))
                {
                    throw new InvalidOperationException($"The audit database could not be put in WAL mode (it reports '{mode}').");
                }
            }

            AuditSchema.Execute(connection, string.Create(CultureInfo.InvariantCulture, $"""
                PRAGMA synchronous = FULL;
                PRAGMA foreign_keys = ON;
                PRAGMA busy_timeout = {(long)_options.BusyTimeout.TotalMilliseconds};
                """));
            using (var command = connection.CreateCommand())
            {
                command.CommandText = "PRAGMA max_page_count;";
                _defaultMaxPageCount = Convert.ToInt64(command.ExecuteScalar(), CultureInfo.InvariantCulture);
            }

            if (migrate)
            {
                AuditSchema.Migrate(connection, AuditSchema.LatestVersion);

                // A file whose guards were dropped or altered is refused: the service would otherwise run "healthy" on it.
                var missing = SqliteGuards.Missing(connection);
                if (missing.Count > 0)
                {
                    throw new InvalidOperationException("The audit database's guards are missing or altered: " + string.Join(", ", missing) + ". Restore the file from a backup, or recreate the guards, before starting.");
                }
            }

            ApplyMaxPageCount(connection);
            var insert = connection.CreateCommand();
            insert.CommandText = InsertSql;
            foreach (var name in (string[])["$id", "$evaluated_at", "$caller", "$asset", "$site_id", "$verdict", "$rule_digest", "$engine_version", "$request_sha256", "$response_sha256", "$replay_of", "$prev_hash", "$record_hash"])
            {
                insert.Parameters.Add(name, SqliteType.Text);
            }

            insert.Parameters.Add("$seq", SqliteType.Integer);

            insert.Parameters.Add("$request", SqliteType.Blob);
            insert.Parameters.Add("$response", SqliteType.Blob);
            insert.Prepare();
            _writer = connection;
            _insert = insert;
            return connection;
        }
        catch
        {
            connection.Dispose();
            throw;
        }
    }

    private void ApplyMaxPageCount(SqliteConnection connection)
    {
        var cap = _maxPageCountForTesting ?? _defaultMaxPageCount;
        AuditSchema.Execute(connection, string.Create(CultureInfo.InvariantCulture, $"PRAGMA max_page_count = {cap};"));
    }

    private void DiscardWriter()
    {
        _insert?.Dispose();
        _insert = null;
        _writer?.Dispose();
        _writer = null;
    }

    private static (long Sequence, string Hash) ReadHead(SqliteConnection connection)
    {
        using var command = connection.CreateCommand();
        command.CommandText = "SELECT seq, hash FROM audit_chain_head WHERE id = 1;";
        using var reader = command.ExecuteReader();
        if (!reader.Read())
        {
            throw new InvalidOperationException("The audit chain head is missing.");
        }

        return (reader.GetInt64(0), reader.GetString(1));
    }

    private static void Bind(SqliteCommand insert, AuditRecord record, long sequence, string previousHash, string recordHash)
    {
        var p = insert.Parameters;
        p["$seq"].Value = sequence;
        p["$prev_hash"].Value = previousHash;
        p["$record_hash"].Value = recordHash;
        p["$id"].Value = FormatId(record.Id);
        p["$evaluated_at"].Value = AuditTime.Format(record.EvaluatedAt);
        p["$caller"].Value = record.Caller;
        p["$asset"].Value = record.Asset;
        p["$site_id"].Value = (object?)record.SiteId ?? DBNull.Value;
        p["$verdict"].Value = record.Verdict;
        p["$rule_digest"].Value = record.RuleDigest;
        p["$engine_version"].Value = record.EngineVersion;
        p["$request"].Value = record.Request;
        p["$request_sha256"].Value = record.RequestSha256;
        p["$response"].Value = record.Response;
        p["$response_sha256"].Value = record.ResponseSha256;
        p["$replay_of"].Value = record.ReplayOf is { } replayOf ? FormatId(replayOf) : DBNull.Value;
    }

    private async IAsyncEnumerable<AuditRecord> EnumerateAsync(QueryPlan plan, [EnumeratorCancellation] CancellationToken cancellationToken)
    {
        ThrowIfDisposed();
        SqliteConnection connection;
        try
        {
            connection = await OpenReaderAsync(cancellationToken).ConfigureAwait(false);
        }
        catch (SqliteException e)
        {
            throw ReadFailed(e);
        }

        await using (connection.ConfigureAwait(false))
        {
            using var command = connection.CreateCommand();
            plan.Apply(command);
            SqliteDataReader reader;
            try
            {
                reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            }
            catch (SqliteException e)
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
                    catch (SqliteException e)
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

    private async Task<SqliteConnection> OpenReaderAsync(CancellationToken cancellationToken)
    {
        var connection = new SqliteConnection(_readerConnectionString);
        try
        {
            await connection.OpenAsync(cancellationToken).ConfigureAwait(false);

            // Readers never write, even by mistake.
            AuditSchema.Execute(connection, string.Create(CultureInfo.InvariantCulture,
                $"PRAGMA query_only = ON; PRAGMA busy_timeout = {(long)_options.BusyTimeout.TotalMilliseconds};"));
            return connection;
        }
        catch
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw;
        }
    }

    internal static AuditRecord ReadRecord(SqliteDataReader reader) => new()
    {
        Id = Guid.ParseExact(reader.GetString(0), "D"),
        EvaluatedAt = AuditTime.Parse(reader.GetString(1)),
        Caller = reader.GetString(2),
        Asset = reader.GetString(3),
        SiteId = reader.IsDBNull(4) ? null : reader.GetString(4),
        Verdict = reader.GetString(5),
        RuleDigest = reader.GetString(6),
        EngineVersion = reader.GetString(7),
        Request = reader.GetFieldValue<byte[]>(8),
        RequestSha256 = reader.GetString(9),
        Response = reader.GetFieldValue<byte[]>(10),
        ResponseSha256 = reader.GetString(11),
        ReplayOf = reader.IsDBNull(12) ? null : Guid.ParseExact(reader.GetString(12), "D"),
        Sequence = reader.FieldCount > 13 && !reader.IsDBNull(13) ? reader.GetInt64(13) : null,
        PreviousHash = reader.FieldCount > 14 && !reader.IsDBNull(14) ? reader.GetString(14) : null,
        RecordHash = reader.FieldCount > 15 && !reader.IsDBNull(15) ? reader.GetString(15) : null,
    };

    internal static string FormatId(Guid id) => id.ToString("D", CultureInfo.InvariantCulture);

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

    private void ThrowIfDisposed()
    {
        if (Volatile.Read(ref _disposed) != 0)
        {
            throw Closed(null);
        }
    }

    private static AuditStoreUnavailableException Closed(Exception? inner) => AuditWorkItem.Closed(inner);

    private AuditStoreUnavailableException ReadFailed(SqliteException e)
    {
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
        private readonly List<(string Name, object Value)> _parameters;

        private QueryPlan(string sql, List<(string Name, object Value)> parameters)
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

            var sql = new StringBuilder("SELECT " + Columns + " FROM evaluations WHERE 1 = 1");
            var parameters = new List<(string, object)>();
            void Equal(string column, string? value)
            {
                if (value is not null)
                {
                    sql.Append(CultureInfo.InvariantCulture, $" AND {column} = ${column}");
                    parameters.Add(("$" + column, value));
                }
            }

            Equal("asset", query.Asset);
            Equal("site_id", query.SiteId);
            Equal("verdict", query.Verdict);
            Equal("caller", query.Caller);
            void In(string column, IReadOnlyList<string>? values)
            {
                if (values is null)
                {
                    return;
                }

                if (values.Count == 0)
                {
                    sql.Append(" AND 0 = 1");
                    return;
                }

                sql.Append(CultureInfo.InvariantCulture, $" AND {column} IN (");
                for (var i = 0; i < values.Count; i++)
                {
                    var name = string.Create(CultureInfo.InvariantCulture, $"${column}_in_{i}");
                    sql.Append(i == 0 ? name : ", " + name);
                    parameters.Add((name, values[i]));
                }

                sql.Append(')');
            }

            In("site_id", query.SiteIn);
            In("asset", query.AssetIn);
            if (query.From is { } from)
            {
                sql.Append(" AND evaluated_at >= $from");
                parameters.Add(("$from", AuditTime.Format(from)));
            }

            if (query.To is { } to)
            {
                sql.Append(" AND evaluated_at < $to");
                parameters.Add(("$to", AuditTime.Format(to)));
            }

            if (query.Cursor is not null)
            {
                if (!AuditCursor.TryParse(query.Cursor, out var cursor))
                {
                    throw new ArgumentException("The cursor is not a token issued by the audit store.", nameof(query));
                }

                // Strictly after the cursor in (evaluated_at DESC, id DESC) order. Written as a range on evaluated_at plus a
                // tie-break so the index scan starts at the cursor instead of filtering from the newest row.
                sql.Append(" AND evaluated_at <= $cursor_at AND (evaluated_at < $cursor_at OR id < $cursor_id)");
                parameters.Add(("$cursor_at", AuditTime.Format(cursor.EvaluatedAt)));
                parameters.Add(("$cursor_id", FormatId(cursor.Id)));
            }

            sql.Append(" ORDER BY evaluated_at DESC, id DESC");
            if (query.Limit is { } limit)
            {
                sql.Append(" LIMIT $limit");
                parameters.Add(("$limit", limit));
            }

            return new QueryPlan(sql.Append(';').ToString(), parameters);
        }

        public void Apply(SqliteCommand command)
        {
            command.CommandText = _sql;
            foreach (var (name, value) in _parameters)
            {
                command.Parameters.AddWithValue(name, value);
            }
        }
    }
}
