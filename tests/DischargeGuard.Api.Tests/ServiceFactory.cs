using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Mvc.Testing;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// The service in process with a real SQLite audit file and a copy of the shipped rules, both in a fresh temp folder
/// that is deleted on disposal. The environment is Production, so the tests see the error handling a deployment has.
/// </summary>
public class ServiceFactory : WebApplicationFactory<Program>
{
    private readonly Dictionary<string, string?> _settings;

    public ServiceFactory()
        : this(new Dictionary<string, string?>())
    {
    }

    /// <summary>A factory whose host watches its rule directory (only the reload tests need it: each watcher holds an
    /// inotify instance, of which a Linux user gets 128 by default).</summary>
    public static ServiceFactory WatchingRules() => new(new Dictionary<string, string?> { ["DischargeGuard:RulesWatch"] = "true" });

    protected ServiceFactory(IDictionary<string, string?> settings)
    {
        Folder = Directory.CreateTempSubdirectory("dischargeguard-api-tests-").FullName;
        RulesDirectory = Path.Combine(Folder, "rules");
        CopyDirectory(Path.Combine(RepoPaths.Root, "rules"), RulesDirectory);
        DatabasePath = Path.Combine(Folder, "audit", "audit.db");
        ContentRoot = Path.Combine(Folder, "content");
        Directory.CreateDirectory(ContentRoot);
        File.Copy(Path.Combine(RepoPaths.Root, "src", "DischargeGuard.Api", "appsettings.json"), Path.Combine(ContentRoot, "appsettings.json"));
        _settings = new Dictionary<string, string?>(settings)
        {
            ["Audit:SqlitePath"] = DatabasePath,
            ["DischargeGuard:RulesDirectory"] = RulesDirectory,
            ["Serilog:MinimumLevel:Default"] = "Warning",
        };
        _settings.TryAdd("DischargeGuard:RulesWatch", "false");
    }

    /// <summary>Sets a host setting; only before the host is first used.</summary>
    protected void Set(string key, string? value) => _settings[key] = value;

    /// <summary>Throws <c>SkipException</c> (or fails under CI=true) when this factory's dependencies are missing; the SQLite factory has none.</summary>
    public virtual void Require()
    {
    }

    /// <summary>The temp folder holding everything this factory wrote.</summary>
    public string Folder { get; }

    /// <summary>The temp copy of the repository's rules/ folder (edit it to trigger a reload).</summary>
    public string RulesDirectory { get; }

    /// <summary>The SQLite audit file.</summary>
    public string DatabasePath { get; }

    /// <summary>The content root (appsettings.json, and where the host writes its log files).</summary>
    public string ContentRoot { get; }

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        ArgumentNullException.ThrowIfNull(builder);
        builder.UseEnvironment("Production");

        // No configuration-file watcher per test host either (same inotify budget).
        builder.UseSetting("hostBuilder:reloadConfigOnChange", "false");
        builder.UseContentRoot(ContentRoot);
        foreach (var (key, value) in _settings)
        {
            builder.UseSetting(key, value);
        }
    }

    protected override void Dispose(bool disposing)
    {
        base.Dispose(disposing);
        if (disposing)
        {
            TryDelete(Folder);
        }
    }

    public override async ValueTask DisposeAsync()
    {
        await base.DisposeAsync();
        TryDelete(Folder);
        GC.SuppressFinalize(this);
    }

    /// <summary>POSTs <paramref name="body"/> as JSON to <c>/v1/evaluations</c> (plus <paramref name="query"/>).</summary>
    public async Task<HttpResponseMessage> EvaluateAsync(JsonNode body, string query = "")
    {
        using var client = CreateClient();
        using var content = new StringContent(body.ToJsonString(), Encoding.UTF8, "application/json");
        return await client.PostAsync(new Uri("/v1/evaluations" + query, UriKind.Relative), content);
    }

    /// <summary>POSTs raw text as JSON to <c>/v1/evaluations</c>.</summary>
    public async Task<HttpResponseMessage> EvaluateRawAsync(string body)
    {
        using var client = CreateClient();
        using var content = new ByteArrayContent(Encoding.UTF8.GetBytes(body));
        content.Headers.ContentType = new MediaTypeHeaderValue("application/json") { CharSet = "utf-8" };
        return await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content);
    }

    /// <summary>GETs <paramref name="path"/> and parses the body.</summary>
    public async Task<(HttpResponseMessage Response, JsonElement Body)> GetJsonAsync(string path)
    {
        using var client = CreateClient();
        var response = await client.GetAsync(new Uri(path, UriKind.Relative));
        return (response, await Json.ReadAsync(response));
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
            if (Directory.Exists(folder))
            {
                Directory.Delete(folder, recursive: true);
            }
        }
        catch (IOException)
        {
            // A file still held open (a log sink closing late) must not fail the test run; the OS temp cleaner takes it.
        }
        catch (UnauthorizedAccessException)
        {
        }
    }
}

/// <summary>A factory whose request-body limit is small, for the 413 test.</summary>
public sealed class SmallBodyServiceFactory() : ServiceFactory(new Dictionary<string, string?> { ["DischargeGuard:MaxRequestBodyBytes"] = SmallBodyServiceFactory.Limit.ToString(System.Globalization.CultureInfo.InvariantCulture) })
{
    public const int Limit = 4096;
}

/// <summary>Paths in the repository, found by walking up from the test binary to DischargeGuard.sln.</summary>
internal static class RepoPaths
{
    public static string Root => RepositoryRoot.Path;
}
