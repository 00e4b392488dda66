using System.Runtime.CompilerServices;
using System.Security.Cryptography;
using System.Text;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Cli;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.Data.Sqlite;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Cli.Tests;

/// <summary>Settings every in-process host needs before it is built (no configuration-file watchers: inotify budget).</summary>
internal static class TestHostEnvironment
{
    [ModuleInitializer]
    internal static void Initialize()
    {
        Environment.SetEnvironmentVariable("DOTNET_hostBuilder__reloadConfigOnChange", "false");
        Environment.SetEnvironmentVariable("ASPNETCORE_hostBuilder__reloadConfigOnChange", "false");
    }
}

/// <summary>Paths in the repository, found by walking up from the test binary to DischargeGuard.sln.</summary>
internal static class Repo
{
    public static string Root => RepositoryRoot.Path;

    public static string Rules => Path.Combine(Root, "rules");

    public static string Example(string name) => Path.Combine(Root, "examples", "proposals", name);

    public static void CopyDirectory(string from, string to)
    {
        Directory.CreateDirectory(to);
        foreach (var file in Directory.EnumerateFiles(from, "*", SearchOption.AllDirectories))
        {
            var target = Path.Combine(to, Path.GetRelativePath(from, file));
            Directory.CreateDirectory(Path.GetDirectoryName(target)!);
            File.Copy(file, target);
        }
    }
}

/// <summary>A temp folder deleted on disposal.</summary>
internal sealed class TempFolder : IDisposable
{
    public TempFolder() => Path = Directory.CreateTempSubdirectory("dischargeguard-cli-tests-").FullName;

    public string Path { get; }

    public string File(string name) => System.IO.Path.Combine(Path, name);

    public string Write(string name, string content)
    {
        var path = File(name);
        Directory.CreateDirectory(System.IO.Path.GetDirectoryName(path)!);
        System.IO.File.WriteAllText(path, content);
        return path;
    }

    public void Dispose()
    {
        SqliteConnection.ClearAllPools();
        try
        {
            Directory.Delete(Path, recursive: true);
        }
        catch (IOException)
        {
        }
        catch (UnauthorizedAccessException)
        {
        }
    }
}

/// <summary>One in-process run of the gate.</summary>
internal sealed record GateRun(int ExitCode, string Stdout, string Stderr)
{
    public override string ToString() => $"exit {ExitCode}\n--- stdout\n{Stdout}\n--- stderr\n{Stderr}";
}

/// <summary>Runs <see cref="GateApp.RunAsync(string[], TextWriter, TextWriter, GateEnvironment, CancellationToken)"/> in-process.</summary>
internal static class Gate
{
    public static Task<GateRun> RunAsync(params string[] args) => RunAsync(new Dictionary<string, string>(), args);

    public static async Task<GateRun> RunAsync(IReadOnlyDictionary<string, string> env, params string[] args)
    {
        using var stdout = new StringWriter();
        using var stderr = new StringWriter();
        var environment = new GateEnvironment(name => env.TryGetValue(name, out var v) ? v : null, Repo.Rules);
        var code = await GateApp.RunAsync(args, stdout, stderr, environment, CancellationToken.None);
        return new GateRun(code, stdout.ToString(), stderr.ToString());
    }
}

/// <summary>Reads an audit SQLite file directly.</summary>
internal static class AuditFile
{
    public static List<(Guid Id, string Asset, string Verdict, string Digest, byte[] Request, string Caller)> Records(string path)
    {
        var list = new List<(Guid, string, string, string, byte[], string)>();
        if (!System.IO.File.Exists(path))
        {
            return list;
        }

        using var connection = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = path, Mode = SqliteOpenMode.ReadOnly, Pooling = false }.ToString());
        connection.Open();
        using var command = connection.CreateCommand();
        command.CommandText = "SELECT id, asset, verdict, rule_digest, request, caller FROM evaluations ORDER BY evaluated_at, id";
        using var reader = command.ExecuteReader();
        while (reader.Read())
        {
            var idValue = reader.GetValue(0);
            var id = idValue is byte[] bytes ? new Guid(bytes, bigEndian: true) : Guid.Parse((string)idValue);
            list.Add((id, reader.GetString(1), reader.GetString(2), reader.GetString(3), (byte[])reader.GetValue(4), reader.GetString(5)));
        }

        return list;
    }
}

