using System.Globalization;
using System.Runtime.CompilerServices;
using System.Text;
using Npgsql;
using NpgsqlTypes;

namespace DischargeGuard.Audit.Postgres;

/// <summary>
/// The SQL and connections of the PostgreSQL audit store: an unpooled writer connection (binary COPY per batch, the head
/// row locked <c>FOR UPDATE</c> so several replicas take turns), a reader pool of its own, migrations under an advisory
/// lock, and a refusal to run on a server whose COMMIT would return before its WAL is on disk.
/// </summary>
/// <remarks>
/// PostgreSQL keeps microseconds; the 100 ns tick of <see cref="DateTimeOffset"/> is kept in <c>evaluated_at_tick</c>
/// (0 to 9), so a record reads back to the tick and sorts exactly as in SQLite.
/// </remarks>
internal sealed class PostgresAuditBackend : IAuditBackend
{
    /// <summary>The columns every schema version has, in <see cref="ReadRecord"/> order.</summary>
    internal const string BaseColumns =
        "id, evaluated_at, evaluated_at_tick, caller, asset, site_id, verdict, rule_digest, engine_version, request, request_sha256, response, response_sha256, replay_of";

    /// <summary>Every column of a record (version 5 on).</summary>
    internal const string Columns = BaseColumns + ", seq, prev_hash, record_hash, stages";

    private const string CopySql = "COPY evaluations (" + Columns + ") FROM STDIN (FORMAT BINARY)";

    private readonly TimeSpan _commandTimeout;
    private readonly NpgsqlDataSource _writerSource;
    private readonly NpgsqlDataSource _readerSource;

    // Touched only by the writer loop (and by OpenAsync before the loop starts).
    private NpgsqlConnection? _writer;

    public PostgresAuditBackend(PostgresAuditStoreOptions options)
    {
        _commandTimeout = options.CommandTimeout;
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
    }

    public string Kind => "postgresql";

    public int LatestSchemaVersion => PostgresAuditSchema.LatestVersion;

    public async Task OpenAsync(CancellationToken cancellationToken) =>
        await EnsureWriterAsync(migrate: true, cancellationToken).ConfigureAwait(false);

    public async Task<IAuditWriteTransaction> BeginWriteAsync()
    {
        // Not cancellable by any caller: once begun, a transaction is committed or rolled back whole.
        var connection = await EnsureWriterAsync(migrate: false, CancellationToken.None).ConfigureAwait(false);
        var transaction = await connection.BeginTransactionAsync().ConfigureAwait(false);
        return new WriteTransaction(connection, transaction, _commandTimeout);
    }

    public async ValueTask DiscardWriterAsync()
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

