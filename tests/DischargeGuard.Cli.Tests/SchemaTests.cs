using System.Text.Encodings.Web;
using System.Text.Json;
using DischargeGuard.Cli.Proposals;
using Json.Schema;

namespace DischargeGuard.Cli.Tests;

public class SchemaTests
{
    private static readonly Lazy<JsonSchema> Schema = new(() =>
        JsonSchema.FromText(File.ReadAllText(Path.Combine(Repo.Root, "schemas", "proposal.schema.json"))));

    public static TheoryData<string> Examples()
    {
        var data = new TheoryData<string>();
        foreach (var f in Directory.EnumerateFiles(Path.Combine(Repo.Root, "examples", "proposals")).Order(StringComparer.Ordinal))
        {
            data.Add(Path.GetFileName(f));
        }

        return data;
    }

    private static JsonElement ToJson(string path)
    {
        var text = File.ReadAllText(path);
        DocNode root = path.EndsWith(".json", StringComparison.Ordinal) ? JsonDocumentReader.Read(File.ReadAllBytes(path)) : YamlDocumentReader.Read(text);
        using var buffer = new MemoryStream();
        using (var w = new Utf8JsonWriter(buffer, new JsonWriterOptions { Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping }))
        {
            root.WriteTo(w);
        }

        using var doc = JsonDocument.Parse(buffer.ToArray());
        return doc.RootElement.Clone();
    }

    private static string Describe(EvaluationResults r) =>
        string.Join("; ", (r.Details ?? []).Where(d => d.Errors is { Count: > 0 }).SelectMany(d => d.Errors!.Select(e => $"{d.InstanceLocation}: {e.Value}")));

    [Theory]
    [MemberData(nameof(Examples))]
    public void Example_IsValidAgainstTheSchema_AndPassesTheReader(string name)
    {
        var result = Schema.Value.Evaluate(ToJson(Repo.Example(name)), new EvaluationOptions { OutputFormat = OutputFormat.List });
        Assert.True(result.IsValid, name + ": " + Describe(result));
        var file = ProposalReader.ReadFile(Repo.Example(name));
        Assert.Empty(file.Errors);
        Assert.All(file.Cases, c => Assert.Empty(c.Errors));
    }

    [Theory]
    [InlineData("{\"asset\": \"C-204B\", \"stagez\": []}")]
    [InlineData("{\"asset\": \"C-204B\", \"cases\": [{\"gas\": {\"preset\": \"methane\"}}]}")]
    [InlineData("{\"asset\": \"C-204B\", \"cases\": [{\"name\": \"a\", \"site\": {\"id\": \"marlow-fen\"}}]}")]
    [InlineData("{\"asset\": \"C-204B\", \"stages\": [{\"efficiency\": {\"isentropic\": 1.5}}]}")]
    [InlineData("{\"asset\": \"C-204B\", \"stages\": [{\"suction\": {\"pressure\": 2.5}}]}")]
    public void Schema_RefusesWhatTheReaderRefuses(string json)
    {
        using var doc = JsonDocument.Parse(json);
        var result = Schema.Value.Evaluate(doc.RootElement, new EvaluationOptions { OutputFormat = OutputFormat.List });
        Assert.False(result.IsValid, json);
    }

    [Fact]
    public void SchemaRequestFields_MatchTheOpenApiContract()
    {
        // The request part is derived from the API contract: every schema object lists exactly the OpenAPI properties.
        using var openApi = JsonDocument.Parse(File.ReadAllText(Path.Combine(Repo.Root, "tests", "DischargeGuard.Api.Tests", "Snapshots", "openapi.v1.json")));
        var components = openApi.RootElement.GetProperty("components").GetProperty("schemas");
        using var schema = JsonDocument.Parse(File.ReadAllText(Path.Combine(Repo.Root, "schemas", "proposal.schema.json")));
        var defs = schema.RootElement.GetProperty("$defs");
        var pairs = new Dictionary<string, string>(StringComparer.Ordinal)
        {
            ["SiteInput"] = "site", ["GasInput"] = "gas", ["FlowInput"] = "flow", ["StageInput"] = "stage", ["SuctionInput"] = "suction",
            ["IntercoolerInput"] = "intercooler", ["DischargeInput"] = "discharge", ["EfficiencyInput"] = "efficiency",
            ["EquipmentInput"] = "equipment", ["OperationInput"] = "operation", ["MeasuredInput"] = "measured",
            ["CalibrationInput"] = "calibration", ["OilInjectionInput"] = "oilInjection",
        };
        static List<string> Names(JsonElement o) => o.GetProperty("properties").EnumerateObject().Select(p => p.Name).Order(StringComparer.Ordinal).ToList();
        foreach (var (api, def) in pairs)
        {
            Assert.Equal(Names(components.GetProperty(api)), Names(defs.GetProperty(def)));
        }

        var request = Names(defs.GetProperty("requestFields")).Concat(["asset", "site"]).Order(StringComparer.Ordinal).ToList();
        Assert.Equal(Names(components.GetProperty("EvaluationRequest")), request);
    }
}
