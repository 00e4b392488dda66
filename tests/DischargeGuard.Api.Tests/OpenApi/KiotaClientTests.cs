using System.Text.Json;
using Xunit.Abstractions;

namespace DischargeGuard.Api.Tests.OpenApi;

/// <summary>
/// A client generated from the served document works as a planning system would use it: Kiota (a pinned dotnet tool)
/// generates a C# client, which is built against the Kiota 2.1.6 packages in a temp project outside the repository and
/// run against the service as its own process. It reads the README's one-stage request into its models, posts it and a
/// one-item batch, and every JSON survives the trip through the models unchanged with no member left undeclared.
/// Slow (a tool install, a code generation and a build): filter it out with <c>--filter Category!=Slow</c>.
/// </summary>
[Trait("Category", "Slow")]
public sealed class KiotaClientTests(ITestOutputHelper output)
{
    private const string KiotaVersion = "1.38.0";
    private static readonly TimeSpan StepTimeout = TimeSpan.FromMinutes(8);
    private static readonly string DriverSource = Path.Combine(RepoPaths.Root, "tests", "DischargeGuard.Api.Tests", "OpenApi", "KiotaDriver");

    [SkippableFact]
    public async Task GeneratedClient_WhenRunAgainstTheService_RoundTripsTheReadmeExampleAndABatch()
    {
        var dotnet = Environment.GetEnvironmentVariable("DOTNET_HOST_PATH") is { Length: > 0 } host && File.Exists(host) ? host : ExternalTool.Find("dotnet");
        ExternalTool.RequireOrSkip(dotnet, "dotnet", "see global.json for the SDK");

        using var folder = new TempFolder("dischargeguard-kiota-");
        await using var service = await ServiceProcess.StartAsync(folder.Path, "service", new Dictionary<string, string>());
        using var http = new HttpClient { BaseAddress = service.BaseAddress };
        var documentPath = Path.Combine(folder.Path, "openapi.json");
        await File.WriteAllTextAsync(documentPath, await http.GetStringAsync(new Uri("/swagger/v1/swagger.json", UriKind.Relative)));

        // The tool is kept between runs in the temp folder (one per version), so a second run does not download it.
        var toolPath = Path.Combine(Path.GetTempPath(), "dischargeguard-kiota-" + KiotaVersion);
        var kiota = Path.Combine(toolPath, OperatingSystem.IsWindows() ? "kiota.exe" : "kiota");
        if (!File.Exists(kiota))
        {
            await Run(dotnet!, ["tool", "install", "Microsoft.OpenApi.Kiota", "--version", KiotaVersion, "--tool-path", toolPath], folder.Path);
        }

        var project = Path.Combine(folder.Path, "client");
        Directory.CreateDirectory(project);
        await Run(kiota, ["generate", "-l", "CSharp", "-d", documentPath, "-o", Path.Combine(project, "Generated"), "-n", "DischargeGuard.Client",
            "-c", "DischargeGuardClient", "--clean-output", "--log-level", "Warning"], project, new Dictionary<string, string> { ["KIOTA_UPDATE__DISABLED"] = "true" });

        var models = Directory.GetFiles(Path.Combine(project, "Generated", "Models"), "*.cs");
        var wrappers = models.Where(m => File.ReadAllText(m).Contains("IComposedTypeWrapper", StringComparison.Ordinal)).Select(m => Path.GetFileNameWithoutExtension(m)!).ToArray();
        var perProperty = models.Select(m => Path.GetFileNameWithoutExtension(m)!).Where(n => n.Contains('_', StringComparison.Ordinal)).ToArray();
        output.WriteLine($"{models.Length} model types; composed wrappers: {string.Join(", ", wrappers)}; per-property types: {string.Join(", ", perProperty)}");
        Assert.Equal(["Quantity"], wrappers);

        File.Copy(Path.Combine(DriverSource, "KiotaDriver.csproj.txt"), Path.Combine(project, "KiotaDriver.csproj"));
        File.Copy(Path.Combine(DriverSource, "Program.cs.txt"), Path.Combine(project, "Program.cs"));
        await Run(dotnet!, ["build", "--nologo", "-v", "q", "-o", Path.Combine(project, "out")], project);

        var results = Path.Combine(folder.Path, "results");
        Directory.CreateDirectory(results);
        var body = DocumentedExamplesTests.ReadmeOneStageBody();
        var requestPath = Path.Combine(folder.Path, "readme-request.json");
        await File.WriteAllTextAsync(requestPath, body);
        await Run(dotnet!, [Path.Combine(project, "out", "KiotaDriver.dll"), service.BaseAddress.ToString(), requestPath, results], project);

        string Read(string name) => File.ReadAllText(Path.Combine(results, name));
        AssertSameJson(body, Read("request.kiota.json"), "README request through the client's models");
        AssertSameJson(Read("evaluation.raw.json"), Read("evaluation.kiota.json"), "evaluation answer through the client's models");
        AssertSameJson(Read("batch.raw.json"), Read("batch.kiota.json"), "batch answer through the client's models");
        Assert.Equal(200, JsonDocument.Parse(Read("batch.raw.json")).RootElement.GetProperty("results")[0].GetProperty("status").GetInt32());
        Assert.True(Read("unknown.txt").Trim().Length == 0, "members the document does not declare:\n" + Read("unknown.txt"));
    }

