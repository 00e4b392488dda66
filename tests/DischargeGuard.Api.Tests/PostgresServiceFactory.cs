using DischargeGuard.Audit.Tests.Postgres;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// The service with <c>Audit:Provider=postgresql</c> on a PostgreSQL server this factory starts itself (initdb and pg_ctl
/// as the postgres user, a temp data folder, a free loopback port) and an empty database of its own. Without the server
/// binaries <see cref="Require"/> fails under CI=true and otherwise skips, naming the install command.
/// </summary>
public sealed class PostgresServiceFactory : ServiceFactory, IAsyncLifetime
{
    internal PostgresServer? Postgres { get; private set; }

    /// <summary>The database the audit store uses.</summary>
    public string? Database { get; private set; }

    public async Task InitializeAsync()
    {
        if (PostgresServer.FindBinDirectory() is not { } bin)
        {
            return;
        }

        Postgres = await PostgresServer.StartNewAsync(bin);
        Database = await Postgres.CreateDatabaseAsync();
        Set("Audit:Provider", "postgresql");
        Set("Audit:ConnectionString", Postgres.ConnectionString(Database));

        // The outage test drives load from one address; the limiter is tested on its own.
        Set("RateLimits:PermitsPerSecond", "100000");
        Set("RateLimits:Burst", "100000");
    }

    public override void Require()
    {
        if (Postgres is null)
        {
            PostgresFixture.RequireBinaries();
            throw new InvalidOperationException("The PostgreSQL test server did not start.");
        }
    }

    async Task IAsyncLifetime.DisposeAsync()
    {
        // The host (and its store) first, then the server it wrote to.
        await DisposeAsync();
        if (Postgres is not null)
        {
            await Postgres.DisposeAsync();
        }
    }
}
