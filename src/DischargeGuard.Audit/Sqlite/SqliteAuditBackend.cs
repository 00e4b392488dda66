using System.Globalization;
using System.Runtime.CompilerServices;
using System.Text;
using Microsoft.Data.Sqlite;

namespace DischargeGuard.Audit.Sqlite;

/// <summary>
/// The SQL and connections of the SQLite audit store: one file in WAL mode with <c>synchronous=FULL</c>, a writer
/// connection of its own (not pooled: one dropped after a failure must really close), and pooled <c>query_only</c>
/// readers that, thanks to WAL, neither wait for nor delay the writer.
/// </summary>
internal sealed class SqliteAuditBackend : IAuditBackend
{
    /// <summary>The columns every schema version since 4 has, in <see cref="ReadRecord"/> order.</summary>
    internal const string BaseColumns =
        "id, evaluated_at, caller, asset, site_id, verdict, rule_digest, engine_version, request, request_sha256, response, response_sha256, replay_of";

    /// <summary>The columns since the chain (version 7), read when sealing it.</summary>
    internal const string ChainColumns = BaseColumns + ", seq, prev_hash, record_hash";

    /// <summary>Every column of a record (version 8 on).</summary>
    internal const string Columns = ChainColumns + ", stages";

    private const string InsertSql =
        "INSERT INTO evaluations (" + Columns + ") VALUES ($id, $evaluated_at, $caller, $asset, $site_id, $verdict, $rule_digest, $engine_version, $request, $request_sha256, $response, $response_sha256, $replay_of, $seq, $prev_hash, $record_hash, $stages);";

    // Records a retention run with this cut-off would delete: the chain's first run evaluated before it.
    private const string CountPrefixSql =
        "SELECT count(*) FROM evaluations WHERE seq < coalesce((SELECT min(seq) FROM evaluations WHERE evaluated_at >= $before), (SELECT max(seq) + 1 FROM evaluations), 0);";

    private readonly TimeSpan _busyTimeout;
    private readonly string _writerConnectionString;
    private readonly string _readerConnectionString;

    // Touched only by the writer loop (and by OpenAsync before the loop starts).
    private SqliteConnection? _writer;
    private SqliteCommand? _insert;
    private long? _maxPageCountForTesting;
    private long _defaultMaxPageCount;

    public SqliteAuditBackend(string fullPath, TimeSpan busyTimeout)
    {
        DatabasePath = fullPath;
        _busyTimeout = busyTimeout;
        var timeoutSeconds = (int)Math.Ceiling(busyTimeout.TotalSeconds);
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
    }

    public string DatabasePath { get; }

    public string Kind => "sqlite";

    public int LatestSchemaVersion => AuditSchema.LatestVersion;

    public Task OpenAsync(CancellationToken cancellationToken) => Task.Run(
        () =>
        {
            var directory = Path.GetDirectoryName(DatabasePath);
            if (!string.IsNullOrEmpty(directory))
            {
                Directory.CreateDirectory(directory);
            }

            EnsureWriter(migrate: true);
        },
        cancellationToken);

    public Task<IAuditWriteTransaction> BeginWriteAsync()
    {
        var connection = EnsureWriter(migrate: false);
        AuditSchema.Execute(connection, "BEGIN IMMEDIATE;");
        return Task.FromResult<IAuditWriteTransaction>(new WriteTransaction(connection, _insert!));
    }

    public ValueTask DiscardWriterAsync()
    {
        if (_writer is not null)
        {
            AuditSchema.RollbackQuietly(_writer);
        }

        _insert?.Dispose();
        _insert = null;
        _writer?.Dispose();
        _writer = null;
        return ValueTask.CompletedTask;
    }

    public bool IsStoreFailure(Exception exception) => exception is SqliteException or IOException or UnauthorizedAccessException;

    public void OnReadFailure(Exception exception)
    {
    }

    public async Task<AuditRecord?> GetAsync(Guid id, CancellationToken cancellationToken)
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

    public IAsyncEnumerable<AuditRecord> QueryAsync(AuditQuery query, AuditCursor? cursor, CancellationToken cancellationToken) =>
        ReadAsync(QueryPlan.Build(query, cursor, Columns, query.Limit), ReadRecord, cancellationToken);

    public IAsyncEnumerable<AuditStageHistoryEntry> QueryStagesAsync(AuditQuery query, AuditCursor? cursor, int limit, CancellationToken cancellationToken) =>
        ReadAsync(
            QueryPlan.Build(query, cursor, "id, evaluated_at, stages", limit),
            r =>
            {
                var id = Guid.ParseExact(r.GetString(0), "D");
                return new AuditStageHistoryEntry(id, AuditTime.Parse(r.GetString(1)), AuditStageCodec.Decode(r.IsDBNull(2) ? null : r.GetString(2), id));
            },
            cancellationToken);

