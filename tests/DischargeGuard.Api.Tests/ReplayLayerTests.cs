using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Replaying a recorded evaluation names the layer whose change moved the verdict, among all layers that changed
/// (compared by name and digest). Its own host: the test rewrites that host's copy of the invented marlow-fen and C-204B
/// layers.
/// </summary>
public sealed class ReplayLayerTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    [Fact]
    public async Task Replay_WhenSiteAndAssetLayersChangeButOnlyTheAssetsMovesTheVerdict_NamesTheAssetLayer()
    {
        // Methane through C-204B, 1000 → 3000 kPa(a) from 30 °C at ηs 0.80: estimated about 140 °C, inside the asset
        // layer's 170 °C on R-FIELD-HC (rules/assets/C-204B.yaml).
        var request = new JsonObject
        {
            ["asset"] = "C-204B",
            ["site"] = new JsonObject { ["id"] = "marlow-fen", ["barometricPressure"] = "101 kPa" },
            ["gas"] = new JsonObject { ["preset"] = "methane" },
            ["stages"] = new JsonArray(new JsonObject
            {
                ["suction"] = new JsonObject { ["pressure"] = "1000 kPa(a)", ["temperature"] = "30 °C" },
                ["discharge"] = new JsonObject { ["pressure"] = "3000 kPa(a)" },
                ["efficiency"] = new JsonObject { ["isentropic"] = 0.8 },
                ["equipment"] = new JsonObject { ["compressorType"] = "recip-packaged-lubricated" },
            }),
        };
        using var first = await factory.EvaluateAsync(request);
        var original = await Json.ReadAsync(first);
        Assert.True(first.StatusCode == HttpStatusCode.OK, original.ToString());
        Assert.NotEqual("fail", original.At("verdict").GetString());

        // The site layer changes only a reason's wording; the asset layer tightens R-FIELD-HC below the estimate.
        var site = Path.Combine(factory.RulesDirectory, "sites", "marlow-fen.yaml");
        await File.WriteAllTextAsync(site, (await File.ReadAllTextAsync(site)).Replace("reviewed by the site engineer", "reviewed again by the site engineer", StringComparison.Ordinal));
        var asset = Path.Combine(factory.RulesDirectory, "assets", "C-204B.yaml");
        await File.WriteAllTextAsync(asset, (await File.ReadAllTextAsync(asset)).Replace("limit: 170 °C", "limit: 125 °C", StringComparison.Ordinal));

        using var client = factory.CreateClient();
        using (var reload = await client.PostWithoutBodyAsync("/v1/rules/reload"))
        {
            Assert.True(reload.StatusCode == HttpStatusCode.OK, await reload.Content.ReadAsStringAsync());
        }

        using var replayed = await client.PostWithoutBodyAsync($"/v1/evaluations/{original.At("id").GetGuid()}/replay");
        var body = await Json.ReadAsync(replayed);
        Assert.True(replayed.StatusCode == HttpStatusCode.OK, body.ToString());

        Assert.Equal("fail", body.At("changes.verdict.to").GetString());
        var layers = body.At("changes.layers").EnumerateArray().ToDictionary(l => l.GetProperty("name").GetString()!, l => l.GetProperty("change").GetString());
        Assert.Equal(new Dictionary<string, string?> { ["site:marlow-fen"] = "changed", ["asset:C-204B"] = "changed" }, layers);
        Assert.Equal(["asset:C-204B"], body.At("changes.verdictMovedBy.layers").EnumerateArray().Select(l => l.GetString()));
        Assert.Contains("because of the change to asset:C-204B (changed)", body.At("changes.verdictMovedBy.message").GetString(), StringComparison.Ordinal);
        Assert.Equal(original.At("ruleSet.layers[2].digest").GetString(), body.At("changes.layers").EnumerateArray().Single(l => l.GetProperty("name").GetString() == "asset:C-204B").GetProperty("from").GetString());
        Assert.Equal(body.At("replay.ruleSet.digest").GetString(), body.At("changes.ruleDigest.to").GetString());
        Assert.Equal(JsonValueKind.String, body.At("replay.ruleSet.layers[2].digest").ValueKind);
    }
}
