using System.Net;
using System.Text.Json;

namespace DischargeGuard.Api.Tests;

/// <summary>Editing the rule directory while the service runs (its own factory: the edits are its state).</summary>
public sealed class RuleReloadTests
{
    private static readonly TimeSpan ReloadTimeout = TimeSpan.FromSeconds(30);

    // Site layer of the invented site kestrel-ridge (Harrow Basin Gas Co.), in the format of rules/sites/marlow-fen.yaml.
    private const string TightenedSite = """
        # Invented example site layer for the tests.
        schemaVersion: 1

        layer:
          kind: site
          id: kestrel-ridge
          title: Kestrel Ridge compressor station (Harrow Basin Gas Co.)
          owner: Harrow Basin Gas Co. rotating equipment group

        overrides:
          # Tighten: an owner's specification 10 K below the shipped limit. No reason needed.
          - rule: R-API618-GEN
            limit: 140 °C
        """;

    // The same file with a misspelt key on line 12 ("limt").
    private const string BrokenSite = """
        # Invented example site layer for the tests.
        schemaVersion: 1

        layer:
          kind: site
          id: kestrel-ridge
          title: Kestrel Ridge compressor station (Harrow Basin Gas Co.)
          owner: Harrow Basin Gas Co. rotating equipment group

        overrides:
          - rule: R-API618-GEN
            limt: 130 °C
        """;

    [Fact]
    public async Task Rules_WhenSiteFileIsAddedThenBroken_ReloadsTheGoodOneAndKeepsItWhileDegraded()
    {
        await using var factory = ServiceFactory.WatchingRules();
        var (_, initial) = await factory.GetJsonAsync("/v1/rules?site=kestrel-ridge");
        Assert.DoesNotContain(initial.At("layers").EnumerateArray(), l => l.At("name").GetString() == "site:kestrel-ridge");
        var sitePath = Path.Combine(factory.RulesDirectory, "sites", "kestrel-ridge.yaml");

        await File.WriteAllTextAsync(sitePath, TightenedSite);
        var reloaded = await PollAsync(factory, "/v1/rules?site=kestrel-ridge", b => b.At("layers").EnumerateArray().Any(l => l.At("name").GetString() == "site:kestrel-ridge"));

        var siteLayer = reloaded.At("layers").EnumerateArray().Single(l => l.At("name").GetString() == "site:kestrel-ridge");
        Assert.Equal("sites/kestrel-ridge.yaml", siteLayer.At("file").GetString());
        var goodDigest = reloaded.At("digest").GetString();
        Assert.NotEqual(initial.At("digest").GetString(), goodDigest);
        var tightened = await EvaluateAsync(factory);
        Assert.Equal(goodDigest, tightened.At("ruleSet.digest").GetString());
        Assert.Contains(tightened.At("ruleSet.layers").EnumerateArray(), l => l.At("name").GetString() == "site:kestrel-ridge");
        var finding = tightened.At("stages[0].findings").EnumerateArray().Single(f => f.At("ruleId").GetString() == "R-API618-GEN");
        Assert.Equal("site:kestrel-ridge", finding.At("layer").GetString());
        Assert.Equal(140, AssertEx.Quantity(finding.At("limit"), "°C"));

        await File.WriteAllTextAsync(sitePath, BrokenSite);
        var degraded = await PollAsync(factory, "/health/ready", b => b.At("status").GetString() == "Degraded");

        Assert.Equal("Degraded", degraded.At("checks.rules.status").GetString());
        var error = Assert.Single(degraded.At("checks.rules.data.lastReloadErrors").EnumerateArray()).GetString();
        Assert.StartsWith("sites/kestrel-ridge.yaml:12:", error, StringComparison.Ordinal);
        Assert.Contains("limt", error, StringComparison.Ordinal);
        var (ready, _) = await factory.GetJsonAsync("/health/ready");
        Assert.Equal(HttpStatusCode.OK, ready.StatusCode);
        var (_, rules) = await factory.GetJsonAsync("/v1/rules?site=kestrel-ridge");
        Assert.Equal(goodDigest, rules.At("digest").GetString());
        var reported = Assert.Single(rules.At("lastReloadErrors").EnumerateArray());
        Assert.Equal("sites/kestrel-ridge.yaml", reported.At("file").GetString());
        Assert.Equal(12, reported.At("line").GetInt64());
        Assert.Contains("limt", reported.At("key").GetString(), StringComparison.Ordinal);
        var stillGood = await EvaluateAsync(factory);
        Assert.Equal(goodDigest, stillGood.At("ruleSet.digest").GetString());
    }

    private static async Task<JsonElement> EvaluateAsync(ServiceFactory factory)
    {
        using var response = await factory.EvaluateAsync(Requests.PassingStage());
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        return await Json.ReadAsync(response);
    }

    private static async Task<JsonElement> PollAsync(ServiceFactory factory, string path, Func<JsonElement, bool> done)
    {
        var deadline = DateTime.UtcNow + ReloadTimeout;
        JsonElement last;
        do
        {
            (_, last) = await factory.GetJsonAsync(path);
            if (done(last))
            {
                return last;
            }

            await Task.Delay(100);
        }
        while (DateTime.UtcNow < deadline);

        Assert.Fail($"{path} did not change within {ReloadTimeout.TotalSeconds} s; last answer: {last}");
        return last;
    }
}
