using System.Globalization;
using System.Text;
using Npgsql;
using NpgsqlTypes;

namespace DischargeGuard.Audit.Postgres;

/// <summary>
/// The trigger functions, triggers and constraints that keep the PostgreSQL audit store append-only and chained; the
/// store checks at open and in every health check that each exists (functions with this exact body, triggers enabled)
/// and names any that does not.
/// </summary>
internal static class PostgresGuards
{
    private static readonly string Genesis = AuditChain.GenesisHash;

    /// <summary>Function name → body (what <c>pg_proc.prosrc</c> holds).</summary>
    public static readonly IReadOnlyList<(string Name, string Body)> Functions =
    [
        ("evaluations_append_only", """

            BEGIN
                IF TG_OP = 'DELETE' AND EXISTS (SELECT 1 FROM retention_grants g WHERE OLD.seq <= g.anchor_seq) THEN
                    RETURN OLD;
                END IF;
                RAISE EXCEPTION 'evaluations are append-only' USING ERRCODE = 'restrict_violation';
            END;

            """),
        ("evaluations_chain", """

            DECLARE
                head audit_chain_head%ROWTYPE;
            BEGIN
                SELECT * INTO head FROM audit_chain_head WHERE id = 1 FOR UPDATE;
                IF NEW.seq IS NULL OR NEW.record_hash IS NULL OR NEW.record_hash !~ '^[0-9a-f]{64}$' OR head.seq IS NULL
                   OR NEW.seq <> head.seq + 1 OR NEW.prev_hash IS DISTINCT FROM head.hash THEN
                    RAISE EXCEPTION 'audit chain: a record must follow the chain head' USING ERRCODE = 'restrict_violation';
                END IF;
                UPDATE audit_chain_head SET seq = NEW.seq, record_id = NEW.id, hash = NEW.record_hash WHERE id = 1;
                RETURN NULL;
            END;

            """),
        ("audit_chain_head_guard", """

            BEGIN
                IF TG_OP = 'UPDATE' AND NEW.id = OLD.id AND NEW.seq = OLD.seq + 1
                   AND EXISTS (SELECT 1 FROM evaluations e WHERE e.seq = NEW.seq AND e.id = NEW.record_id AND e.record_hash = NEW.hash) THEN
                    RETURN NEW;
                END IF;
                RAISE EXCEPTION 'the audit chain head only advances to the newest record' USING ERRCODE = 'restrict_violation';
            END;

            """),
        ("retention_grants_append_only", """

            BEGIN
                RAISE EXCEPTION 'retention grants are append-only' USING ERRCODE = 'restrict_violation';
            END;

            """),
        ("retention_grants_anchor", $$"""

            DECLARE
                last retention_grants%ROWTYPE;
            BEGIN
                SELECT * INTO last FROM retention_grants ORDER BY id DESC LIMIT 1;
                IF NEW.anchor_seq IS NOT NULL AND NEW.anchor_hash IS NOT NULL AND NEW.grant_hash ~ '^[0-9a-f]{64}$'
                   AND NEW.prev_grant_hash IS NOT DISTINCT FROM coalesce(last.grant_hash, '{{Genesis}}')
                   AND NEW.delete_before <= NEW.granted_at
                   AND (EXISTS (SELECT 1 FROM evaluations e WHERE e.seq = NEW.anchor_seq AND e.record_hash = NEW.anchor_hash AND e.evaluated_at < NEW.delete_before)
                        OR (NEW.anchor_seq = coalesce(last.anchor_seq, 0) AND NEW.anchor_hash = coalesce(last.anchor_hash, '{{Genesis}}')))
                   AND NOT EXISTS (SELECT 1 FROM evaluations e WHERE e.seq <= NEW.anchor_seq AND e.evaluated_at >= NEW.delete_before) THEN
                    RETURN NEW;
                END IF;
                RAISE EXCEPTION 'retention grants are written only by the retention run of the audit store (chain and anchor must match)' USING ERRCODE = 'restrict_violation';
            END;

            """),
    ];

    /// <summary>The rule-set archive's function (migration 5), as <see cref="Functions"/>.</summary>
    public static readonly IReadOnlyList<(string Name, string Body)> RuleSetFunctions =
    [
        ("rule_sets_append_only", """

            BEGIN
                RAISE EXCEPTION 'archived rule sets are append-only' USING ERRCODE = 'restrict_violation';
            END;

            """),
    ];

    /// <summary>The rule-set archive's triggers (migration 5), as <see cref="Triggers"/>.</summary>
    public static readonly IReadOnlyList<(string Table, string Name, string Function, string When)> RuleSetTriggers =
    [
        ("rule_sets", "rule_sets_no_change", "rule_sets_append_only", "BEFORE UPDATE OR DELETE ON rule_sets FOR EACH ROW"),
        ("rule_sets", "rule_sets_no_truncate", "rule_sets_append_only", "BEFORE TRUNCATE ON rule_sets FOR EACH STATEMENT"),
    ];

    /// <summary>The rule-set archive's constraints (migration 5): its key, and the digest CHECK against the bytes.</summary>
    public static readonly IReadOnlyList<string> RuleSetConstraints = ["rule_sets_pkey", "rule_sets_digest"];

