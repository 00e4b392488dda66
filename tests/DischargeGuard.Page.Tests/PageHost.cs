using System.Globalization;
using System.Net;
using System.Security.Cryptography;
using System.Text;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Page.Tests;

/// <summary>
/// The service on a real loopback port (Kestrel, port chosen by the OS) with a temp SQLite audit file and a temp copy of
/// the shipped rules, serving the page from the source tree's wwwroot. Production environment, as deployed.
/// </summary>
public sealed class PageHost : WebApplicationFactory<Program>
{
    private readonly Dictionary<string, string?> _settings;

    private PageHost(IReadOnlyDictionary<string, string> technicianKeys)
    {
        Folder = Directory.CreateTempSubdirectory("dischargeguard-page-tests-").FullName;
        var rules = Path.Combine(Folder, "rules");
        CopyDirectory(Path.Combine(RepoPaths.Root, "rules"), rules);
        ContentRoot = Path.Combine(Folder, "content");
        Directory.CreateDirectory(ContentRoot);
        File.Copy(Path.Combine(RepoPaths.Root, "src", "DischargeGuard.Api", "appsettings.json"), Path.Combine(ContentRoot, "appsettings.json"));
        _settings = new Dictionary<string, string?>
        {
            ["Audit:SqlitePath"] = Path.Combine(Folder, "audit", "audit.db"),
            ["DischargeGuard:RulesDirectory"] = rules,
            ["DischargeGuard:RulesWatch"] = "false",
            ["Serilog:MinimumLevel:Default"] = "Warning",
            ["urls"] = "http://127.0.0.1:0",
        };
        var i = 0;
        foreach (var (id, key) in technicianKeys)
        {
            var prefix = string.Create(CultureInfo.InvariantCulture, $"Auth:Keys:{i++}:");
            _settings[prefix + "id"] = id;
            _settings[prefix + "sha256"] = Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(key)));
            _settings[prefix + "roles:0"] = "technician";
        }

        UseKestrel(o => o.Listen(IPAddress.Loopback, 0));
    }

    /// <summary>Started, without keys (loopback-only mode: every caller is allowed).</summary>
    public static PageHost StartOpen() => Start(new Dictionary<string, string>());

    /// <summary>Started with one technician key.</summary>
    public static PageHost StartWithTechnicianKey(string keyId, string key) => Start(new Dictionary<string, string> { [keyId] = key });

    private static PageHost Start(IReadOnlyDictionary<string, string> keys)
    {
        var host = new PageHost(keys);
        host.StartServer();
        var addresses = host.Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()
            ?? throw new InvalidOperationException("The server reports no addresses.");
        host.BaseAddress = new Uri(addresses.Addresses.Single(a => a.StartsWith("http://127.0.0.1:", StringComparison.Ordinal)));
        return host;
    }

    /// <summary>The temp folder holding everything this host wrote.</summary>
    public string Folder { get; }

    /// <summary>The content root (appsettings.json and the log folder).</summary>
    public string ContentRoot { get; }

    /// <summary>http://127.0.0.1:&lt;port&gt;/ once started.</summary>
    public Uri BaseAddress { get; private set; } = new("http://127.0.0.1/");

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        ArgumentNullException.ThrowIfNull(builder);
        builder.UseEnvironment("Production");
        builder.UseSetting("hostBuilder:reloadConfigOnChange", "false");
        builder.UseContentRoot(ContentRoot);
        builder.UseWebRoot(Path.Combine(RepoPaths.Root, "src", "DischargeGuard.Api", "wwwroot"));
        foreach (var (key, value) in _settings)
        {
            builder.UseSetting(key, value);
        }
    }

    public override async ValueTask DisposeAsync()
    {
        await base.DisposeAsync();
        TryDelete(Folder);
        GC.SuppressFinalize(this);
    }

    private static void CopyDirectory(string from, string to)
    {
        Directory.CreateDirectory(to);
        foreach (var file in Directory.EnumerateFiles(from, "*", SearchOption.AllDirectories))
        {
            var target = Path.Combine(to, Path.GetRelativePath(from, file));
            Directory.CreateDirectory(Path.GetDirectoryName(target)!);
            File.Copy(file, target);
        }
    }

    private static void TryDelete(string folder)
    {
        try
        {
            Directory.Delete(folder, recursive: true);
        }
        catch (IOException)
        {
            // A log file still closing must not fail the run; the OS temp cleaner takes it.
        }
        catch (UnauthorizedAccessException)
        {
        }
    }
}

/// <summary>Paths in the repository, found by walking up from the test binary to DischargeGuard.sln.</summary>
internal static class RepoPaths
{
    public static string Root => RepositoryRoot.Path;

    /// <summary>tests/DischargeGuard.Page.Tests/TestResults/screenshots (ignored by git).</summary>
    public static string Screenshots => Path.Combine(Root, "tests", "DischargeGuard.Page.Tests", "TestResults", "screenshots");
}
