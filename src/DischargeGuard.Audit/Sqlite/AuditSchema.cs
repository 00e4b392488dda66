using System.Globalization;
using Microsoft.Data.Sqlite;

namespace DischargeGuard.Audit.Sqlite;

/// <summary>One schema step: applied once, in order, in its own transaction with its row in <c>schema_migrations</c>.</summary>
/// <param name="Version">Its number, one more than the step before.</param>
/// <param name="Description">What it does, kept in the table for whoever opens the file.</param>
/// <param name="Sql">The statements.</param>
/// <param name="AfterSeal">
/// When set, the step seals the hash chain: <paramref name="Sql"/> runs, then the store's code computes the chain over the
/// existing rows in order, then these statements run, all in the step's one transaction.
/// </param>
internal sealed record AuditMigration(int Version, string Description, string Sql, string? AfterSeal = null);

/// <summary>The versioned schema of the SQLite audit store and the code that brings a file up to date.</summary>
/// <remarks>
/// Steps are never edited once shipped: a change is a new step. Times are TEXT in the fixed-width form of
/// <see cref="AuditTime"/>, so text order is time order and equality is exact to the tick.
/// </remarks>
internal static class AuditSchema
{
    public static readonly IReadOnlyList<AuditMigration> Migrations =
    [
        new(1, "evaluations table and its time index", """
            CREATE TABLE evaluations (
                id              TEXT NOT NULL PRIMARY KEY CHECK (length(id) = 36),
                evaluated_at    TEXT NOT NULL CHECK (length(evaluated_at) = 28),
                caller          TEXT NOT NULL,
                asset           TEXT NOT NULL,
                site_id         TEXT,
                verdict         TEXT NOT NULL CHECK (verdict IN ('pass', 'review', 'fail')),
                rule_digest     TEXT NOT NULL CHECK (length(rule_digest) = 64),
                engine_version  TEXT NOT NULL,
                request         BLOB NOT NULL,
                request_sha256  TEXT NOT NULL CHECK (length(request_sha256) = 64),
                response        BLOB NOT NULL,
                response_sha256 TEXT NOT NULL CHECK (length(response_sha256) = 64)
            ) STRICT;
            CREATE INDEX ix_evaluations_time ON evaluations (evaluated_at, id);
            """),
        new(2, "append-only triggers and the retention grants that alone may open deletion", """
            CREATE TABLE retention_grants (
                id            INTEGER PRIMARY KEY,
                granted_at    TEXT NOT NULL,
                delete_before TEXT NOT NULL CHECK (length(delete_before) = 28),
                granted_by    TEXT NOT NULL,
                reason        TEXT NOT NULL
            ) STRICT;
            CREATE TRIGGER evaluations_no_update BEFORE UPDATE ON evaluations
            BEGIN
                SELECT RAISE(ABORT, 'evaluations are append-only');
            END;
            CREATE TRIGGER evaluations_no_delete BEFORE DELETE ON evaluations
            WHEN NOT EXISTS (SELECT 1 FROM retention_grants WHERE OLD.evaluated_at < retention_grants.delete_before)
            BEGIN
                SELECT RAISE(ABORT, 'evaluations are append-only');
            END;
            -- INSERT OR REPLACE deletes the old row without firing the delete trigger; refuse it here.
            CREATE TRIGGER evaluations_no_replace BEFORE INSERT ON evaluations
            WHEN EXISTS (SELECT 1 FROM evaluations WHERE id = NEW.id)
            BEGIN
                SELECT RAISE(ABORT, 'evaluations are append-only');
            END;
            CREATE TRIGGER retention_grants_no_update BEFORE UPDATE ON retention_grants
            BEGIN
                SELECT RAISE(ABORT, 'retention grants are append-only');
            END;
            CREATE TRIGGER retention_grants_no_delete BEFORE DELETE ON retention_grants
            BEGIN
                SELECT RAISE(ABORT, 'retention grants are append-only');
            END;
            """),
        new(3, "indexes for history queries by asset, site and verdict", """
            -- Each ends in the full sort key (evaluated_at, id) in one direction, so a filtered newest-first page
            -- is one index scan from the cursor with no sort step.
            CREATE INDEX ix_evaluations_asset ON evaluations (asset, evaluated_at DESC, id DESC);
            CREATE INDEX ix_evaluations_site ON evaluations (site_id, evaluated_at, id);
            CREATE INDEX ix_evaluations_verdict ON evaluations (verdict, evaluated_at, id);
            """),
        new(4, "replay_of column for evaluations that replay an earlier one", """
            ALTER TABLE evaluations ADD COLUMN replay_of TEXT CHECK (replay_of IS NULL OR length(replay_of) = 36);
            """),
        new(5, "health probe table written by the health check", """
            CREATE TABLE health_probe (
                id         INTEGER PRIMARY KEY CHECK (id = 1),
                checked_at TEXT NOT NULL
            ) STRICT;
            """),
        new(6, "health probe room table, written and rolled back to prove new pages can be allocated", """
            CREATE TABLE health_probe_room (
                pad BLOB NOT NULL
            ) STRICT;
            """),
        new(7, "hash chain over whole rows, chained retention grants with their anchor, and the chain head; existing rows sealed in order", """
            ALTER TABLE evaluations ADD COLUMN seq INTEGER;
            ALTER TABLE evaluations ADD COLUMN prev_hash TEXT;
            ALTER TABLE evaluations ADD COLUMN record_hash TEXT;
            ALTER TABLE retention_grants ADD COLUMN anchor_seq INTEGER;
            ALTER TABLE retention_grants ADD COLUMN anchor_hash TEXT;
            ALTER TABLE retention_grants ADD COLUMN prev_grant_hash TEXT;
            ALTER TABLE retention_grants ADD COLUMN grant_hash TEXT;
            CREATE TABLE audit_chain_head (
                id        INTEGER PRIMARY KEY CHECK (id = 1),
                seq       INTEGER NOT NULL,
                record_id TEXT,
                hash      TEXT NOT NULL CHECK (length(hash) = 64)
            ) STRICT;
            DROP TRIGGER evaluations_no_update;
            DROP TRIGGER evaluations_no_delete;
            DROP TRIGGER evaluations_no_replace;
            DROP TRIGGER retention_grants_no_update;
            DROP TRIGGER retention_grants_no_delete;
            """,
            "CREATE UNIQUE INDEX ix_evaluations_seq ON evaluations (seq);\n" + string.Join(";\n", SqliteGuards.Triggers.Select(t => t.Sql)) + ";"),
        new(8, "per-stage summaries stored with each record, and the append-only archive of canonical rule sets by digest", """
            -- NULL for a record without stages (every record written before this step), which keeps its version 1 hash.
            ALTER TABLE evaluations ADD COLUMN stages TEXT CHECK (stages IS NULL OR (json_valid(stages) AND json_type(stages) = 'array'));
            CREATE TABLE rule_sets (
                digest      TEXT NOT NULL PRIMARY KEY CHECK (length(digest) = 64 AND digest NOT GLOB '*[^0-9a-f]*'),
                canonical   BLOB NOT NULL CHECK (length(canonical) > 0),
                archived_at TEXT NOT NULL CHECK (length(archived_at) = 28)
            ) STRICT;
            """ + string.Join(";\n", SqliteGuards.RuleSetTriggers.Select(t => t.Sql)) + ";"),
    ];

