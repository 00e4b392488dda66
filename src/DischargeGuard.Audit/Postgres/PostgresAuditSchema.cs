using System.Globalization;
using DischargeGuard.Audit.Sqlite;
using Npgsql;

namespace DischargeGuard.Audit.Postgres;

/// <summary>The versioned schema of the PostgreSQL audit store and the code that brings a database up to date.</summary>
/// <remarks>
/// Steps are never edited once shipped: a change is a new step. The whole upgrade runs in one transaction that
/// first takes a transaction-scoped advisory lock, so two replicas starting at once apply each step once: the
/// second waits for the first to commit, then finds nothing left to do.
/// </remarks>
internal static class PostgresAuditSchema
{
    /// <summary>The advisory lock key taken around migration ("DGAUDIT" in ASCII).</summary>
    public const long MigrationLockKey = 0x44_47_41_55_44_49_54;

    public static readonly IReadOnlyList<AuditMigration> Migrations =
    [
        new(1, "evaluations table and its indexes", """
            CREATE TABLE evaluations (
                id                uuid        NOT NULL PRIMARY KEY,
                evaluated_at      timestamptz NOT NULL,
                evaluated_at_tick smallint    NOT NULL DEFAULT 0 CHECK (evaluated_at_tick BETWEEN 0 AND 9),
                caller            text        NOT NULL CHECK (length(caller) BETWEEN 1 AND 256),
                asset             text        NOT NULL CHECK (length(asset) BETWEEN 1 AND 256),
                site_id           text        CHECK (site_id IS NULL OR length(site_id) BETWEEN 1 AND 256),
                verdict           text        NOT NULL CHECK (verdict IN ('pass', 'review', 'fail')),
                rule_digest       text        NOT NULL CHECK (rule_digest ~ '^[0-9a-f]{64}$'),
                engine_version    text        NOT NULL CHECK (length(engine_version) BETWEEN 1 AND 256),
                request           bytea       NOT NULL,
                request_sha256    text        NOT NULL CHECK (request_sha256 ~ '^[0-9a-f]{64}$'),
                response          bytea       NOT NULL,
                response_sha256   text        NOT NULL CHECK (response_sha256 ~ '^[0-9a-f]{64}$'),
                replay_of         uuid,
                -- The server checks the hashes too: a row whose bytes and hash disagree cannot be stored.
                CONSTRAINT evaluations_request_hash CHECK (request_sha256 = encode(sha256(request), 'hex')),
                CONSTRAINT evaluations_response_hash CHECK (response_sha256 = encode(sha256(response), 'hex'))
            );
            -- Each ends in the full sort key (evaluated_at, evaluated_at_tick, id), so a filtered newest-first page
            -- is one backward index scan from the cursor with no sort step.
            CREATE INDEX ix_evaluations_time ON evaluations (evaluated_at, evaluated_at_tick, id);
            CREATE INDEX ix_evaluations_asset ON evaluations (asset, evaluated_at, evaluated_at_tick, id);
            CREATE INDEX ix_evaluations_site ON evaluations (site_id, evaluated_at, evaluated_at_tick, id);
            CREATE INDEX ix_evaluations_verdict ON evaluations (verdict, evaluated_at, evaluated_at_tick, id);
            """),
        new(2, "append-only triggers and the retention grants that alone may open deletion", """
            CREATE TABLE retention_grants (
                id            bigint      GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
                granted_at    timestamptz NOT NULL DEFAULT now(),
                delete_before timestamptz NOT NULL,
                granted_by    text        NOT NULL,
                reason        text        NOT NULL
            );
            CREATE FUNCTION evaluations_append_only() RETURNS trigger LANGUAGE plpgsql AS $fn$
            BEGIN
                IF TG_OP = 'DELETE' AND EXISTS (SELECT 1 FROM retention_grants g WHERE OLD.evaluated_at < g.delete_before) THEN
                    RETURN OLD;
                END IF;
                RAISE EXCEPTION 'evaluations are append-only' USING ERRCODE = 'restrict_violation';
            END;
            $fn$;
            CREATE TRIGGER evaluations_no_update_or_delete BEFORE UPDATE OR DELETE ON evaluations
                FOR EACH ROW EXECUTE FUNCTION evaluations_append_only();
            CREATE TRIGGER evaluations_no_truncate BEFORE TRUNCATE ON evaluations
                FOR EACH STATEMENT EXECUTE FUNCTION evaluations_append_only();
            CREATE FUNCTION retention_grants_append_only() RETURNS trigger LANGUAGE plpgsql AS $fn$
            BEGIN
                RAISE EXCEPTION 'retention grants are append-only' USING ERRCODE = 'restrict_violation';
            END;
            $fn$;
            CREATE TRIGGER retention_grants_no_change BEFORE UPDATE OR DELETE ON retention_grants
                FOR EACH ROW EXECUTE FUNCTION retention_grants_append_only();
            CREATE TRIGGER retention_grants_no_truncate BEFORE TRUNCATE ON retention_grants
                FOR EACH STATEMENT EXECUTE FUNCTION retention_grants_append_only();
            """),
        new(3, "health probe table written by the health check", """
            CREATE TABLE health_probe (
                id         integer     PRIMARY KEY CHECK (id = 1),
                checked_at timestamptz NOT NULL
            );
            """),
        new(4, "hash chain over whole rows, chained retention grants with their anchor, and the chain head; existing rows sealed in order", """
            ALTER TABLE evaluations ADD COLUMN seq bigint, ADD COLUMN prev_hash text, ADD COLUMN record_hash text;
            ALTER TABLE retention_grants ADD COLUMN anchor_seq bigint, ADD COLUMN anchor_hash text, ADD COLUMN prev_grant_hash text, ADD COLUMN grant_hash text;
            CREATE TABLE audit_chain_head (
                id        integer PRIMARY KEY CHECK (id = 1),
                seq       bigint  NOT NULL,
                record_id uuid,
                hash      text    NOT NULL CHECK (hash ~ '^[0-9a-f]{64}$')
            );
            DROP TRIGGER evaluations_no_update_or_delete ON evaluations;
            DROP TRIGGER retention_grants_no_change ON retention_grants;
            """,
            PostgresGuards.CreateSql),
        new(5, "per-stage summaries stored with each record, and the append-only archive of canonical rule sets by digest", """
            -- NULL for a record without stages (every record written before this step), which keeps its version 1 hash.
            -- NOT VALID: the rows already there are all NULL, so the table is not scanned; new rows are checked.
            ALTER TABLE evaluations ADD COLUMN stages text;
            ALTER TABLE evaluations ADD CONSTRAINT evaluations_stages_array CHECK (stages IS NULL OR jsonb_typeof(stages::jsonb) = 'array') NOT VALID;
            CREATE TABLE rule_sets (
                digest      text        NOT NULL PRIMARY KEY CHECK (digest ~ '^[0-9a-f]{64}$'),
                canonical   bytea       NOT NULL CHECK (length(canonical) > 0),
                archived_at timestamptz NOT NULL DEFAULT now(),
                -- The server checks the digest too: an archived rule set whose bytes and digest disagree cannot be stored.
                CONSTRAINT rule_sets_digest CHECK (digest = encode(sha256(canonical), 'hex'))
            );
            """ + PostgresGuards.RuleSetCreateSql),
    ];

