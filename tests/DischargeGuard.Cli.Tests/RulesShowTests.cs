using System.Text.Json;

namespace DischargeGuard.Cli.Tests;

/// <summary><c>dischargeguard rules show</c>: the limits in force for the invented marlow-fen / C-204B, in text and json.</summary>
public class RulesShowTests
{
    [Fact]
    public async Task Show_Text_GivesTheAssetLimitItsBasisAndTheChain()
    {
        var run = await Gate.RunAsync("rules", "show", "--rules", Repo.Rules, "--site", "marlow-fen", "--asset", "C-204B");
        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Contains("layers applied: default ← site:marlow-fen ← asset:C-204B", run.Stdout, StringComparison.Ordinal);

        // rules/assets/C-204B.yaml: 170 °C, band 15 K; rules/default.yaml: 177 °C, band 12 K.
        var block = run.Stdout[run.Stdout.IndexOf("R-FIELD-HC  ", StringComparison.Ordinal)..];
        block = block[..block.IndexOf("\n\n", StringComparison.Ordinal)];
        Assert.Contains("limit 170 °C (upper), warning band 15 K; violation", block, StringComparison.Ordinal);
        Assert.Contains("set by asset:C-204B; basis: asset:C-204B: cylinder manufacturer's", block, StringComparison.Ordinal);
        // The default's limit reads as the file states it, 350 °F (177 °C until the stated-limit change).
        Assert.Contains("default (default.yaml): defined the rule → limit 350 °F, warning band 12 K", block, StringComparison.Ordinal);
        Assert.Contains("asset:C-204B (assets/C-204B.yaml): tightened the limit from 350 °F to 170 °C", block, StringComparison.Ordinal);
        Assert.Contains(DischargeGuard.Evaluation.Pipeline.Cautions.DeferToCodes, run.Stdout, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Show_Json_IsTheSameRulesAsTheServiceShows()
    {
        await using var service = await ServiceHost.StartAsync();
        using var http = new HttpClient { BaseAddress = new Uri(service.Url) };
        http.DefaultRequestHeaders.Add("X-Api-Key", service.Keys["gate"]);
        using var api = JsonDocument.Parse(await http.GetStringAsync(new Uri("/v1/rules?site=marlow-fen&asset=C-204B", UriKind.Relative)));

        var run = await Gate.RunAsync("rules", "show", "--rules", service.RulesDirectory, "--site", "marlow-fen", "--asset", "C-204B", "--format", "json");
        Assert.True(run.ExitCode == 0, run.ToString());
        using var cli = JsonDocument.Parse(run.Stdout);
        Assert.Equal(api.RootElement.GetProperty("digest").GetString(), cli.RootElement.GetProperty("digest").GetString());
        Assert.Equal(Compact(api.RootElement.GetProperty("rules")), Compact(cli.RootElement.GetProperty("rules")));
        Assert.Equal(Compact(api.RootElement.GetProperty("disabled")), Compact(cli.RootElement.GetProperty("disabled")));
        Assert.NotEmpty(cli.RootElement.GetProperty("cautions").EnumerateArray());
    }

    [Fact]
    public async Task Show_WhenAssetNearMissesLayer_Exits64WithDidYouMean()
    {
        var run = await Gate.RunAsync("rules", "show", "--rules", Repo.Rules, "--asset", "C_204B");
        Assert.True(run.ExitCode == 64, run.ToString());
        Assert.Contains("did you mean C-204B", run.Stderr, StringComparison.Ordinal);
    }

    private static string Compact(JsonElement e) => JsonSerializer.Serialize(e);
}
