using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Sockets;
using Npgsql;

namespace DischargeGuard.Audit.Tests.Postgres;

/// <summary>
/// A throwaway PostgreSQL cluster: initdb into a temp folder, the server on a free loopback port with its socket in
/// the same folder, deleted on dispose. initdb and postgres refuse to run as root, so as root (CI) both run as the
/// <c>postgres</c> user via <c>runuser</c>, and the folder is handed to that user.
/// </summary>
internal sealed class PostgresServer : IAsyncDisposable
{
    public const string InstallCommand = "apt-get install -y postgresql";

    private readonly string _bin;

    private PostgresServer(string bin)
    {
        _bin = bin;
        Root = Path.Combine(Path.GetTempPath(), "dg-pg-" + Guid.NewGuid().ToString("N")[..12]);
        DataDirectory = Path.Combine(Root, "data");
        SocketDirectory = Path.Combine(Root, "sock");
        LogPath = Path.Combine(Root, "server.log");
        Port = FreeLoopbackPort();
    }

    public string Root { get; }

    public string DataDirectory { get; }

    public string SocketDirectory { get; }

    public string LogPath { get; }

    public int Port { get; }

    /// <summary>The newest <c>/usr/lib/postgresql/*/bin</c> holding initdb and pg_ctl, or null. <c>DG_POSTGRES_BIN</c> overrides the search.</summary>
    public static string? FindBinDirectory()
    {
        var overridden = Environment.GetEnvironmentVariable("DG_POSTGRES_BIN");
        if (!string.IsNullOrEmpty(overridden))
        {
            return HasTools(overridden) ? overridden : null;
        }

        const string installRoot = "/usr/lib/postgresql";
        if (!Directory.Exists(installRoot))
        {
            return null;
        }

        return Directory.GetDirectories(installRoot)
            .Select(d => (Version: int.TryParse(Path.GetFileName(d), NumberStyles.None, CultureInfo.InvariantCulture, out var v) ? v : -1, Bin: Path.Combine(d, "bin")))
            .Where(x => x.Version > 0 && HasTools(x.Bin))
            .OrderByDescending(x => x.Version)
            .Select(x => x.Bin)
            .FirstOrDefault();

        static bool HasTools(string bin) => File.Exists(Path.Combine(bin, "initdb")) && File.Exists(Path.Combine(bin, "pg_ctl"));
    }

    /// <summary>Creates the cluster and starts the server.</summary>
    public static async Task<PostgresServer> StartNewAsync(string bin)
    {
        var server = new PostgresServer(bin);
        try
        {
            Directory.CreateDirectory(server.SocketDirectory);
            if (Environment.IsPrivilegedProcess)
            {
                await RunAsync("chown", ["-R", "postgres:postgres", server.Root]);
            }

            await server.RunToolAsync("initdb", ["-D", server.DataDirectory, "-U", "postgres", "--auth=trust", "-E", "UTF8", "--no-instructions"]);
            await server.StartAsync();
            return server;
        }
        catch
        {
            await server.DisposeAsync();
            throw;
        }
    }

    public Task StartAsync() => RunToolAsync("pg_ctl", [
        "-D", DataDirectory,
        "-o", string.Create(CultureInfo.InvariantCulture, $"-k {SocketDirectory} -p {Port} -c listen_addresses=127.0.0.1 -c fsync=on"),
        "-l", LogPath, "start", "-w", "-t", "60",
    ]);

    /// <summary>Stops the server: <c>fast</c> rolls back sessions and shuts down cleanly; <c>immediate</c> is a crash.</summary>
    public Task StopAsync(string mode = "fast") => RunToolAsync("pg_ctl", ["-D", DataDirectory, "stop", "-m", mode, "-w"]);

    public string ConnectionString(string database) => new NpgsqlConnectionStringBuilder
    {
        Host = "127.0.0.1",
        Port = Port,
        Username = "postgres",
        Database = database,
        Timeout = 5,
    }.ConnectionString;