    private async Task Run(string file, string[] arguments, string directory, IReadOnlyDictionary<string, string>? environment = null)
    {
        var (exitCode, stdout, stderr) = await ExternalTool.RunAsync(file, arguments, directory, StepTimeout, environment);
        output.WriteLine($"$ {Path.GetFileName(file)} {string.Join(' ', arguments.Take(2))} … → {exitCode}");
        Assert.True(exitCode == 0, $"{file} {string.Join(' ', arguments)} exited {exitCode}:\n{stdout}\n{stderr}");
    }

    private static void AssertSameJson(string expected, string actual, string what)
    {
        var differences = new List<string>();
        Compare(JsonDocument.Parse(expected).RootElement, JsonDocument.Parse(actual).RootElement, "$", differences);
        Assert.True(differences.Count == 0, what + " changed:\n" + string.Join("\n", differences.Take(30)));
    }

    // Equal as JSON values: member order, escaping and number spelling aside; a timestamp may be written in another offset form.
    private static void Compare(JsonElement a, JsonElement b, string path, List<string> differences)
    {
        if (a.ValueKind != b.ValueKind)
        {
            differences.Add($"{path}: {a.ValueKind} {a.GetRawText()} became {b.ValueKind} {b.GetRawText()}");
            return;
        }

        switch (a.ValueKind)
        {
            case JsonValueKind.Object:
                var names = a.EnumerateObject().Select(p => p.Name).Union(b.EnumerateObject().Select(p => p.Name), StringComparer.Ordinal);
                foreach (var name in names)
                {
                    var inA = a.TryGetProperty(name, out var va);
                    var inB = b.TryGetProperty(name, out var vb);
                    if (inA && inB)
                    {
                        Compare(va, vb, path + "." + name, differences);
                    }
                    else
                    {
                        differences.Add($"{path}.{name}: {(inA ? "lost" : "added")}");
                    }
                }

                break;
            case JsonValueKind.Array:
                if (a.GetArrayLength() != b.GetArrayLength())
                {
                    differences.Add($"{path}: {a.GetArrayLength()} items became {b.GetArrayLength()}");
                    return;
                }

                for (var i = 0; i < a.GetArrayLength(); i++)
                {
                    Compare(a[i], b[i], $"{path}[{i}]", differences);
                }

                break;
            case JsonValueKind.Number:
                if (a.GetDouble() != b.GetDouble())
                {
                    differences.Add($"{path}: {a.GetRawText()} became {b.GetRawText()}");
                }

                break;
            case JsonValueKind.String:
                var sa = a.GetString();
                var sb = b.GetString();
                if (sa != sb && !(DateTimeOffset.TryParse(sa, System.Globalization.CultureInfo.InvariantCulture, out var da)
                    && DateTimeOffset.TryParse(sb, System.Globalization.CultureInfo.InvariantCulture, out var db) && da == db))
                {
                    differences.Add($"{path}: \"{sa}\" became \"{sb}\"");
                }

                break;
        }
    }
}
