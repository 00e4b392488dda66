using System.Globalization;
using System.Text.Json;
using System.Text.Json.Nodes;
using DischargeGuard.Rules.Loading;
using Json.Schema;
using YamlDotNet.Core;
using YamlDotNet.RepresentationModel;

namespace DischargeGuard.Rules.Tests;

public class ShippedRuleFilesTests
{
    private static readonly Lazy<JsonSchema> Schema = new(() =>
        JsonSchema.FromText(File.ReadAllText(Path.Combine(Repo.RulesDirectory, "schema", "rules.schema.json"))));

    public static TheoryData<string> YamlFiles()
    {
        var data = new TheoryData<string>();
        foreach (var f in Directory.EnumerateFiles(Repo.RulesDirectory, "*.yaml", SearchOption.AllDirectories).Order(StringComparer.Ordinal))
        {
            data.Add(Path.GetRelativePath(Repo.RulesDirectory, f).Replace('\\', '/'));
        }

        return data;
    }

    [Fact]
    public void RulesDirectory_WhenListed_HasDefaultSiteAndAssetFiles()
    {
        var files = Directory.EnumerateFiles(Repo.RulesDirectory, "*.yaml", SearchOption.AllDirectories)
            .Select(f => Path.GetRelativePath(Repo.RulesDirectory, f).Replace('\\', '/')).ToList();
        Assert.Contains("default.yaml", files);
        Assert.Contains(files, f => f.StartsWith("sites/", StringComparison.Ordinal));
        Assert.Contains(files, f => f.StartsWith("assets/", StringComparison.Ordinal));
    }

    [Theory]
    [MemberData(nameof(YamlFiles))]
    public void ShippedFile_WhenValidatedAgainstSchema_IsValid(string relative)
    {
        var json = ToJson(File.ReadAllText(Path.Combine(Repo.RulesDirectory, relative)));
        var result = Schema.Value.Evaluate(json, new EvaluationOptions { OutputFormat = OutputFormat.List });
        Assert.True(result.IsValid, relative + ": " + Describe(result));
    }

    [Theory]
    [MemberData(nameof(YamlFiles))]
    public void ShippedFile_WhenParsed_HasNoErrors(string relative)
    {
        var layer = RuleFileParser.Parse(relative, File.ReadAllText(Path.Combine(Repo.RulesDirectory, relative)));
        Assert.Equal(64, layer.Digest.Length);
    }

    [Fact]
    public void ShippedDirectory_WhenLoaded_MergesEverySiteAndAsset()
    {
        var snapshot = Repo.Shipped;
        Assert.NotEmpty(snapshot.Sites);
        Assert.NotEmpty(snapshot.Assets);
        Assert.Equal(64, snapshot.Digest.Length);
    }

    [Theory]
    [InlineData("    warningBand: 10 °C\n")]
    [InlineData("    limt: 150 °C\n")]
    [InlineData("    limit: 150\n")]
    public void Schema_WhenRuleIsWrong_RejectsIt(string badLine)
    {
        // Guards the schema test above against a schema that accepts everything.
        var yaml = "schemaVersion: 1\nlayer:\n  kind: default\n  id: default\nrules:\n  - id: R-X\n    title: t\n    quantity: isentropic\n    severity: violation\n    basis: b\n    message: m\n" + badLine;
        var result = Schema.Value.Evaluate(ToJson(yaml), new EvaluationOptions { OutputFormat = OutputFormat.List });
        Assert.False(result.IsValid);
    }

    private static string Describe(EvaluationResults r) =>
        string.Join("; ", (r.Details ?? []).Where(d => d.Errors is { Count: > 0 }).SelectMany(d => d.Errors!.Select(e => $"{d.InstanceLocation}: {e.Value}")));

    internal static JsonElement ToJson(string yaml)
    {
        var stream = new YamlStream();
        stream.Load(new StringReader(yaml));
        var node = Convert(stream.Documents[0].RootNode);
        return JsonDocument.Parse(node?.ToJsonString() ?? "null").RootElement.Clone();
    }

    private static JsonNode? Convert(YamlNode node) => node switch
    {
        YamlMappingNode m => new JsonObject(m.Children.Select(kv => KeyValuePair.Create(((YamlScalarNode)kv.Key).Value!, Convert(kv.Value)))),
        YamlSequenceNode s => new JsonArray(s.Children.Select(Convert).ToArray()),
        YamlScalarNode sc => Scalar(sc),
        _ => null,
    };

    // YAML 1.2 core schema: plain true/false are booleans, plain numbers are numbers, plain null/~/empty is null.
    private static JsonValue? Scalar(YamlScalarNode s)
    {
        if (s.Style != ScalarStyle.Plain)
        {
            return JsonValue.Create(s.Value);
        }

        return s.Value switch
        {
            "true" => JsonValue.Create(true),
            "false" => JsonValue.Create(false),
            null or "" or "~" or "null" => null,
            var v when double.TryParse(v, NumberStyles.Float, CultureInfo.InvariantCulture, out var d) => JsonValue.Create(d),
            var v => JsonValue.Create(v),
        };
    }
}