    /// <summary>What migration 5 runs after its table: the archive's function and triggers.</summary>
    public static string RuleSetCreateSql
    {
        get
        {
            var sql = new StringBuilder();
            foreach (var (name, body) in RuleSetFunctions)
            {
                sql.Append(CultureInfo.InvariantCulture, $"CREATE OR REPLACE FUNCTION {name}() RETURNS trigger LANGUAGE plpgsql AS $fn${body}$fn$;\n");
            }

            foreach (var (_, name, function, when) in RuleSetTriggers)
            {
                sql.Append(CultureInfo.InvariantCulture, $"CREATE TRIGGER {name} {when} EXECUTE FUNCTION {function}();\n");
            }

            return sql.ToString();
        }
    }

    /// <summary>(table, trigger, function, definition after the name).</summary>
    public static readonly IReadOnlyList<(string Table, string Name, string Function, string When)> Triggers =
    [
        ("evaluations", "evaluations_no_update_or_delete", "evaluations_append_only", "BEFORE UPDATE OR DELETE ON evaluations FOR EACH ROW"),
        ("evaluations", "evaluations_no_truncate", "evaluations_append_only", "BEFORE TRUNCATE ON evaluations FOR EACH STATEMENT"),
        ("evaluations", "evaluations_chain", "evaluations_chain", "AFTER INSERT ON evaluations FOR EACH ROW"),
        ("audit_chain_head", "audit_chain_head_guard", "audit_chain_head_guard", "BEFORE INSERT OR UPDATE OR DELETE ON audit_chain_head FOR EACH ROW"),
        ("audit_chain_head", "audit_chain_head_no_truncate", "audit_chain_head_guard", "BEFORE TRUNCATE ON audit_chain_head FOR EACH STATEMENT"),
        ("retention_grants", "retention_grants_no_change", "retention_grants_append_only", "BEFORE UPDATE OR DELETE ON retention_grants FOR EACH ROW"),
        ("retention_grants", "retention_grants_no_truncate", "retention_grants_append_only", "BEFORE TRUNCATE ON retention_grants FOR EACH STATEMENT"),
        ("retention_grants", "retention_grants_anchor", "retention_grants_anchor", "BEFORE INSERT ON retention_grants FOR EACH ROW"),
    ];

    /// <summary>Constraints that must exist, by name.</summary>
    public static readonly IReadOnlyList<string> Constraints =
        ["evaluations_pkey", "evaluations_request_hash", "evaluations_response_hash", "evaluations_seq_key", "audit_chain_head_pkey"];

    /// <summary>What the chain step runs after sealing: the seq key, the functions and the triggers not already bound.</summary>
    public static string CreateSql
    {
        get
        {
            var sql = new StringBuilder("ALTER TABLE evaluations ADD CONSTRAINT evaluations_seq_key UNIQUE (seq);\n");
            foreach (var (name, body) in Functions)
            {
                sql.Append(CultureInfo.InvariantCulture, $"CREATE OR REPLACE FUNCTION {name}() RETURNS trigger LANGUAGE plpgsql AS $fn${body}$fn$;\n");
            }

            // Migration 2 bound evaluations_no_truncate and retention_grants_no_truncate already; the rest are (re)created here.
            foreach (var (_, name, function, when) in Triggers.Where(t => t.Name is not ("evaluations_no_truncate" or "retention_grants_no_truncate")))
            {
                sql.Append(CultureInfo.InvariantCulture, $"CREATE TRIGGER {name} {when} EXECUTE FUNCTION {function}();\n");
            }

            return sql.ToString();
        }
    }

    /// <summary>Every guard that is missing, disabled or altered, by name.</summary>
    public static async Task<IReadOnlyList<string>> MissingAsync(NpgsqlConnection connection, CancellationToken cancellationToken)
    {
        var missing = new List<string>();
        var bodies = new Dictionary<string, string>(StringComparer.Ordinal);
        using (var command = new NpgsqlCommand("SELECT p.proname, p.prosrc FROM pg_proc p JOIN pg_namespace n ON n.oid = p.pronamespace WHERE n.nspname = current_schema();", connection))
        {
            var reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (reader.ConfigureAwait(false))
            {
                while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
                {
                    bodies[reader.GetString(0)] = reader.GetString(1);
                }
            }
        }

        foreach (var (name, body) in Functions.Concat(RuleSetFunctions))
        {
            if (!bodies.TryGetValue(name, out var stored))
            {
                missing.Add($"function {name} (missing)");
            }
            else if (!string.Equals(stored, body, StringComparison.Ordinal))
            {
                missing.Add($"function {name} (altered)");
            }
        }

        var triggers = new Dictionary<string, (string Table, string Function, char Enabled)>(StringComparer.Ordinal);
        using (var command = new NpgsqlCommand("""
            SELECT t.tgname, c.relname, p.proname, t.tgenabled
            FROM pg_trigger t JOIN pg_class c ON c.oid = t.tgrelid JOIN pg_proc p ON p.oid = t.tgfoid JOIN pg_namespace n ON n.oid = c.relnamespace
            WHERE NOT t.tgisinternal AND n.nspname = current_schema();
            """, connection))
        {
            var reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (reader.ConfigureAwait(false))
            {
                while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
                {
                    triggers[reader.GetString(0)] = (reader.GetString(1), reader.GetString(2), reader.GetChar(3));
                }
            }
        }

        foreach (var (table, name, function, _) in Triggers.Concat(RuleSetTriggers))
        {
            if (!triggers.TryGetValue(name, out var found) || found.Table != table || found.Function != function)
            {
                missing.Add($"trigger {name} (missing)");
            }
            else if (found.Enabled == 'D')
            {
                missing.Add($"trigger {name} (disabled)");
            }
        }

        var constraints = new HashSet<string>(StringComparer.Ordinal);
        using (var command = new NpgsqlCommand("SELECT c.conname FROM pg_constraint c JOIN pg_namespace n ON n.oid = c.connamespace WHERE n.nspname = current_schema();", connection))
        {
            var reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (reader.ConfigureAwait(false))
            {
                while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
                {
                    constraints.Add(reader.GetString(0));
                }
            }
        }

        missing.AddRange(Constraints.Concat(RuleSetConstraints).Where(c => !constraints.Contains(c)).Select(c => $"constraint {c} (missing)"));
        return missing;
    }

