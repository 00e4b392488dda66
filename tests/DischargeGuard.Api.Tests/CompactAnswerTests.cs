using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;
using DischargeGuard.Audit;
using DischargeGuard.Rules.Loading;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// The compact answer (issue 18): each finding once, under its stage, with what a planner and a technician need; the
/// top level naming the deciding limit by reference; pressures echoed in the basis typed; the long basis in
/// ?detail=full and in the archived rule set; the record's per-stage SI summary matching the answer.
/// </summary>
public sealed class CompactAnswerTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    private static readonly string[] CompactFields = ["ruleId", "title", "severity", "quantity", "limit", "margin", "message"];

    [Fact]
    public async Task ReadmeExample_WhenAskedPlainly_AnswersCompactWithEachFindingOnceUnderItsStage()
    {
        using var response = await factory.EvaluateAsync(JsonNode.Parse(DocumentedExamplesTests.ReadmeOneStageBody())!);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var body = await Json.ReadAsync(response);

        Assert.Equal("compact", body.At("detail").GetString());
        Assert.False(body.Has("findings"), "no top-level findings list");
        var stage = body.At("stages[0]");
        var findings = stage.At("findings").EnumerateArray().ToArray();
        Assert.Equal(findings.Length, findings.Select(f => f.At("ruleId").GetString()).Distinct().Count());
        foreach (var f in findings)
        {
            foreach (var field in CompactFields.Where(n => n is not ("limit" or "margin") || f.At("severity").GetString() != "info"))
            {
                Assert.True(f.Has(field), $"{f.At("ruleId")} has no {field}");
            }

            Assert.False(f.Has("basis"), "the basis is in ?detail=full and the archived rule set");
        }

        // The top level names the deciding limit by reference: the README's stage fails R-API618-GEN.
        Assert.Equal("fail", body.At("verdict").GetString());
        Assert.Equal(0, body.At("governing.stage").GetInt32());
        Assert.Equal(stage.At("governing.ruleId").GetString(), body.At("governing.ruleId").GetString());
        Assert.Equal(stage.At("governing.margin.value").GetDouble(), body.At("governing.margin.value").GetDouble());
        Assert.Contains(findings, f => f.At("ruleId").GetString() == body.At("governing.ruleId").GetString());
    }

    [Fact]
    public async Task ReadmeExample_PressuresTypedGauge_AreEchoedGaugeBesideAbsoluteWithTheBarometerUsed()
    {
        using var response = await factory.EvaluateAsync(JsonNode.Parse(DocumentedExamplesTests.ReadmeOneStageBody())!);
        var body = await Json.ReadAsync(response);

        // 350 m: the ISO 2533 standard atmosphere gives ≈ 97.2 kPa (101.325·(1 − 2.25577e-5·350)^5.25588).
        var barometer = AssertEx.Quantity(body.At("barometricPressure"), "kPa");
        AssertEx.Near(101.325 * Math.Pow(1 - (2.25577e-5 * 350), 5.25588), barometer, 0.01, "barometer at 350 m");
        var stage = body.At("stages[0]");
        Assert.Equal(0.2, AssertEx.Quantity(stage.At("suction.pressureAsTyped"), "barg"), 6);
        Assert.Equal(2.8, AssertEx.Quantity(stage.At("discharge.pressureAsTyped"), "barg"), 6);
        AssertEx.Near(280 + barometer, AssertEx.Quantity(stage.At("discharge.pressureAbsolute"), "kPa"), 0.001, "absolute = gauge + barometer");

        // The envelope's highest discharge pressure in the same basis: absolute less the barometer, in bar.
        var maxAbsolute = AssertEx.Quantity(stage.At("envelope.maxDischargePressure"), "kPa");
        AssertEx.Near((maxAbsolute - barometer) / 100, AssertEx.Quantity(stage.At("envelope.maxDischargePressureAsTyped"), "barg"), 0.0001, "envelope in barg");
        Assert.Equal("other-stages", stage.At("envelope.heldFixed").GetString());
    }

    [Fact]
    public async Task DetailFull_CarriesEachRulesBasisAndTheEnvelopePerLimit()
    {
        using var response = await factory.EvaluateAsync(JsonNode.Parse(DocumentedExamplesTests.ReadmeOneStageBody())!, "?detail=full");
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var body = await Json.ReadAsync(response);
        Assert.Equal("full", body.At("detail").GetString());
        var stage = body.At("stages[0]");
        Assert.All(stage.At("findings").EnumerateArray(), f => Assert.False(string.IsNullOrEmpty(f.At("basis").GetString())));
        Assert.NotEmpty(stage.At("envelope.byLimit").EnumerateArray());
        Assert.True(stage.Has("realGas"));
    }

    [Theory]
    [InlineData("short")]
    [InlineData("FULL")]
    public async Task Detail_WhenNotAWordTheContractKnows_Is400NamingTheAcceptedValues(string detail)
    {
        using var response = await factory.EvaluateAsync(Requests.PassingStage(), "?detail=" + detail);
        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains("compact", problem.At("errors.detail[0]").GetString(), StringComparison.Ordinal);
        Assert.Contains("full", problem.At("errors.detail[0]").GetString(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Imperial_Api618Limit_IsShownAsTheStandardStatesIt300FNot302F()
    {
        var request = JsonNode.Parse(DocumentedExamplesTests.ReadmeOneStageBody())!.AsObject();
        request["outputUnits"] = "imperial";
        using var response = await factory.EvaluateAsync(request);
        var body = await Json.ReadAsync(response);
        var api = body.At("stages[0].findings").EnumerateArray().Single(f => f.At("ruleId").GetString() == "R-API618-GEN");

        // API 618 5th ed.: 150 °C (300 °F) — as the rule file states it ("150 °C (300 °F)"), from memory — verify.
        Assert.Equal(300, AssertEx.Quantity(api.At("limit"), "°F"), 6);

        // The margin is computed in SI from the value checked, 150 °C = 302 °F (NIST SP 811: °F = 1.8·°C + 32).
        AssertEx.Near(302 - AssertEx.Quantity(api.At("value"), "°F"), AssertEx.Quantity(api.At("margin"), "Δ°F"), 0.002, "margin against 302 °F");
    }

    [Fact]
    public async Task Record_CarriesEachStagesSiSummaryAndTheRuleSetIsArchivedByItsDigest()
    {
        var request = JsonNode.Parse(DocumentedExamplesTests.ReadmeOneStageBody())!.AsObject();
        request["outputUnits"] = "imperial";
        using var response = await factory.EvaluateAsync(request);
        var body = await Json.ReadAsync(response);
        var store = factory.Services.GetRequiredService<IAuditStore>();
        var record = await store.GetAsync(body.At("id").GetGuid(), CancellationToken.None);
        Assert.NotNull(record);
        var summary = Assert.Single(record!.Stages);
        var stage = body.At("stages[0]");

        // The imperial answer and the SI summary say the same: °F = 1.8·(K − 273.15) + 32, psia = Pa / 6894.757 (NIST SP 811).
        Assert.Equal("fail", summary.Verdict);
        Assert.Equal(stage.At("governing.ruleId").GetString(), summary.GoverningRuleId);
        AssertEx.Near(AssertEx.Quantity(stage.At("dischargeTemperature.estimated"), "°F"), (1.8 * (summary.EstimatedKelvin!.Value - 273.15)) + 32, 0.001, "T2");
        AssertEx.Near(AssertEx.Quantity(stage.At("dischargeTemperature.isentropic"), "°F"), (1.8 * (summary.IsentropicKelvin!.Value - 273.15)) + 32, 0.001, "T2s");
        AssertEx.Near(AssertEx.Quantity(stage.At("discharge.pressureAbsolute"), "psia"), summary.DischargePressurePascal / 6894.757293168361, 0.001, "p2");
        AssertEx.Near(AssertEx.Quantity(stage.At("governing.margin"), "Δ°F"), summary.MarginKelvin!.Value * 1.8, 0.001, "margin");

        // The rule set the answer names is archived once, in canonical form, under its digest.
        var digest = body.At("ruleSet.digest").GetString()!;
        var canonical = await store.GetRuleSetAsync(digest, CancellationToken.None);
        Assert.NotNull(canonical);
        Assert.Equal(digest, CanonicalForm.Digest(canonical!));
        Assert.Contains("R-API618-GEN", System.Text.Encoding.UTF8.GetString(canonical!), StringComparison.Ordinal);
    }
}
