using System.Net.Http.Json;
using System.Text.Json;

namespace DischargeGuard.Cli.Tests;

public class RulesCheckTests
{
    internal static string DigestLine(GateRun run) =>
        run.Stdout.Split('\n').Single(l => l.StartsWith("digest: ", StringComparison.Ordinal))["digest: ".Length..].Split(' ')[0].Trim();

    [Fact]
    public async Task Directory_IsValid_AndListsLayersAndMergedDigests()
    {
        var run = await Gate.RunAsync("rules", "check", Repo.Rules);
        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Contains("site:marlow-fen", run.Stdout, StringComparison.Ordinal);
        Assert.Contains("asset:C-204B", run.Stdout, StringComparison.Ordinal);
        Assert.Matches("^[0-9a-f]{64}$", DigestLine(run));
        Assert.Contains(DischargeGuard.Evaluation.Pipeline.Cautions.DeferToCodes, run.Stdout, StringComparison.Ordinal);
    }

    [Fact]
    public async Task BrokenLayer_Exits64_NamingFileLineAndKey()
    {
        using var temp = new TempFolder();
        var rules = temp.File("rules");
        Repo.CopyDirectory(Repo.Rules, rules);
        var site = Path.Combine(rules, "sites", "marlow-fen.yaml");
        File.WriteAllText(site, File.ReadAllText(site).Replace("limit: 145 °C", "limit: 160 °C", StringComparison.Ordinal));
        var run = await Gate.RunAsync("rules", "check", rules);
        Assert.True(run.ExitCode == 64, run.ToString());
        Assert.Matches(@"sites/marlow-fen\.yaml:\d+:\d+: overrides", run.Stderr);

        var single = await Gate.RunAsync("rules", "check", site);
        Assert.Equal(64, single.ExitCode);
    }

    [Fact]
    public async Task DefaultFileAlone_PrintsTheSameDigestAsItsDirectoryWithoutSiteOrAsset()
    {
        using var temp = new TempFolder();
        var alone = temp.File("default.yaml");
        File.Copy(Path.Combine(Repo.Rules, "default.yaml"), alone);
        var file = await Gate.RunAsync("rules", "check", alone);
        var dir = await Gate.RunAsync("rules", "check", Repo.Rules);
        Assert.Equal(0, file.ExitCode);
        Assert.Equal(DigestLine(dir), DigestLine(file));
    }

    [Fact]
    public async Task ExpectedDigest_Mismatch_Exits64()
    {
        var run = await Gate.RunAsync("rules", "check", Repo.Rules, "--expect-rules-digest", new string('a', 64));
        Assert.Equal(64, run.ExitCode);
        Assert.Contains("not the approved", run.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Digest_EqualsTheServicesGetRulesDigest_ForTheSameDirectory()
    {
        await using var service = await ServiceHost.StartAsync();
        using var http = new HttpClient { BaseAddress = new Uri(service.Url) };
        http.DefaultRequestHeaders.Add("X-Api-Key", service.Keys["gate"]);
        foreach (var (site, asset) in new (string?, string?)[] { (null, null), ("marlow-fen", null), ("marlow-fen", "C-204B") })
        {
            var query = "/v1/rules" + (site is null ? string.Empty : $"?site={site}" + (asset is null ? string.Empty : $"&asset={asset}"));
            var body = await http.GetFromJsonAsync<JsonElement>(new Uri(query, UriKind.Relative));
            var args = new List<string> { "rules", "check", service.RulesDirectory };
            if (site is not null)
            {
                args.AddRange(["--site", site]);
            }

            if (asset is not null)
            {
                args.AddRange(["--asset", asset]);
            }

            var run = await Gate.RunAsync([.. args]);
            Assert.True(run.ExitCode == 0, run.ToString());
            Assert.Equal(body.GetProperty("digest").GetString(), DigestLine(run));
        }
    }
}
