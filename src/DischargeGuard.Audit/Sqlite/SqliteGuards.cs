using System.Globalization;
using Microsoft.Data.Sqlite;

namespace DischargeGuard.Audit.Sqlite;

/// <summary>
/// The triggers and indexes that keep the SQLite audit file append-only and chained, exactly as created; the store checks
/// at open and in every health check that each one exists with this text, and names any that does not.
/// </summary>
internal static class SqliteGuards
{
    private const string Refused = "retention grants are written only by the retention run of the audit store (chain and anchor must match)";

    public static readonly IReadOnlyList<(string Name, string Sql)> Triggers =
    [
        ("evaluations_no_update", """
            CREATE TRIGGER evaluations_no_update BEFORE UPDATE ON evaluations
            BEGIN
                SELECT RAISE(ABORT, 'evaluations are append-only');
            END
            """),
        ("evaluations_no_delete", """
            CREATE TRIGGER evaluations_no_delete BEFORE DELETE ON evaluations
            WHEN NOT EXISTS (SELECT 1 FROM retention_grants WHERE OLD.seq <= retention_grants.anchor_seq)
            BEGIN
                SELECT RAISE(ABORT, 'evaluations are append-only');
            END
            """),
        ("evaluations_no_replace", """
            CREATE TRIGGER evaluations_no_replace BEFORE INSERT ON evaluations
            WHEN EXISTS (SELECT 1 FROM evaluations WHERE id = NEW.id)
            BEGIN
                SELECT RAISE(ABORT, 'evaluations are append-only');
            END
            """),
        ("evaluations_chain", """
            CREATE TRIGGER evaluations_chain AFTER INSERT ON evaluations
            BEGIN
                SELECT RAISE(ABORT, 'audit chain: a record must follow the chain head')
                WHERE NEW.seq IS NULL OR NEW.record_hash IS NULL OR length(NEW.record_hash) <> 64
                   OR NEW.seq IS NOT (SELECT seq + 1 FROM audit_chain_head WHERE id = 1)
                   OR NEW.prev_hash IS NOT (SELECT hash FROM audit_chain_head WHERE id = 1);
                UPDATE audit_chain_head SET seq = NEW.seq, record_id = NEW.id, hash = NEW.record_hash WHERE id = 1;
            END
            """),
        ("audit_chain_head_advance", """
            CREATE TRIGGER audit_chain_head_advance BEFORE UPDATE ON audit_chain_head
            WHEN NEW.id <> OLD.id OR NEW.seq <> OLD.seq + 1
              OR NOT EXISTS (SELECT 1 FROM evaluations WHERE seq = NEW.seq AND id = NEW.record_id AND record_hash = NEW.hash)
            BEGIN
                SELECT RAISE(ABORT, 'the audit chain head only advances to the newest record');
            END
            """),
        ("audit_chain_head_no_delete", """
            CREATE TRIGGER audit_chain_head_no_delete BEFORE DELETE ON audit_chain_head
            BEGIN
                SELECT RAISE(ABORT, 'the audit chain head only advances to the newest record');
            END
            """),
        ("audit_chain_head_single", """
            CREATE TRIGGER audit_chain_head_single BEFORE INSERT ON audit_chain_head
            WHEN EXISTS (SELECT 1 FROM audit_chain_head)
            BEGIN
                SELECT RAISE(ABORT, 'the audit chain head only advances to the newest record');
            END
            """),
        ("retention_grants_no_update", """
            CREATE TRIGGER retention_grants_no_update BEFORE UPDATE ON retention_grants
            BEGIN
                SELECT RAISE(ABORT, 'retention grants are append-only');
            END
            """),
        ("retention_grants_no_delete", """
            CREATE TRIGGER retention_grants_no_delete BEFORE DELETE ON retention_grants
            BEGIN
                SELECT RAISE(ABORT, 'retention grants are append-only');
            END
            """),
        ("retention_grants_anchor", $$"""
            CREATE TRIGGER retention_grants_anchor BEFORE INSERT ON retention_grants
            WHEN NEW.anchor_seq IS NULL OR NEW.anchor_hash IS NULL OR NEW.grant_hash IS NULL OR length(NEW.grant_hash) <> 64
              OR NEW.prev_grant_hash IS NOT coalesce((SELECT grant_hash FROM retention_grants ORDER BY id DESC LIMIT 1), '{{AuditChain.GenesisHash}}')
              OR NEW.delete_before > NEW.granted_at
              OR NOT (
                   EXISTS (SELECT 1 FROM evaluations WHERE seq = NEW.anchor_seq AND record_hash = NEW.anchor_hash AND evaluated_at < NEW.delete_before)
                   OR (NEW.anchor_seq IS coalesce((SELECT anchor_seq FROM retention_grants ORDER BY id DESC LIMIT 1), 0)
                       AND NEW.anchor_hash IS coalesce((SELECT anchor_hash FROM retention_grants ORDER BY id DESC LIMIT 1), '{{AuditChain.GenesisHash}}')))
              OR EXISTS (SELECT 1 FROM evaluations WHERE seq <= NEW.anchor_seq AND evaluated_at >= NEW.delete_before)
            BEGIN
                SELECT RAISE(ABORT, '{{Refused}}');
            END
            """),
    ];