    /// <summary>A new empty database with a unique name.</summary>
    public async Task<string> CreateDatabaseAsync()
    {
        var name = "audit_" + Guid.NewGuid().ToString("N")[..16];
        await using var connection = new NpgsqlConnection(ConnectionString("postgres") + ";Pooling=false");
        await connection.OpenAsync();
        await using var command = new NpgsqlCommand($"CREATE DATABASE {name};", connection);
        await command.ExecuteNonQueryAsync();
        return name;
    }

    public async ValueTask DisposeAsync()
    {
        if (File.Exists(Path.Combine(DataDirectory, "postmaster.pid")))
        {
            try
            {
                await StopAsync("immediate");
            }
            catch (InvalidOperationException)
            {
                // Already stopped.
            }
        }

        NpgsqlConnection.ClearAllPools();
        if (Directory.Exists(Root))
        {
            Directory.Delete(Root, recursive: true);
        }
    }

    private Task RunToolAsync(string tool, string[] arguments)
    {
        var path = Path.Combine(_bin, tool);
        return Environment.IsPrivilegedProcess
            ? RunAsync("runuser", ["-u", "postgres", "--", path, .. arguments], LogPath)
            : RunAsync(path, arguments, LogPath);
    }

    private static async Task RunAsync(string file, string[] arguments, string? logPath = null)
    {
        var start = new ProcessStartInfo(file)
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        foreach (var argument in arguments)
        {
            start.ArgumentList.Add(argument);
        }

        using var process = Process.Start(start) ?? throw new InvalidOperationException($"{file} did not start.");
        var stdout = process.StandardOutput.ReadToEndAsync();
        var stderr = process.StandardError.ReadToEndAsync();
        await process.WaitForExitAsync();
        if (process.ExitCode != 0)
        {
            var log = logPath is not null && File.Exists(logPath) ? File.ReadAllText(logPath) : string.Empty;
            throw new InvalidOperationException(
                $"{file} {string.Join(' ', arguments)} exited with {process.ExitCode}:\n{await stdout}\n{await stderr}\n{log}");
        }
    }

    private static int FreeLoopbackPort()
    {
        var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        var port = ((IPEndPoint)listener.LocalEndpoint).Port;
        listener.Stop();
        return port;
    }
}

/// <summary>One server for every PostgreSQL test class in the run; each test gets a database of its own.</summary>
public sealed class PostgresFixture : IAsyncLifetime
{
    internal PostgresServer? Server { get; private set; }

    internal string? BinDirectory { get; } = PostgresServer.FindBinDirectory();

    public async Task InitializeAsync()
    {
        // Missing binaries are reported per test (fail in CI, skip elsewhere); a server that will not start is a failure.
        if (BinDirectory is not null)
        {
            Server = await PostgresServer.StartNewAsync(BinDirectory);
        }
    }

    public async Task DisposeAsync()
    {
        if (Server is not null)
        {
            await Server.DisposeAsync();
        }
    }

    /// <summary>The running server; without PostgreSQL binaries this fails when CI=true and skips otherwise.</summary>
    internal PostgresServer RequireServer()
    {
        if (Server is not null)
        {
            return Server;
        }

        RequireBinaries();
        throw new InvalidOperationException("The PostgreSQL test server did not start.");
    }

    /// <summary>The bin folder; without it this fails when CI=true and skips otherwise, naming the install command.</summary>
    internal static string RequireBinaries()
    {
        var bin = PostgresServer.FindBinDirectory();
        if (bin is not null)
        {
            return bin;
        }

        var message = $"PostgreSQL server binaries were not found under /usr/lib/postgresql/*/bin; install them with `{PostgresServer.InstallCommand}`.";
        if (string.Equals(Environment.GetEnvironmentVariable("CI"), "true", StringComparison.OrdinalIgnoreCase))
        {
            throw new InvalidOperationException(message + " (CI=true: the PostgreSQL tests must run.)");
        }

        throw new SkipException(message);
    }
}

[CollectionDefinition(Name)]
public sealed class PostgresServerGroup : ICollectionFixture<PostgresFixture>
{
    public const string Name = "postgres";
}
