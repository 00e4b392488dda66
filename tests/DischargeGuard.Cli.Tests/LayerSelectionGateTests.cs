using System.Text.Json;
using System.Xml.Linq;

namespace DischargeGuard.Cli.Tests;

/// <summary>
/// The gate, locally and against the service, refuses a near miss of a layer id with "did you mean" and says in every
/// report format which layers applied (invented Marlow Fen station: marlow-fen, C-204B).
/// </summary>
public sealed class LayerSelectionGateTests(KeyedService service) : IClassFixture<KeyedService>
{
    private static string Proposal(TempFolder temp, string asset) => temp.Write($"proposal-{Guid.NewGuid():N}.yaml", $"""
        asset: "{asset}"
        site: {"{"}id: marlow-fen, elevation: 4 m{"}"}
        gas: {"{"}preset: methane{"}"}
        stages:
          - suction: {"{"}pressure: 2.5 barg, temperature: 25 °C{"}"}
            discharge: {"{"}pressure: 8.2 barg{"}"}
            efficiency: {"{"}isentropic: 0.84{"}"}
            equipment: {"{"}compressorType: recip-packaged-lubricated{"}"}
        """);

    private Task<GateRun> RunAsync(string mode, TempFolder temp, params string[] args) => mode == "local"
        ? Gate.RunAsync(["check", "--local", "--rules", Repo.Rules, "--audit-file", temp.File("audit.db"), .. args])
        : Gate.RunAsync(service.Host.GateEnvironment(), ["check", "--server", service.Host.Url, .. args]);

    [Theory]
    [InlineData("local", "c-204b")]
    [InlineData("local", "C_204B")]
    [InlineData("server", "c-204b")]
    [InlineData("server", "C204B")]
    public async Task Check_WhenAssetNearMissesLayer_Exits64AtTheAssetKeyWithDidYouMean(string mode, string asset)
    {
        using var temp = new TempFolder();
        var file = Proposal(temp, asset);
        var run = await RunAsync(mode, temp, file);
        Assert.True(run.ExitCode == 64, run.ToString());
        var output = run.Stdout + run.Stderr;
        Assert.Matches(@"proposal-[0-9a-f]+\.yaml:1:\d+: asset: ", output);
        Assert.Contains("did you mean C-204B", output, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("local")]
    [InlineData("server")]
    public async Task Check_WhenAssetIsExactLayer_TextSaysAllThreeLayersApplied(string mode)
    {
        using var temp = new TempFolder();
        var run = await RunAsync(mode, temp, Proposal(temp, "C-204B"));
        Assert.True(run.ExitCode is 0 or 1 or 2, run.ToString());
        Assert.Contains("layers applied: default ← site:marlow-fen ← asset:C-204B", run.Stdout, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("local")]
    [InlineData("server")]
    public async Task Check_WhenAssetIsAnotherMachine_EveryFormatNamesTheLayerNotApplied(string mode)
    {
        const string Sentence = "no layer for asset C-204A: default and site rules only (nearest layer asset:C-204B not applied: a different asset)";
        using var temp = new TempFolder();
        var file = Proposal(temp, "C-204A");

        var text = await RunAsync(mode, temp, file);
        Assert.Contains(Sentence, text.Stdout, StringComparison.Ordinal);

        var json = await RunAsync(mode, temp, "--format", "json", file);
        using (var doc = JsonDocument.Parse(json.Stdout))
        {
            var c = doc.RootElement.GetProperty("cases")[0];
            Assert.Contains(Sentence, c.GetProperty("rulesApplied").GetString(), StringComparison.Ordinal);
            Assert.Equal("asset:C-204B", c.GetProperty("response").GetProperty("ruleSet").GetProperty("unmatched")[0].GetProperty("nearestLayer").GetString());
        }

        var junit = await RunAsync(mode, temp, "--format", "junit", file);
        var layersCase = XDocument.Parse(junit.Stdout).Descendants("testcase").Single(t => (string?)t.Attribute("name") == "rule layers");
        Assert.Contains(Sentence, layersCase.Element("system-out")!.Value, StringComparison.Ordinal);
    }
}