    public async Task<long> CountBeforeAsync(DateTimeOffset before, CancellationToken cancellationToken)
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

    public async Task<AuditChainHead> ReadChainHeadAsync(CancellationToken cancellationToken)
    {
        var connection = await OpenReaderAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            return ReadChainHead(connection);
        }
    }

    public async Task<IAuditChainSnapshot> OpenChainSnapshotAsync(CancellationToken cancellationToken)
    {
        var connection = await OpenReaderAsync(cancellationToken).ConfigureAwait(false);
        try
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

            return new ChainSnapshot(connection, grants, ReadChainHead(connection));
        }
        catch
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw;
        }
    }

    public Task<AuditStorage> GetStorageAsync(CancellationToken cancellationToken)
    {
        // The volume of the file's directory (a mounted volume, not the root file system, in a container).
        var drive = new DriveInfo(Path.GetDirectoryName(DatabasePath)!);
        var used = SizeOf(DatabasePath) + SizeOf(DatabasePath + "-wal");
        return Task.FromResult(new AuditStorage(drive.AvailableFreeSpace, used));

        static long SizeOf(string path) => File.Exists(path) ? new FileInfo(path).Length : 0;
    }

    public async Task<(int Version, IReadOnlyList<string> MissingGuards)> InspectAsync(CancellationToken cancellationToken)
    {
        var connection = await OpenReaderAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            var version = AuditSchema.CurrentVersion(connection);
            return (version, version == AuditSchema.LatestVersion ? SqliteGuards.Missing(connection) : []);
        }
    }

    public async Task<byte[]?> GetRuleSetAsync(string digest, CancellationToken cancellationToken)
    {
        var connection = await OpenReaderAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            using var command = connection.CreateCommand();
            command.CommandText = "SELECT canonical FROM rule_sets WHERE digest = $digest;";
            command.Parameters.AddWithValue("$digest", digest);
            return await command.ExecuteScalarAsync(cancellationToken).ConfigureAwait(false) as byte[];
        }
    }

    public ValueTask DisposeAsync()
    {
        using (var pooled = new SqliteConnection(_readerConnectionString))
        {
            // Idle pooled readers hold the file open; release them so the file can be moved or deleted.
            SqliteConnection.ClearPool(pooled);
        }

        return ValueTask.CompletedTask;
    }

    /// <summary>Caps the writer's <c>max_page_count</c> (null restores the default); re-applied on reconnect. Writer only.</summary>
    /// <returns>The database's page count.</returns>
    internal long SetMaxPageCount(long? maxPages)
    {
        _maxPageCountForTesting = maxPages;
        var connection = EnsureWriter(migrate: false);
        ApplyMaxPageCount(connection);
        using var command = connection.CreateCommand();
        command.CommandText = "PRAGMA page_count;";
        return Convert.ToInt64(command.ExecuteScalar(), CultureInfo.InvariantCulture);
    }

    internal static AuditRecord ReadRecord(SqliteDataReader reader)
    {
        var id = Guid.ParseExact(reader.GetString(0), "D");
        return new()
        {
            Id = id,
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
            Stages = reader.FieldCount > 16 && !reader.IsDBNull(16) ? AuditStageCodec.Decode(reader.GetString(16), id) : [],
        };
    }

    internal static string FormatId(Guid id) => id.ToString("D", CultureInfo.InvariantCulture);

    private static AuditChainHead ReadChainHead(SqliteConnection connection)
    {
        using var command = connection.CreateCommand();
        command.CommandText = "SELECT seq, record_id, hash FROM audit_chain_head WHERE id = 1;";
        using var reader = command.ExecuteReader();
        return reader.Read()
            ? new AuditChainHead(reader.GetInt64(0), reader.IsDBNull(1) ? null : Guid.ParseExact(reader.GetString(1), "D"), reader.GetString(2))
            : new AuditChainHead(-1, null, "(no chain head row)");
    }

    private async IAsyncEnumerable<T> ReadAsync<T>(QueryPlan plan, Func<SqliteDataReader, T> read, [EnumeratorCancellation] CancellationToken cancellationToken)
    {
        var connection = await OpenReaderAsync(cancellationToken).ConfigureAwait(false);
        await using (connection.ConfigureAwait(false))
        {
            using var command = connection.CreateCommand();
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

    private async Task<SqliteConnection> OpenReaderAsync(CancellationToken cancellationToken)
    {
        var connection = new SqliteConnection(_readerConnectionString);
        try
        {
            await connection.OpenAsync(cancellationToken).ConfigureAwait(false);

            // Readers never write, even by mistake.
            AuditSchema.Execute(connection, string.Create(CultureInfo.InvariantCulture,
                $"PRAGMA query_only = ON; PRAGMA busy_timeout = {(long)_busyTimeout.TotalMilliseconds};"));
            return connection;
        }
        catch
        {
            await connection.DisposeAsync().ConfigureAwait(false);
            throw;
        }
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
                PRAGMA busy_timeout = {(long)_busyTimeout.TotalMilliseconds};
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
            foreach (var name in (string[])["$id", "$evaluated_at", "$caller", "$asset", "$site_id", "$verdict", "$rule_digest", "$engine_version", "$request_sha256", "$response_sha256", "$replay_of", "$prev_hash", "$record_hash", "$stages"])
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

    private static void Bind(SqliteCommand insert, AuditRecord record)
    {
        var p = insert.Parameters;
        p["$seq"].Value = record.Sequence!.Value;
        p["$prev_hash"].Value = record.PreviousHash;
        p["$record_hash"].Value = record.RecordHash;
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
        p["$stages"].Value = (object?)AuditStageCodec.Encode(record.Stages) ?? DBNull.Value;
    }

    /// <summary>A <c>BEGIN IMMEDIATE</c> transaction on the writer: the file's write lock is held from its start.</summary>
    private sealed class WriteTransaction(SqliteConnection connection, SqliteCommand insert) : IAuditWriteTransaction
    {
        private bool _committed;

        public Task<(long Sequence, string Hash)> LockChainHeadAsync()
        {
            using var command = connection.CreateCommand();
            command.CommandText = "SELECT seq, hash FROM audit_chain_head WHERE id = 1;";
            using var reader = command.ExecuteReader();
            return reader.Read()
                ? Task.FromResult((reader.GetInt64(0), reader.GetString(1)))
                : throw new InvalidOperationException("The audit chain head is missing.");
        }

        public Task InsertAsync(IReadOnlyList<AuditRecord> chained)
        {
            foreach (var record in chained)
            {
                Bind(insert, record);
                insert.ExecuteNonQuery();
            }

            return Task.CompletedTask;
        }

        public Task<(long AnchorSequence, string AnchorHash, string GrantHash)> ReadLastGrantAsync()
        {
            using var command = connection.CreateCommand();
            command.CommandText = "SELECT anchor_seq, anchor_hash, grant_hash FROM retention_grants ORDER BY id DESC LIMIT 1;";
            using var reader = command.ExecuteReader();
            return Task.FromResult(reader.Read()
                ? (reader.GetInt64(0), reader.GetString(1), reader.GetString(2))
                : (0L, AuditChain.GenesisHash, AuditChain.GenesisHash));
        }

        public Task<long> RetentionPrefixEndAsync(DateTimeOffset deleteBefore)
        {
            using var command = connection.CreateCommand();
            command.CommandText = "SELECT coalesce((SELECT min(seq) FROM evaluations WHERE evaluated_at >= $before) - 1, (SELECT max(seq) FROM evaluations), 0);";
            command.Parameters.AddWithValue("$before", AuditTime.Format(deleteBefore));
            return Task.FromResult(Convert.ToInt64(command.ExecuteScalar(), CultureInfo.InvariantCulture));
        }

        public Task<string> RecordHashAtAsync(long sequence)
        {
            using var command = connection.CreateCommand();
            command.CommandText = "SELECT record_hash FROM evaluations WHERE seq = $seq;";
            command.Parameters.AddWithValue("$seq", sequence);
            return Task.FromResult((string)command.ExecuteScalar()!);
        }

        public Task<long> InsertGrantAsync(StoredGrant grant)
        {
            using var command = connection.CreateCommand();
            command.CommandText = """
                INSERT INTO retention_grants (granted_at, delete_before, granted_by, reason, anchor_seq, anchor_hash, prev_grant_hash, grant_hash)
                VALUES ($at, $before, $by, $reason, $anchor_seq, $anchor_hash, $prev, $hash) RETURNING id;
                """;
            command.Parameters.AddWithValue("$at", AuditTime.Format(grant.GrantedAt));
            command.Parameters.AddWithValue("$before", AuditTime.Format(grant.DeleteBefore));
            command.Parameters.AddWithValue("$by", grant.GrantedBy);
            command.Parameters.AddWithValue("$reason", grant.Reason);
            command.Parameters.AddWithValue("$anchor_seq", grant.AnchorSequence);
            command.Parameters.AddWithValue("$anchor_hash", grant.AnchorHash);
            command.Parameters.AddWithValue("$prev", grant.PreviousGrantHash);
            command.Parameters.AddWithValue("$hash", grant.GrantHash);
            return Task.FromResult(Convert.ToInt64(command.ExecuteScalar(), CultureInfo.InvariantCulture));
        }

        public Task<long> DeleteThroughAsync(long anchorSequence)
        {
            using var command = connection.CreateCommand();
            command.CommandText = "DELETE FROM evaluations WHERE seq <= $anchor;";
            command.Parameters.AddWithValue("$anchor", anchorSequence);
            return Task.FromResult((long)command.ExecuteNonQuery());
        }

        public Task<bool> InsertRuleSetIfMissingAsync(string digest, byte[] canonical)
        {
            // Not INSERT OR IGNORE: the no-replace trigger fires before the conflict check and would abort the statement.
            using var command = connection.CreateCommand();
            command.CommandText = """
                INSERT INTO rule_sets (digest, canonical, archived_at)
                SELECT $digest, $canonical, $at WHERE NOT EXISTS (SELECT 1 FROM rule_sets WHERE digest = $digest);
                """;
            command.Parameters.AddWithValue("$digest", digest);
            command.Parameters.Add("$canonical", SqliteType.Blob).Value = canonical;
            command.Parameters.AddWithValue("$at", AuditTime.Format(DateTimeOffset.UtcNow));
            return Task.FromResult(command.ExecuteNonQuery() == 1);
        }

        public Task ProbeAsync()
        {
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
            return Task.CompletedTask;
        }

        public Task CommitAsync()
        {
            // With WAL and synchronous=FULL, COMMIT returns after the log is fsynced.
            AuditSchema.Execute(connection, "COMMIT;");
            _committed = true;
            return Task.CompletedTask;
        }

        public ValueTask DisposeAsync()
        {
            if (!_committed)
            {
                AuditSchema.RollbackQuietly(connection);
            }

            return ValueTask.CompletedTask;
        }
    }

    /// <summary>A read transaction on a reader connection: grants, head and rows from one WAL snapshot.</summary>
    private sealed class ChainSnapshot(SqliteConnection connection, IReadOnlyList<StoredGrant> grants, AuditChainHead head) : IAuditChainSnapshot
    {
        public IReadOnlyList<StoredGrant> Grants => grants;

        public AuditChainHead Head => head;

        public async IAsyncEnumerable<AuditRecord> ReadRecordsAsync([EnumeratorCancellation] CancellationToken cancellationToken)
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

        public async ValueTask DisposeAsync()
        {
            AuditSchema.RollbackQuietly(connection);
            await connection.DisposeAsync().ConfigureAwait(false);
        }
    }

    /// <summary>The SQL and parameters of one query, built from a validated <see cref="AuditQuery"/>.</summary>
    internal sealed class QueryPlan
    {
        private readonly List<(string Name, object Value)> _parameters;

        private QueryPlan(string sql, List<(string Name, object Value)> parameters)
        {
            Sql = sql;
            _parameters = parameters;
        }

        /// <summary>The statement, for tests that check its query plan.</summary>
        public string Sql { get; }

        /// <summary>The plan of <paramref name="query"/> (validated here, as the store does).</summary>
        public static QueryPlan Build(AuditQuery query) => Build(query, AuditStore.ValidateQuery(query), Columns, query.Limit);

        public static QueryPlan Build(AuditQuery query, AuditCursor? cursor, string columns, int? limit)
        {
            var sql = new StringBuilder("SELECT " + columns + " FROM evaluations WHERE 1 = 1");
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

            if (cursor is { } c)
            {
                // Strictly after the cursor in (evaluated_at DESC, id DESC) order. Written as a range on evaluated_at plus a
                // tie-break so the index scan starts at the cursor instead of filtering from the newest row.
                sql.Append(" AND evaluated_at <= $cursor_at AND (evaluated_at < $cursor_at OR id < $cursor_id)");
                parameters.Add(("$cursor_at", AuditTime.Format(c.EvaluatedAt)));
                parameters.Add(("$cursor_id", FormatId(c.Id)));
            }

            sql.Append(" ORDER BY evaluated_at DESC, id DESC");
            if (limit is { } l)
            {
                sql.Append(" LIMIT $limit");
                parameters.Add(("$limit", l));
            }

            return new QueryPlan(sql.Append(';').ToString(), parameters);
        }

        public void Apply(SqliteCommand command)
        {
            command.CommandText = Sql;
            foreach (var (name, value) in _parameters)
            {
                command.Parameters.AddWithValue(name, value);
            }
        }
    }
}
