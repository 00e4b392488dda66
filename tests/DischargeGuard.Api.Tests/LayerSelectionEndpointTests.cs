using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// The layers asked for are the layers applied, on every path into the service: a single evaluation, a batch item and
/// <c>GET /v1/rules</c>. Uses the shipped layers of the invented Marlow Fen station (marlow-fen, C-204B: R-FIELD-HC
/// tightened from the default's 177 °C to 170 °C).
/// </summary>
public sealed class LayerSelectionEndpointTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    private static JsonObject Methane(string asset, string site = "marlow-fen") => new()
    {
        ["asset"] = asset,
        ["site"] = new JsonObject { ["id"] = site, ["barometricPressure"] = "101 kPa" },
        ["gas"] = new JsonObject { ["preset"] = "methane" },
        ["stages"] = new JsonArray(new JsonObject
        {
            ["suction"] = new JsonObject { ["pressure"] = "1000 kPa(a)", ["temperature"] = "30 °C" },
            ["discharge"] = new JsonObject { ["pressure"] = "3000 kPa(a)" },
            ["efficiency"] = new JsonObject { ["isentropic"] = 0.8 },
            ["equipment"] = new JsonObject { ["compressorType"] = "recip-packaged-lubricated" },
        }),
    };

    [Theory]
    [InlineData("c-204b")]
    [InlineData("C204B")]
    [InlineData("C_204B")]
    public async Task Evaluate_WhenAssetNearMissesLayer_Refuses400DidYouMean(string asset)
    {
        using var response = await factory.EvaluateAsync(Methane(asset));
        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains("did you mean C-204B", AssertEx.Error(problem, "asset"), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenSiteNearMissesLayer_Refuses400AtSiteId()
    {
        using var response = await factory.EvaluateAsync(Methane("C-311X", site: "marlowfen"));
        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains("did you mean marlow-fen", AssertEx.Error(problem, "site.id"), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("C-204B\n", "asset")]
    [InlineData("C-204B ", "asset")]
    [InlineData("C-204B.", "asset")]
    public async Task Evaluate_WhenAssetHasTrailingBreakOrPunctuation_Refuses400(string asset, string path)
    {
        using var response = await factory.EvaluateAsync(Methane(asset));
        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains("ends with a letter or digit", AssertEx.Error(problem, path), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenSiteHasTrailingBreak_Refuses400AtSiteId()
    {
        using var response = await factory.EvaluateAsync(Methane("C-204B", site: "marlow-fen\n"));
        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains("did you mean marlow-fen?", AssertEx.Error(problem, "site.id"), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Evaluate_WhenAssetIsAnotherMachine_AnswersAndNamesTheLayerNotApplied()
    {
        using var response = await factory.EvaluateAsync(Methane("C-204A"));
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var body = await Json.ReadAsync(response);
        var applied = body.At("ruleSet.applied").GetString()!;
        Assert.Contains("no layer for asset C-204A: default and site rules only", applied, StringComparison.Ordinal);
        Assert.Equal("asset:C-204B", body.At("ruleSet.unmatched[0].nearestLayer").GetString());
        Assert.Equal("asset", body.At("ruleSet.unmatched[0].field").GetString());
    }

    [Fact]
    public async Task Batch_WhenOneItemNearMissesLayer_RefusesThatItemOnlyWithDidYouMean()
    {
        var body = new JsonObject { ["evaluations"] = new JsonArray(Methane("C-204B"), Methane("c-204b")) };
        using var client = factory.CreateClient();
        using var content = new StringContent(body.ToJsonString(), Encoding.UTF8, new MediaTypeHeaderValue("application/json"));
        using var response = await client.PostAsync(new Uri("/v1/evaluations/batch", UriKind.Relative), content);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var results = (await Json.ReadAsync(response)).GetProperty("results");
        Assert.Equal(200, results[0].GetProperty("status").GetInt32());
        Assert.Equal("layers applied: default ← site:marlow-fen ← asset:C-204B", results[0].At("evaluation.ruleSet.applied").GetString());
        Assert.Equal(400, results[1].GetProperty("status").GetInt32());
        var message = results[1].At("problem.errors.asset")[0].GetString()!;
        Assert.Contains("did you mean C-204B", message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("?site=marlow-fen&asset=c-204b", "asset", "did you mean C-204B")]
    [InlineData("?site=marlowfen", "site", "did you mean marlow-fen")]
    [InlineData("?site=kestrel-ridge&asset=C-204B", "site", "belongs to site 'marlow-fen'")]
    public async Task GetRules_WhenIdsNearMissOrConflict_Refuses400ByQueryName(string query, string key, string fragment)
    {
        using var client = factory.CreateClient();
        using var response = await client.GetAsync(new Uri("/v1/rules" + query, UriKind.Relative));
        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains(fragment, AssertEx.Error(problem, key), StringComparison.Ordinal);
    }

    [Fact]
    public async Task GetRules_WhenAssetHasNoLayer_SaysWhichLayersApplied()
    {
        var (response, body) = await factory.GetJsonAsync("/v1/rules?site=marlow-fen&asset=C-204A");
        using (response)
        {
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            Assert.Contains("no layer for asset C-204A", body.GetProperty("applied").GetString(), StringComparison.Ordinal);
            Assert.Equal("asset:C-204B", body.At("unmatched[0].nearestLayer").GetString());
            Assert.Equal(JsonValueKind.Array, body.GetProperty("layers").ValueKind);
        }
    }

    [Fact]
    public async Task GetRules_ForSiteAndAsset_ShowsEachLimitInForceWithItsLayerBasisAndChain()
    {
        var (response, body) = await factory.GetJsonAsync("/v1/rules?site=marlow-fen&asset=C-204B");
        using (response)
        {
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            var rule = body.GetProperty("rules").EnumerateArray().Single(r => r.GetProperty("id").GetString() == "R-FIELD-HC");

            // rules/assets/C-204B.yaml: 170 °C, band 15 K (the invented cylinder maker's limit); rules/default.yaml: 177 °C, 12 K.
            Assert.Equal(170, AssertEx.Quantity(rule.GetProperty("limit"), "°C", "limit"), 3);
            Assert.Equal(15, AssertEx.Quantity(rule.GetProperty("warningBand"), "K", "warningBand"), 3);
            Assert.Equal("upper", rule.GetProperty("direction").GetString());
            Assert.Equal("asset:C-204B", rule.GetProperty("limitLayer").GetString());
            Assert.Contains("recip-packaged-lubricated", rule.At("appliesTo.text").GetString(), StringComparison.Ordinal);
            Assert.Equal("hydrocarbon", rule.At("appliesTo.serviceClasses[0]").GetString());
            var basis = rule.GetProperty("basis").GetString()!;
            Assert.Contains("cylinder manufacturer", basis, StringComparison.Ordinal);
            Assert.DoesNotContain("177", basis, StringComparison.Ordinal);
            var chain = rule.GetProperty("chain");
            Assert.Equal(2, chain.GetArrayLength());
            Assert.Equal("default", chain[0].GetProperty("layer").GetString());
            Assert.Contains("177 °C", chain[0].GetProperty("basis").GetString(), StringComparison.Ordinal);
            Assert.Equal("assets/C-204B.yaml", chain[1].GetProperty("file").GetString());
            // The default states 350 °F (177 °C in its basis) since the stated-limit change.
            Assert.StartsWith("tightened the limit from 350 °F to 170 °C", chain[1].GetProperty("change").GetString(), StringComparison.Ordinal);

            var ratio = body.GetProperty("rules").EnumerateArray().Single(r => r.GetProperty("id").GetString() == "R-RATIO");
            Assert.Equal(4.5, AssertEx.Quantity(ratio.GetProperty("limit"), "1", "ratio limit"), 6);
            Assert.Contains("PR-17", ratio.GetProperty("reason").GetString(), StringComparison.Ordinal);
            var disabled = body.GetProperty("disabled").EnumerateArray().Single(d => d.GetProperty("ruleId").GetString() == "R-FLASH-SOFT");
            Assert.Equal("disabled the rule", disabled.At("chain[1].change").GetString());
        }
    }

    [Fact]
    public async Task Evaluate_WhenAssetLayerSetsTheLimit_FindingsBasisIsTheLayersNotTheDefaults()
    {
        using var response = await factory.EvaluateAsync(Methane("C-204B"), "?detail=full");
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var body = await Json.ReadAsync(response);
        var finding = body.At("stages[0].findings").EnumerateArray().Single(f => f.GetProperty("ruleId").GetString() == "R-FIELD-HC");
        Assert.Equal(170, AssertEx.Quantity(finding.GetProperty("limit"), "°C", "limit"), 3);
        Assert.Equal("asset:C-204B", finding.GetProperty("layer").GetString());
        Assert.DoesNotContain("177", finding.GetProperty("basis").GetString(), StringComparison.Ordinal);
    }
}