        // Idle pooled readers may be dead too (a restarted server); the next read connects afresh.
        _readerSource.Clear();
    }

    public bool IsStoreFailure(Exception exception) => exception is NpgsqlException or TimeoutException;

    public void OnReadFailure(Exception exception)
    {
        // Idle pooled connections may be dead too (a restarted server); drop them so the next read connects afresh.
        if (exception is not PostgresException)
        {
            _readerSource.Clear();
        }
    }

    public async Task<AuditRecord?> GetAsync(Guid id, CancellationToken cancellationToken)
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

    public IAsyncEnumerable<AuditRecord> QueryAsync(AuditQuery query, AuditCursor? cursor, CancellationToken cancellationToken) =>
        ReadAsync(QueryPlan.Build(query, cursor, Columns, query.Limit), ReadRecord, cancellationToken);

    public IAsyncEnumerable<AuditStageHistoryEntry> QueryStagesAsync(AuditQuery query, AuditCursor? cursor, int limit, CancellationToken cancellationToken) =>
        ReadAsync(
            QueryPlan.Build(query, cursor, "id, evaluated_at, evaluated_at_tick, stages", limit),
            r =>
            {
                var id = r.GetGuid(0);
                return new AuditStageHistoryEntry(id, r.GetFieldValue<DateTimeOffset>(1).AddTicks(r.GetInt16(2)), AuditStageCodec.Decode(r.IsDBNull(3) ? null : r.GetString(3), id));
            },
            cancellationToken);

    public async Task<long> CountBeforeAsync(DateTimeOffset before, CancellationToken cancellationToken)
    {
        var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            using var command = connection.CreateCommand();
            command.CommandText = "SELECT count(*) FROM evaluations WHERE seq < coalesce((SELECT min(seq) FROM evaluations WHERE evaluated_at >= @before), (SELECT max(seq) + 1 FROM evaluations), 0);";
            command.Parameters.Add(new NpgsqlParameter("before", NpgsqlDbType.TimestampTz) { Value = before.ToUniversalTime() });
            return Convert.ToInt64(await command.ExecuteScalarAsync(cancellationToken).ConfigureAwait(false), CultureInfo.InvariantCulture);
        }
    }

    public async Task<AuditChainHead> ReadChainHeadAsync(CancellationToken cancellationToken)
    {
        var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            return await ReadChainHeadAsync(connection, cancellationToken).ConfigureAwait(false);
        }
    }

    public async Task<IAuditChainSnapshot> OpenChainSnapshotAsync(CancellationToken cancellationToken)
    {
        var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        try
        {
            // One repeatable-read snapshot: grants, rows and head agree while appends go on.
            var transaction = await connection.BeginTransactionAsync(System.Data.IsolationLevel.RepeatableRead, cancellationToken).ConfigureAwait(false);
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
            return new ChainSnapshot(connection, transaction, grants, head);
        }
        catch
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw;
        }
    }

    public async Task<AuditStorage> GetStorageAsync(CancellationToken cancellationToken)
    {
        var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            using var command = new NpgsqlCommand("SELECT pg_database_size(current_database());", connection);
            var used = Convert.ToInt64(await command.ExecuteScalarAsync(cancellationToken).ConfigureAwait(false), CultureInfo.InvariantCulture);
            return new AuditStorage(null, used);
        }
    }

    public async Task<(int Version, IReadOnlyList<string> MissingGuards)> InspectAsync(CancellationToken cancellationToken)
    {
        var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            var version = await PostgresAuditSchema.CurrentVersionAsync(connection, cancellationToken).ConfigureAwait(false);
            return (version, version == PostgresAuditSchema.LatestVersion ? await PostgresGuards.MissingAsync(connection, cancellationToken).ConfigureAwait(false) : []);
        }
    }

    public async Task<byte[]?> GetRuleSetAsync(string digest, CancellationToken cancellationToken)
    {
        var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            using var command = new NpgsqlCommand("SELECT canonical FROM rule_sets WHERE digest = @digest;", connection);
            command.Parameters.Add(new NpgsqlParameter<string>("digest", NpgsqlDbType.Text) { TypedValue = digest });
            return await command.ExecuteScalarAsync(cancellationToken).ConfigureAwait(false) as byte[];
        }
    }

    public async ValueTask DisposeAsync()
    {
        await _writerSource.DisposeAsync().ConfigureAwait(false);
        await _readerSource.DisposeAsync().ConfigureAwait(false);
    }

    internal static AuditRecord ReadRecord(NpgsqlDataReader reader)
    {
        var id = reader.GetGuid(0);
        return new()
        {
            Id = id,
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
            Stages = reader.FieldCount > 17 && !reader.IsDBNull(17) ? AuditStageCodec.Decode(reader.GetString(17), id) : [],
        };
    }

    /// <summary>The microsecond instant PostgreSQL stores and the 100 ns tick (0 to 9) it cannot.</summary>
    internal static (DateTimeOffset Micros, short Tick) SplitTicks(DateTimeOffset value)
    {
        var ticks = value.UtcTicks;
        var tick = (short)(ticks % 10);
        return (new DateTimeOffset(ticks - tick, TimeSpan.Zero), tick);
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

    private async IAsyncEnumerable<T> ReadAsync<T>(QueryPlan plan, Func<NpgsqlDataReader, T> read, [EnumeratorCancellation] CancellationToken cancellationToken)
    {
        var connection = await _readerSource.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            using var command = new NpgsqlCommand { Connection = connection };
            plan.Apply(command);
            var reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (reader.ConfigureAwait(false))
            {
                while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
                {
                    yield return read(reader);
                }
            }
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

    private static async Task WriteRowAsync(NpgsqlBinaryImporter importer, AuditRecord record)
    {
        var (at, tick) = SplitTicks(record.EvaluatedAt);
        await importer.StartRowAsync().ConfigureAwait(false);
        await importer.WriteAsync(record.Id, NpgsqlDbType.Uuid).ConfigureAwait(false);
        await importer.WriteAsync(at, NpgsqlDbType.TimestampTz).ConfigureAwait(false);
        await importer.WriteAsync(tick, NpgsqlDbType.Smallint).ConfigureAwait(false);
        await importer.WriteAsync(record.Caller, NpgsqlDbType.Text).ConfigureAwait(false);
        await importer.WriteAsync(record.Asset, NpgsqlDbType.Text).ConfigureAwait(false);
        await TextOrNullAsync(importer, record.SiteId).ConfigureAwait(false);
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

        await importer.WriteAsync(record.Sequence!.Value, NpgsqlDbType.Bigint).ConfigureAwait(false);
        await importer.WriteAsync(record.PreviousHash!, NpgsqlDbType.Text).ConfigureAwait(false);
        await importer.WriteAsync(record.RecordHash!, NpgsqlDbType.Text).ConfigureAwait(false);
        await TextOrNullAsync(importer, AuditStageCodec.Encode(record.Stages)).ConfigureAwait(false);

        static async Task TextOrNullAsync(NpgsqlBinaryImporter importer, string? value)
        {
            if (value is null)
            {
                await importer.WriteNullAsync().ConfigureAwait(false);
            }
            else
            {
                await importer.WriteAsync(value, NpgsqlDbType.Text).ConfigureAwait(false);
            }
        }
    }

    /// <summary>A transaction on the writer connection; COMMIT returns after the WAL is flushed (synchronous_commit=on).</summary>
    private sealed class WriteTransaction(NpgsqlConnection connection, NpgsqlTransaction transaction, TimeSpan commandTimeout) : IAuditWriteTransaction
    {
        public async Task<(long Sequence, string Hash)> LockChainHeadAsync()
        {
            // The head row is locked for the transaction: writers of several replicas take turns, so the chain cannot fork.
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

        public async Task InsertAsync(IReadOnlyList<AuditRecord> chained)
        {
            var importer = await connection.BeginBinaryImportAsync(CopySql).ConfigureAwait(false);
            await using (importer.ConfigureAwait(false))
            {
                importer.Timeout = commandTimeout;
                foreach (var record in chained)
                {
                    await WriteRowAsync(importer, record).ConfigureAwait(false);
                }

                await importer.CompleteAsync().ConfigureAwait(false);
            }
        }

        public async Task<(long AnchorSequence, string AnchorHash, string GrantHash)> ReadLastGrantAsync()
        {
            using var command = new NpgsqlCommand("SELECT anchor_seq, anchor_hash, grant_hash FROM retention_grants ORDER BY id DESC LIMIT 1;", connection);
            var reader = await command.ExecuteReaderAsync().ConfigureAwait(false);
            await using (reader.ConfigureAwait(false))
            {
                return await reader.ReadAsync().ConfigureAwait(false)
                    ? (reader.GetInt64(0), reader.GetString(1), reader.GetString(2))
                    : (0L, AuditChain.GenesisHash, AuditChain.GenesisHash);
            }
        }

        public async Task<long> RetentionPrefixEndAsync(DateTimeOffset deleteBefore)
        {
            using var command = new NpgsqlCommand("SELECT coalesce((SELECT min(seq) FROM evaluations WHERE evaluated_at >= @before) - 1, (SELECT max(seq) FROM evaluations), 0);", connection);
            command.Parameters.Add(new NpgsqlParameter("before", NpgsqlDbType.TimestampTz) { Value = deleteBefore });
            return Convert.ToInt64(await command.ExecuteScalarAsync().ConfigureAwait(false), CultureInfo.InvariantCulture);
        }

        public async Task<string> RecordHashAtAsync(long sequence)
        {
            using var command = new NpgsqlCommand("SELECT record_hash FROM evaluations WHERE seq = @seq;", connection);
            command.Parameters.AddWithValue("seq", sequence);
            return (string)(await command.ExecuteScalarAsync().ConfigureAwait(false))!;
        }

        public async Task<long> InsertGrantAsync(StoredGrant grant)
        {
            using var command = new NpgsqlCommand("""
                INSERT INTO retention_grants (granted_at, delete_before, granted_by, reason, anchor_seq, anchor_hash, prev_grant_hash, grant_hash)
                VALUES (@at, @before, @by, @reason, @anchor_seq, @anchor_hash, @prev, @hash) RETURNING id;
                """, connection);
            command.Parameters.Add(new NpgsqlParameter("at", NpgsqlDbType.TimestampTz) { Value = grant.GrantedAt });
            command.Parameters.Add(new NpgsqlParameter("before", NpgsqlDbType.TimestampTz) { Value = grant.DeleteBefore });
            command.Parameters.Add(new NpgsqlParameter("by", grant.GrantedBy));
            command.Parameters.Add(new NpgsqlParameter("reason", grant.Reason));
            command.Parameters.Add(new NpgsqlParameter("anchor_seq", grant.AnchorSequence));
            command.Parameters.Add(new NpgsqlParameter("anchor_hash", grant.AnchorHash));
            command.Parameters.Add(new NpgsqlParameter("prev", grant.PreviousGrantHash));
            command.Parameters.Add(new NpgsqlParameter("hash", grant.GrantHash));
            return Convert.ToInt64(await command.ExecuteScalarAsync().ConfigureAwait(false), CultureInfo.InvariantCulture);
        }

        public async Task<long> DeleteThroughAsync(long anchorSequence)
        {
            using var command = new NpgsqlCommand("DELETE FROM evaluations WHERE seq <= @anchor;", connection);
            command.Parameters.Add(new NpgsqlParameter("anchor", anchorSequence));
            return await command.ExecuteNonQueryAsync().ConfigureAwait(false);
        }

        public async Task<bool> InsertRuleSetIfMissingAsync(string digest, byte[] canonical)
        {
            using var command = new NpgsqlCommand("INSERT INTO rule_sets (digest, canonical) VALUES (@digest, @canonical) ON CONFLICT (digest) DO NOTHING;", connection);
            command.Parameters.Add(new NpgsqlParameter<string>("digest", NpgsqlDbType.Text) { TypedValue = digest });
            command.Parameters.Add(new NpgsqlParameter<byte[]>("canonical", NpgsqlDbType.Bytea) { TypedValue = canonical });
            return await command.ExecuteNonQueryAsync().ConfigureAwait(false) == 1;
        }

        public async Task ProbeAsync() =>
            await PostgresAuditSchema.ExecuteAsync(connection,
                "INSERT INTO health_probe (id, checked_at) VALUES (1, now()) ON CONFLICT (id) DO UPDATE SET checked_at = excluded.checked_at;",
                CancellationToken.None).ConfigureAwait(false);

        public Task CommitAsync() => transaction.CommitAsync();

        public ValueTask DisposeAsync() => transaction.DisposeAsync();
    }

    /// <summary>A repeatable-read transaction on a pooled reader.</summary>
    private sealed class ChainSnapshot(NpgsqlConnection connection, NpgsqlTransaction transaction, IReadOnlyList<StoredGrant> grants, AuditChainHead head) : IAuditChainSnapshot
    {
        public IReadOnlyList<StoredGrant> Grants => grants;

        public AuditChainHead Head => head;

        public async IAsyncEnumerable<AuditRecord> ReadRecordsAsync([EnumeratorCancellation] CancellationToken cancellationToken)
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

        public async ValueTask DisposeAsync()
        {
            await transaction.DisposeAsync().ConfigureAwait(false);
            await connection.DisposeAsync().ConfigureAwait(false);
        }
    }

    /// <summary>The SQL and parameters of one query, built from a validated <see cref="AuditQuery"/>.</summary>
    internal sealed class QueryPlan
    {
        private readonly List<NpgsqlParameter> _parameters;

        private QueryPlan(string sql, List<NpgsqlParameter> parameters)
        {
            Sql = sql;
            _parameters = parameters;
        }

        /// <summary>The statement, for tests that check its query plan.</summary>
        public string Sql { get; }

        public static QueryPlan Build(AuditQuery query, AuditCursor? cursor, string columns, int? limit)
        {
            var sql = new StringBuilder("SELECT " + columns + " FROM evaluations WHERE true");
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

            if (cursor is { } c)
            {
                // Strictly after the cursor in (evaluated_at DESC, evaluated_at_tick DESC, id DESC) order; a row
                // comparison the btree index scans from directly.
                sql.Append(" AND (evaluated_at, evaluated_at_tick, id) < (@cursor_at, @cursor_tick, @cursor_id)");
                Instant("cursor", c.EvaluatedAt);
                parameters.Add(new NpgsqlParameter<Guid>("cursor_id", NpgsqlDbType.Uuid) { TypedValue = c.Id });
            }

            sql.Append(" ORDER BY evaluated_at DESC, evaluated_at_tick DESC, id DESC");
            if (limit is { } l)
            {
                sql.Append(" LIMIT @limit");
                parameters.Add(new NpgsqlParameter<int>("limit", NpgsqlDbType.Integer) { TypedValue = l });
            }

            return new QueryPlan(sql.Append(';').ToString(), parameters);
        }

        public void Apply(NpgsqlCommand command)
        {
            command.CommandText = Sql;
            foreach (var parameter in _parameters)
            {
                command.Parameters.Add(parameter.Clone());
            }
        }
    }
}