    /// <summary>The version a file has after every step.</summary>
    public static int LatestVersion => Migrations[^1].Version;

    /// <summary>
    /// Applies every step above the file's version up to <paramref name="targetVersion"/>; does nothing when it is there.
    /// Safe against another process migrating the same file: each step re-reads the version under the write lock.
    /// </summary>
    /// <param name="connection">An open connection.</param>
    /// <param name="targetVersion">The version to reach; tests pass an older one to make an old file.</param>
    /// <returns>The versions applied.</returns>
    /// <exception cref="InvalidOperationException">The file's schema is newer than this code knows.</exception>
    public static IReadOnlyList<int> Migrate(SqliteConnection connection, int targetVersion)
    {
        Execute(connection, """
            CREATE TABLE IF NOT EXISTS schema_migrations (
                version     INTEGER PRIMARY KEY,
                applied_at  TEXT NOT NULL,
                description TEXT NOT NULL
            ) STRICT;
            """);

        var applied = new List<int>();
        foreach (var migration in Migrations)
        {
            if (migration.Version > targetVersion)
            {
                break;
            }

            Execute(connection, "BEGIN IMMEDIATE;");
            try
            {
                var current = CurrentVersion(connection);
                if (current > LatestVersion)
                {
                    throw new InvalidOperationException(string.Create(CultureInfo.InvariantCulture,
                        $"The audit database is at schema version {current}; this build knows up to {LatestVersion}."));
                }

                if (migration.Version <= current)
                {
                    Execute(connection, "COMMIT;");
                    continue;
                }

                Execute(connection, migration.Sql);
                if (migration.AfterSeal is not null)
                {
                    SqliteChainSeal.Seal(connection);
                    Execute(connection, migration.AfterSeal);
                }

                using (var insert = connection.CreateCommand())
                {
                    insert.CommandText = "INSERT INTO schema_migrations (version, applied_at, description) VALUES ($v, $at, $d);";
                    insert.Parameters.AddWithValue("$v", migration.Version);
                    insert.Parameters.AddWithValue("$at", AuditTime.Format(DateTimeOffset.UtcNow));
                    insert.Parameters.AddWithValue("$d", migration.Description);
                    insert.ExecuteNonQuery();
                }

                Execute(connection, "COMMIT;");
                applied.Add(migration.Version);
            }
            catch
            {
                RollbackQuietly(connection);
                throw;
            }
        }

        // A file newer than this build is refused even when nothing was left to apply.
        var final = CurrentVersion(connection);
        if (final > LatestVersion)
        {
            throw new InvalidOperationException(string.Create(CultureInfo.InvariantCulture,
                $"The audit database is at schema version {final}; this build knows up to {LatestVersion}."));
        }

        return applied;
    }

    /// <summary>The highest applied version, 0 for a new file.</summary>
    /// <param name="connection">An open connection.</param>
    /// <returns>The version.</returns>
    public static int CurrentVersion(SqliteConnection connection)
    {
        using var command = connection.CreateCommand();
        command.CommandText = "SELECT coalesce(max(version), 0) FROM schema_migrations;";
        return Convert.ToInt32(command.ExecuteScalar(), CultureInfo.InvariantCulture);
    }

    internal static void Execute(SqliteConnection connection, string sql)
    {
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        command.ExecuteNonQuery();
    }

    /// <summary>Rolls back an open transaction, if SQLite has not already done so after an error.</summary>
    /// <param name="connection">The connection.</param>
    internal static void RollbackQuietly(SqliteConnection connection)
    {
        try
        {
            if (connection.State == System.Data.ConnectionState.Open && !IsAutocommit(connection))
            {
                Execute(connection, "ROLLBACK;");
            }
        }
        catch (SqliteException)
        {
            // The connection is discarded by the caller; a failed rollback leaves nothing committed.
        }
    }

    private static bool IsAutocommit(SqliteConnection connection) =>
        SQLitePCL.raw.sqlite3_get_autocommit(connection.Handle) != 0;
}
