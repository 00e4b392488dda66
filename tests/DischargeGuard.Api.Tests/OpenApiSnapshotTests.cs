using System.Text;
using System.Text.Encodings.Web;
using System.Text.Json;
using System.Text.Json.Nodes;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Guards the contract: the OpenAPI document must equal the committed snapshot. To accept an intended change, run the
/// tests with DISCHARGEGUARD_ACCEPT_SNAPSHOT=1, which overwrites Snapshots/openapi.v1.json, and commit it.
/// </summary>
public sealed class OpenApiSnapshotTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    private const string AcceptVariable = "DISCHARGEGUARD_ACCEPT_SNAPSHOT";

    private static readonly JsonSerializerOptions Indented = new() { WriteIndented = true, Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping };

    [Fact]
    public async Task OpenApiDocument_WhenGenerated_MatchesTheCommittedSnapshot()
    {
        using var client = factory.CreateClient();
        var received = Normalise(await client.GetStringAsync(new Uri("/swagger/v1/swagger.json", UriKind.Relative)));
        var snapshotPath = Path.Combine(RepoPaths.Root, "tests", "DischargeGuard.Api.Tests", "Snapshots", "openapi.v1.json");

        if (Environment.GetEnvironmentVariable(AcceptVariable) == "1")
        {
            await File.WriteAllTextAsync(snapshotPath, received, new UTF8Encoding(false));
            return;
        }

        var committed = File.Exists(snapshotPath) ? Normalise(await File.ReadAllTextAsync(snapshotPath)) : string.Empty;
        if (committed != received)
        {
            var receivedPath = Path.Combine(RepoPaths.Root, "TestResults", "openapi.v1.received.json");
            Directory.CreateDirectory(Path.GetDirectoryName(receivedPath)!);
            await File.WriteAllTextAsync(receivedPath, received, new UTF8Encoding(false));
            Assert.Fail(
                $"The OpenAPI document differs from tests/DischargeGuard.Api.Tests/Snapshots/openapi.v1.json (the received document is in "
                + $"TestResults/openapi.v1.received.json; first difference at line {FirstDifferentLine(committed, received)}). If the contract change "
                + $"is intended, run `{AcceptVariable}=1 dotnet test tests/DischargeGuard.Api.Tests` to overwrite the snapshot, review the diff and commit it.");
        }
    }

    [Fact]
    public async Task OpenApiDocument_WhenGenerated_CarriesNoBuildOrMachineSpecificText()
    {
        using var client = factory.CreateClient();
        var document = await client.GetStringAsync(new Uri("/swagger/v1/swagger.json", UriKind.Relative));

        // The engine version (with the commit hash) belongs in answers, never in the contract.
        Assert.DoesNotContain(Evaluation.Pipeline.EvaluationPipeline.EngineVersion, document, StringComparison.Ordinal);
        Assert.DoesNotContain(factory.Folder, document, StringComparison.Ordinal);
        Assert.DoesNotContain(RepoPaths.Root, document, StringComparison.Ordinal);
    }

    // Parse and write again indented with object keys sorted, so formatting and member order do not matter.
    private static string Normalise(string json) =>
        Sort(JsonNode.Parse(json))?.ToJsonString(Indented).ReplaceLineEndings("\n") + "\n";

    private static JsonNode? Sort(JsonNode? node) => node switch
    {
        JsonObject o => new JsonObject(o.OrderBy(p => p.Key, StringComparer.Ordinal).Select(p => KeyValuePair.Create(p.Key, Sort(p.Value?.DeepClone())))),
        JsonArray a => new JsonArray(a.Select(e => Sort(e?.DeepClone())).ToArray()),
        _ => node?.DeepClone(),
    };

    private static int FirstDifferentLine(string expected, string actual)
    {
        var e = expected.Split('\n');
        var a = actual.Split('\n');
        for (var i = 0; i < Math.Min(e.Length, a.Length); i++)
        {
            if (e[i] != a[i])
            {
                return i + 1;
            }
        }

        return Math.Min(e.Length, a.Length) + 1;
    }
}
