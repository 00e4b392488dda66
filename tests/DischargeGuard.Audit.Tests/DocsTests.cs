using DischargeGuard.Audit.Sqlite;

namespace DischargeGuard.Audit.Tests;

public class DocsTests
{
    [Fact]
    public void AuditDoc_WhenMigrationsChange_ListsEveryMigrationWithItsDescription()
    {
        var doc = File.ReadAllText(Path.Combine(RepositoryRoot.Path, "docs", "audit.md"));

        var missing = AuditSchema.Migrations
            .Where(m => !doc.Contains($"| {m.Version} | {m.Description} |", StringComparison.Ordinal))
            .Select(m => m.Version)
            .ToList();

        Assert.True(missing.Count == 0, "Migrations not in docs/audit.md: " + string.Join(", ", missing));
    }

    [Fact]
    public void AuditDoc_WhenPostgresMigrationsChange_ListsEveryMigrationInThePostgresSection()
    {
        var doc = File.ReadAllText(Path.Combine(RepositoryRoot.Path, "docs", "audit.md"));
        var section = doc[doc.IndexOf("## PostgreSQL", StringComparison.Ordinal)..];

        var missing = DischargeGuard.Audit.Postgres.PostgresAuditSchema.Migrations
            .Where(m => !section.Contains($"| {m.Version} | {m.Description} |", StringComparison.Ordinal))
            .Select(m => m.Version)
            .ToList();

        Assert.True(missing.Count == 0, "PostgreSQL migrations not in docs/audit.md: " + string.Join(", ", missing));
    }

}