/// <summary>
/// The real service on a free loopback port, in-process, with its own copy of the shipped rules, a temp SQLite audit
/// file and API keys for an invented gate runner and planner at Tarnbrook Midstream.
/// </summary>
internal sealed class ServiceHost : IAsyncDisposable
{
    private readonly WebApplication _app;
    private readonly TempFolder _folder;

    private ServiceHost(WebApplication app, TempFolder folder, string url, string rules, string database, IReadOnlyDictionary<string, string> keys)
    {
        _app = app;
        _folder = folder;
        Url = url;
        RulesDirectory = rules;
        DatabasePath = database;
        Keys = keys;
    }

    /// <summary>The base address, e.g. http://127.0.0.1:41234.</summary>
    public string Url { get; }

    public string RulesDirectory { get; }

    public string DatabasePath { get; }

    /// <summary>Keys by role: "gate" and "planner".</summary>
    public IReadOnlyDictionary<string, string> Keys { get; }

    public static async Task<ServiceHost> StartAsync(IDictionary<string, string>? settings = null)
    {
        var folder = new TempFolder();
        var rules = folder.File("rules");
        Repo.CopyDirectory(Repo.Rules, rules);
        var database = folder.File("audit/audit.db");
        var content = folder.File("content");
        Directory.CreateDirectory(content);
        var keys = new Dictionary<string, string>(StringComparer.Ordinal) { ["gate"] = NewKey(), ["planner"] = NewKey() };
        var args = new List<string>
        {
            "--urls=http://127.0.0.1:0",
            $"--Audit:SqlitePath={database}",
            $"--DischargeGuard:RulesDirectory={rules}",
            "--DischargeGuard:RulesWatch=false",
            "--Serilog:MinimumLevel:Default=Warning",
            "--Auth:Keys:0:id=marlow-fen-change-gate",
            "--Auth:Keys:0:sha256=" + Sha256(keys["gate"]),
            "--Auth:Keys:0:roles:0=gate",
            "--Auth:Keys:1:id=tarnbrook-planning",
            "--Auth:Keys:1:sha256=" + Sha256(keys["planner"]),
            "--Auth:Keys:1:roles:0=planner",
        };
        foreach (var (k, v) in settings ?? new Dictionary<string, string>())
        {
            args.Add($"--{k}={v}");
        }

        var builder = WebApplication.CreateBuilder(new WebApplicationOptions { Args = [.. args], ContentRootPath = content, EnvironmentName = "Production" });
        builder.AddDischargeGuard();
        var app = builder.Build();
        app.UseDischargeGuard();
        await app.StartAsync();
        var url = app.Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()!.Addresses.First();
        return new ServiceHost(app, folder, url, rules, database, keys);
    }

    /// <summary>The environment a CI job would give the gate: the server and the gate key.</summary>
    public Dictionary<string, string> GateEnvironment(string role = "gate") => new(StringComparer.Ordinal)
    {
        [Cli.GateEnvironment.ServerVariable] = Url,
        [Cli.GateEnvironment.KeyVariable] = Keys[role],
    };

    public async ValueTask DisposeAsync()
    {
        await _app.StopAsync();
        await _app.DisposeAsync();
        _folder.Dispose();
    }

    private static string NewKey() => Convert.ToBase64String(RandomNumberGenerator.GetBytes(32)).TrimEnd('=').Replace('+', '-').Replace('/', '_');

    private static string Sha256(string key) => Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(key)));
}
