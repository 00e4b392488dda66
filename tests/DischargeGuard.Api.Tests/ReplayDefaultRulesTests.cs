using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Replaying an evaluation recorded before the special-service rules reports what moved: the default layer's digest,
/// and the verdict it moved. Its own host: the test rewrites that host's copy of default.yaml.
/// </summary>
public sealed class ReplayDefaultRulesTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    [Fact]
    public async Task Replay_WhenDefaultGainsTheEpdmHydrocarbonRule_ReportsTheDefaultLayerAndTheMovedVerdict()
    {
        var defaults = Path.Combine(factory.RulesDirectory, "default.yaml");
        var shipped = await File.ReadAllTextAsync(defaults);
        var start = shipped.IndexOf("  - id: R-SEAL-EPDM-HYDROCARBON", StringComparison.Ordinal);
        var end = shipped.IndexOf("  - id: R-SEAL-EPDM-OIL", StringComparison.Ordinal);
        Assert.True(start > 0 && end > start);
        using var client = factory.CreateClient();
        client.DefaultRequestHeaders.Add("X-DischargeGuard-Intent", "1"); // a reload and a replay carry no body
        async Task ReloadAsync()
        {
            using var reload = await client.PostAsync(new Uri("/v1/rules/reload", UriKind.Relative), null);
            Assert.True(reload.StatusCode == HttpStatusCode.OK, await reload.Content.ReadAsStringAsync());
        }

        // The rule set as it was: no rule on EPDM in hydrocarbon gas.
        await File.WriteAllTextAsync(defaults, shipped.Remove(start, end - start));
        await ReloadAsync();

        // Methane 10 → 30 bar(a) from 30 °C at ηs 0.80 (about 140 °C), EPDM peroxide-cured seals rated 150 °C (seal
        // supplier table (a)): the temperature alone is inside every limit.
        var request = new JsonObject
        {
            ["asset"] = "K-101A",
            ["site"] = new JsonObject { ["id"] = "kestrel-ridge", ["barometricPressure"] = "101 kPa" },
            ["gas"] = new JsonObject { ["preset"] = "methane" },
            ["stages"] = new JsonArray(new JsonObject
            {
                ["suction"] = new JsonObject { ["pressure"] = "1000 kPa(a)", ["temperature"] = "30 °C" },
                ["discharge"] = new JsonObject { ["pressure"] = "3000 kPa(a)" },
                ["efficiency"] = new JsonObject { ["isentropic"] = 0.8 },
                ["equipment"] = new JsonObject { ["compressorType"] = "recip-lubricated", ["lubricant"] = "diester-vdl", ["valveMaterial"] = "peek", ["sealMaterial"] = "epdm-peroxide" },
            }),
        };
        using var first = await factory.EvaluateAsync(request);
        var original = await Json.ReadAsync(first);
        Assert.True(first.StatusCode == HttpStatusCode.OK, original.ToString());
        Assert.True(original.At("verdict").GetString() != "fail", original.At("stages[0].findings").ToString());

        // The shipped file: EPDM in hydrocarbon gas is prohibited (compatibility practice (c) — from memory — verify).
        await File.WriteAllTextAsync(defaults, shipped);
        await ReloadAsync();

        using var replayed = await client.PostAsync(new Uri($"/v1/evaluations/{original.At("id").GetGuid()}/replay", UriKind.Relative), null);
        var body = await Json.ReadAsync(replayed);
        Assert.True(replayed.StatusCode == HttpStatusCode.OK, body.ToString());
        Assert.Equal("fail", body.At("changes.verdict.to").GetString());
        var layers = body.At("changes.layers").EnumerateArray().ToDictionary(l => l.GetProperty("name").GetString()!, l => l.GetProperty("change").GetString());
        Assert.Equal("changed", layers["default"]);
        Assert.Equal(["default"], body.At("changes.verdictMovedBy.layers").EnumerateArray().Select(l => l.GetString()));
        Assert.NotEqual(body.At("changes.ruleDigest.from").GetString(), body.At("changes.ruleDigest.to").GetString());
        Assert.Contains(body.At("replay.stages[0].findings").EnumerateArray(), f => f.GetProperty("ruleId").GetString() == "R-SEAL-EPDM-HYDROCARBON");
    }
}