    /// <summary>The version a database has after every step.</summary>
    public static int LatestVersion => Migrations[^1].Version;

    /// <summary>
    /// Applies every step above the database's version up to <paramref name="targetVersion"/>, in one transaction
    /// under <c>pg_advisory_xact_lock</c>; does nothing when it is there.
    /// </summary>
    /// <param name="connection">An open connection.</param>
    /// <param name="targetVersion">The version to reach.</param>
    /// <param name="cancellationToken">Cancels the upgrade (it rolls back whole).</param>
    /// <returns>The versions applied.</returns>
    /// <exception cref="InvalidOperationException">The database's schema is newer than this code knows.</exception>
    public static async Task<IReadOnlyList<int>> MigrateAsync(NpgsqlConnection connection, int targetVersion, CancellationToken cancellationToken)
    {
        var applied = new List<int>();
        var transaction = await connection.BeginTransactionAsync(cancellationToken).ConfigureAwait(false);
        await using (transaction.ConfigureAwait(false))
        {
            await ExecuteAsync(connection, string.Create(CultureInfo.InvariantCulture, $"SELECT pg_advisory_xact_lock({MigrationLockKey});"), cancellationToken).ConfigureAwait(false);
            await ExecuteAsync(connection, """
                CREATE TABLE IF NOT EXISTS schema_migrations (
                    version     integer     PRIMARY KEY,
                    applied_at  timestamptz NOT NULL DEFAULT now(),
                    description text        NOT NULL
                );
                """, cancellationToken).ConfigureAwait(false);
            var current = await CurrentVersionAsync(connection, cancellationToken).ConfigureAwait(false);
            if (current > LatestVersion)
            {
                throw new InvalidOperationException(string.Create(CultureInfo.InvariantCulture,
                    $"The audit database is at schema version {current}; this build knows up to {LatestVersion}."));
            }

            foreach (var migration in Migrations)
            {
                if (migration.Version > targetVersion)
                {
                    break;
                }

                if (migration.Version <= current)
                {
                    continue;
                }

                await ExecuteAsync(connection, migration.Sql, cancellationToken).ConfigureAwait(false);
                if (migration.AfterSeal is not null)
                {
                    await PostgresGuards.SealAsync(connection, cancellationToken).ConfigureAwait(false);
                    await ExecuteAsync(connection, migration.AfterSeal, cancellationToken).ConfigureAwait(false);
                }

                using var insert = new NpgsqlCommand("INSERT INTO schema_migrations (version, description) VALUES (@v, @d);", connection);
                insert.Parameters.AddWithValue("v", migration.Version);
                insert.Parameters.AddWithValue("d", migration.Description);
                await insert.ExecuteNonQueryAsync(cancellationToken).ConfigureAwait(false);
                applied.Add(migration.Version);
            }

            await transaction.CommitAsync(cancellationToken).ConfigureAwait(false);
        }

        return applied;
    }

    /// <summary>The highest applied version, 0 for a new database.</summary>
    /// <param name="connection">An open connection.</param>
    /// <param name="cancellationToken">Cancels the read.</param>
    /// <returns>The version.</returns>
    public static async Task<int> CurrentVersionAsync(NpgsqlConnection connection, CancellationToken cancellationToken)
    {
        using var command = new NpgsqlCommand("SELECT coalesce(max(version), 0) FROM schema_migrations;", connection);
        return Convert.ToInt32(await command.ExecuteScalarAsync(cancellationToken).ConfigureAwait(false), CultureInfo.InvariantCulture);
    }

    internal static async Task ExecuteAsync(NpgsqlConnection connection, string sql, CancellationToken cancellationToken)
    {
        using var command = new NpgsqlCommand(sql, connection);
        await command.ExecuteNonQueryAsync(cancellationToken).ConfigureAwait(false);
    }
}