    /// <summary>The rule-set archive's guards (migration 8): archived rule sets are never changed or removed.</summary>
    public static readonly IReadOnlyList<(string Name, string Sql)> RuleSetTriggers =
    [
        ("rule_sets_no_update", """
            CREATE TRIGGER rule_sets_no_update BEFORE UPDATE ON rule_sets
            BEGIN
                SELECT RAISE(ABORT, 'archived rule sets are append-only');
            END
            """),
        ("rule_sets_no_delete", """
            CREATE TRIGGER rule_sets_no_delete BEFORE DELETE ON rule_sets
            BEGIN
                SELECT RAISE(ABORT, 'archived rule sets are append-only');
            END
            """),
        ("rule_sets_no_replace", """
            CREATE TRIGGER rule_sets_no_replace BEFORE INSERT ON rule_sets
            WHEN EXISTS (SELECT 1 FROM rule_sets WHERE digest = NEW.digest)
            BEGIN
                SELECT RAISE(ABORT, 'archived rule sets are append-only');
            END
            """),
    ];

    private static readonly IReadOnlyList<(string Type, string Name)> Objects =
    [
        ("index", "ix_evaluations_seq"),
        ("table", "rule_sets"),
        ("table", "audit_chain_head"),
        ("table", "retention_grants"),
    ];

    /// <summary>Every guard that is missing or whose text differs from what this build created, by name.</summary>
    public static IReadOnlyList<string> Missing(SqliteConnection connection)
    {
        var found = new Dictionary<(string, string), string?>();
        using (var command = connection.CreateCommand())
        {
            command.CommandText = "SELECT type, name, sql FROM sqlite_master WHERE type IN ('trigger', 'index', 'table');";
            using var reader = command.ExecuteReader();
            while (reader.Read())
            {
                found[(reader.GetString(0), reader.GetString(1))] = reader.IsDBNull(2) ? null : reader.GetString(2);
            }
        }

        var missing = new List<string>();
        foreach (var (name, sql) in Triggers.Concat(RuleSetTriggers))
        {
            if (!found.TryGetValue(("trigger", name), out var stored))
            {
                missing.Add(string.Create(CultureInfo.InvariantCulture, $"trigger {name} (missing)"));
            }
            else if (!string.Equals(stored, sql, StringComparison.Ordinal))
            {
                missing.Add(string.Create(CultureInfo.InvariantCulture, $"trigger {name} (altered)"));
            }
        }

        foreach (var (type, name) in Objects)
        {
            if (!found.ContainsKey((type, name)))
            {
                missing.Add(string.Create(CultureInfo.InvariantCulture, $"{type} {name} (missing)"));
            }
        }

        return missing;
    }
}

/// <summary>Seals records written before the chain existed: the chain is computed over them in (evaluated_at, id) order.</summary>
internal static class SqliteChainSeal
{
    public static void Seal(SqliteConnection connection)
    {
        var previous = AuditChain.GenesisHash;
        long sequence = 0;
        Guid? last = null;
        var updates = new List<(string Id, long Seq, string Prev, string Hash)>();
        using (var select = connection.CreateCommand())
        {
            select.CommandText = "SELECT " + SqliteAuditBackend.ChainColumns + " FROM evaluations ORDER BY evaluated_at, id;";
            using var reader = select.ExecuteReader();
            while (reader.Read())
            {
                var record = SqliteAuditBackend.ReadRecord(reader);
                sequence++;
                var hash = AuditChain.RecordHash(sequence, previous, record);
                updates.Add((SqliteAuditBackend.FormatId(record.Id), sequence, previous, hash));
                previous = hash;
                last = record.Id;
            }
        }

        using (var update = connection.CreateCommand())
        {
            update.CommandText = "UPDATE evaluations SET seq = $seq, prev_hash = $prev, record_hash = $hash WHERE id = $id;";
            var id = update.Parameters.Add("$id", SqliteType.Text);
            var seq = update.Parameters.Add("$seq", SqliteType.Integer);
            var prev = update.Parameters.Add("$prev", SqliteType.Text);
            var hash = update.Parameters.Add("$hash", SqliteType.Text);
            foreach (var u in updates)
            {
                (id.Value, seq.Value, prev.Value, hash.Value) = (u.Id, u.Seq, u.Prev, u.Hash);
                update.ExecuteNonQuery();
            }
        }

        // Grants made before the chain predate it: anchored at the genesis, chained among themselves in id order.
        var grants = new List<(long Id, string Prev, string Hash)>();
        var previousGrant = AuditChain.GenesisHash;
        using (var select = connection.CreateCommand())
        {
            select.CommandText = "SELECT id, granted_at, delete_before, granted_by, reason FROM retention_grants ORDER BY id;";
            using var reader = select.ExecuteReader();
            while (reader.Read())
            {
                var hash = AuditChain.GrantHash(previousGrant, AuditTime.Parse(reader.GetString(1)), AuditTime.Parse(reader.GetString(2)), reader.GetString(3), reader.GetString(4), 0, AuditChain.GenesisHash);
                grants.Add((reader.GetInt64(0), previousGrant, hash));
                previousGrant = hash;
            }
        }

        foreach (var (grantId, prev, hash) in grants)
        {
            using var update = connection.CreateCommand();
            update.CommandText = "UPDATE retention_grants SET anchor_seq = 0, anchor_hash = $genesis, prev_grant_hash = $prev, grant_hash = $hash WHERE id = $id;";
            update.Parameters.AddWithValue("$genesis", AuditChain.GenesisHash);
            update.Parameters.AddWithValue("$prev", prev);
            update.Parameters.AddWithValue("$hash", hash);
            update.Parameters.AddWithValue("$id", grantId);
            update.ExecuteNonQuery();
        }

        using var head = connection.CreateCommand();
        head.CommandText = "INSERT INTO audit_chain_head (id, seq, record_id, hash) VALUES (1, $seq, $id, $hash);";
        head.Parameters.AddWithValue("$seq", sequence);
        head.Parameters.AddWithValue("$id", last is { } l ? SqliteAuditBackend.FormatId(l) : DBNull.Value);
        head.Parameters.AddWithValue("$hash", previous);
        head.ExecuteNonQuery();
    }
}