    /// <summary>Seals records written before the chain existed, in (evaluated_at, tick, id) order, and the grants before it.</summary>
    public static async Task SealAsync(NpgsqlConnection connection, CancellationToken cancellationToken)
    {
        var previous = Genesis;
        long sequence = 0;
        Guid? last = null;
        var updates = new List<(Guid Id, long Seq, string Prev, string Hash)>();
        using (var select = new NpgsqlCommand("SELECT " + PostgresAuditBackend.BaseColumns + " FROM evaluations ORDER BY evaluated_at, evaluated_at_tick, id;", connection))
        {
            var reader = await select.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (reader.ConfigureAwait(false))
            {
                while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
                {
                    var record = PostgresAuditBackend.ReadRecord(reader);
                    sequence++;
                    var hash = AuditChain.RecordHash(sequence, previous, record);
                    updates.Add((record.Id, sequence, previous, hash));
                    previous = hash;
                    last = record.Id;
                }
            }
        }

        foreach (var u in updates)
        {
            using var update = new NpgsqlCommand("UPDATE evaluations SET seq = @seq, prev_hash = @prev, record_hash = @hash WHERE id = @id;", connection);
            update.Parameters.Add(new NpgsqlParameter<Guid>("id", NpgsqlDbType.Uuid) { TypedValue = u.Id });
            update.Parameters.Add(new NpgsqlParameter<long>("seq", NpgsqlDbType.Bigint) { TypedValue = u.Seq });
            update.Parameters.Add(new NpgsqlParameter<string>("prev", NpgsqlDbType.Text) { TypedValue = u.Prev });
            update.Parameters.Add(new NpgsqlParameter<string>("hash", NpgsqlDbType.Text) { TypedValue = u.Hash });
            await update.ExecuteNonQueryAsync(cancellationToken).ConfigureAwait(false);
        }

        var grants = new List<(long Id, string Prev, string Hash)>();
        var previousGrant = Genesis;
        using (var select = new NpgsqlCommand("SELECT id, granted_at, delete_before, granted_by, reason FROM retention_grants ORDER BY id;", connection))
        {
            var reader = await select.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
            await using (reader.ConfigureAwait(false))
            {
                while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
                {
                    var hash = AuditChain.GrantHash(previousGrant, reader.GetFieldValue<DateTimeOffset>(1), reader.GetFieldValue<DateTimeOffset>(2), reader.GetString(3), reader.GetString(4), 0, Genesis);
                    grants.Add((reader.GetInt64(0), previousGrant, hash));
                    previousGrant = hash;
                }
            }
        }

        foreach (var (grantId, prev, hash) in grants)
        {
            using var update = new NpgsqlCommand("UPDATE retention_grants SET anchor_seq = 0, anchor_hash = @genesis, prev_grant_hash = @prev, grant_hash = @hash WHERE id = @id;", connection);
            update.Parameters.AddWithValue("genesis", Genesis);
            update.Parameters.AddWithValue("prev", prev);
            update.Parameters.AddWithValue("hash", hash);
            update.Parameters.AddWithValue("id", grantId);
            await update.ExecuteNonQueryAsync(cancellationToken).ConfigureAwait(false);
        }

        using var head = new NpgsqlCommand("INSERT INTO audit_chain_head (id, seq, record_id, hash) VALUES (1, @seq, @id, @hash);", connection);
        head.Parameters.AddWithValue("seq", sequence);
        head.Parameters.Add(new NpgsqlParameter("id", NpgsqlDbType.Uuid) { Value = last is { } l ? l : DBNull.Value });
        head.Parameters.AddWithValue("hash", previous);
        await head.ExecuteNonQueryAsync(cancellationToken).ConfigureAwait(false);
    }
}
