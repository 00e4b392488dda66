using System.Text.Json;

namespace DischargeGuard.Api.Tests.OpenApi;

/// <summary>
/// The served document passes a standard OpenAPI linter: Spectral's recommended OpenAPI rules (ruleset
/// OpenApi/spectral.yaml) report no error. Spectral runs through npx at a pinned version with its own npm cache in the
/// temp folder, so a second run needs no download.
/// </summary>
public sealed class SpectralLintTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    private const string Spectral = "@stoplight/spectral-cli@6.16.3";

    [SkippableFact]
    public async Task OpenApiDocument_WhenLintedWithTheRecommendedRules_HasNoErrors()
    {
        var npx = ExternalTool.Find("npx");
        ExternalTool.RequireOrSkip(npx, "npx (Node.js)", "apt-get install -y nodejs npm");

        using var folder = new TempFolder("dischargeguard-spectral-");
        using var client = factory.CreateClient();
        var documentPath = Path.Combine(folder.Path, "openapi.json");
        await File.WriteAllTextAsync(documentPath, await client.GetStringAsync(new Uri("/swagger/v1/swagger.json", UriKind.Relative)));
        var ruleset = Path.Combine(RepoPaths.Root, "tests", "DischargeGuard.Api.Tests", "OpenApi", "spectral.yaml");

        var (exitCode, output, error) = await ExternalTool.RunAsync(
            npx!,
            ["--yes", Spectral, "lint", "--ruleset", ruleset, "--format", "json", "--fail-severity", "error", documentPath],
            folder.Path,
            TimeSpan.FromMinutes(8),
            new Dictionary<string, string>
            {
                ["npm_config_cache"] = Path.Combine(Path.GetTempPath(), "dischargeguard-npm-cache"),
                ["npm_config_update_notifier"] = "false",
                ["npm_config_fund"] = "false",
            });

        var start = output.IndexOf('[', StringComparison.Ordinal);
        Assert.True(start >= 0, $"Spectral gave no JSON report (exit {exitCode}):\n{output}\n{error}");
        using var report = JsonDocument.Parse(output[start..]);

        // Spectral's severities: 0 error, 1 warning, 2 information, 3 hint.
        var errors = report.RootElement.EnumerateArray()
            .Where(r => r.GetProperty("severity").GetInt32() == 0)
            .Select(r => $"{r.GetProperty("code").GetString()} at {string.Join('.', r.GetProperty("path").EnumerateArray().Select(p => p.ToString()))}: {r.GetProperty("message").GetString()}")
            .ToList();
        Assert.True(errors.Count == 0, "Spectral errors:\n" + string.Join("\n", errors));
        Assert.True(exitCode == 0, $"Spectral exited {exitCode}:\n{error}");
    }
}
