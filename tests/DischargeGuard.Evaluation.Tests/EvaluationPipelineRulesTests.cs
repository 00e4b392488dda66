using System.Globalization;
using System.Text.Json;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using static DischargeGuard.Evaluation.Tests.Scenario;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>Efficiency defaults, catalogue ids, refusals, verdicts with their envelope, curve and cautions.</summary>
public sealed class EvaluationPipelineRulesTests
{
    private static void AssertProblem(RequestProblem problem, ProblemKind kind, string code, string path, params string[] fragments)
    {
        var listing = string.Join("; ", problem.Errors.Select(e => e.Key + " = " + string.Join(" | ", e.Value)));
        Assert.True(problem.Kind == kind && problem.Code == code, $"Expected {kind} {code}, got {problem.Kind} {problem.Code}: {listing}");
        Assert.True(problem.Errors.TryGetValue(path, out var messages), $"No error at '{path}': {listing}");
        foreach (var f in fragments)
        {
            Assert.True(messages!.Any(m => m.Contains(f, StringComparison.Ordinal)), $"No message at '{path}' contains '{f}': {listing}");
        }
    }

    [Fact]
    public void Evaluate_WhenEfficiencyAbsent_UsesCompressorTypeDefaultAndSaysSo()
    {
        var response = Evaluate(AirRequest(AirStage() with { Efficiency = null }));
        var stage = response.Stages[0];

        // recip-lubricated default in rules/default.yaml: isentropic 0.80 (common practice, no single source).
        Assert.Equal("rule-default", stage.Efficiency.Source);
        Assert.Equal("isentropic", stage.Efficiency.Given);
        Assert.Equal(0.80, stage.Efficiency.Isentropic);
        Assert.Contains("common practice", stage.Efficiency.Basis, StringComparison.Ordinal);
        Assert.Contains(Cautions.DefaultEfficiency, response.Cautions);
        var info = Assert.Single(stage.Findings, f => f.RuleId == "ENGINE-DEFAULT-EFFICIENCY");
        Assert.Equal("info", info.Severity);

        var given = Evaluate(AirRequest()).Stages[0];
        Assert.Equal(given.DischargeTemperature!.Estimated, stage.DischargeTemperature!.Estimated);
    }

    [Fact]
    public void Evaluate_WhenCentrifugalWithoutEfficiency_UsesPolytropicDefault()
    {
        var stage = AirStage() with { Efficiency = null, Equipment = new EquipmentInput { CompressorType = "centrifugal" } };
        var efficiency = Evaluate(AirRequest(stage)).Stages[0].Efficiency;
        Assert.Equal("polytropic", efficiency.Given);
        Assert.Equal(0.75, efficiency.Polytropic);
    }

    [Fact]
    public void Evaluate_WhenNeitherEfficiencyNorCompressorType_RefusesAtEfficiency()
    {
        var problem = Refuse(AirRequest(AirStage() with { Efficiency = null, Equipment = null }));
        AssertProblem(problem, ProblemKind.InvalidRequest, "invalid-request", "stages[0].efficiency", "compressorType");
    }

    [Fact]
    public void Evaluate_WhenFloodedScrewGivesNoEfficiency_UsesTheTypesDefaultForTheOilBalance()
    {
        // Formerly refused (the type had no efficiency); the shaft work now comes from the type's default, marked as such.
        var stage = AirStage() with { Efficiency = null, Equipment = new EquipmentInput { CompressorType = "screw-oil-flooded" } };
        var answer = Evaluate(AirRequest(stage)).Stages[0];
        Assert.Equal("rule-default", answer.Efficiency.Source);
        Assert.NotNull(answer.DischargeTemperature!.Flooded);
    }

    [Theory]
    [InlineData("lubricant", "'mineral-vdl'")]
    [InlineData("compressorType", "'recip-lubricated'")]
    [InlineData("valveMaterial", "'peek'")]
    [InlineData("sealMaterial", "'fkm'")]
    public void Evaluate_WhenCatalogueIdUnknown_RefusesAndListsAcceptedIds(string field, string listed)
    {
        var equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "mineral-vdl" };
        equipment = field switch
        {
            "lubricant" => equipment with { Lubricant = "harrow-hd-46" },
            "compressorType" => equipment with { CompressorType = "rotary-lobe" },
            "valveMaterial" => equipment with { ValveMaterial = "nbr" }, // a seal material is not a valve material
            _ => equipment with { SealMaterial = "peek" },
        };
        var problem = Refuse(AirRequest(AirStage() with { Equipment = equipment }));
        AssertProblem(problem, ProblemKind.InvalidRequest, "invalid-request", $"stages[0].equipment.{field}", "not in the active rule set's catalogue", listed);
    }

    [Fact]
    public void Evaluate_WhenDischargeNotAboveSuction_IsUnprocessableAtDischargePressure()
    {
        var problem = Refuse(AirRequest(AirStage(suction: "300 kPa(a)", discharge: "300 kPa(a)")));
        AssertProblem(problem, ProblemKind.Unprocessable, "out-of-range", "stages[0].discharge.pressure");
        Assert.Single(problem.Errors);
    }

    [Fact]
    public void Evaluate_WhenSuctionTemperatureBelowGasData_IsUnprocessableAtSuctionTemperature()
    {
        var problem = Refuse(AirRequest(AirStage(temperature: "150 K")));
        AssertProblem(problem, ProblemKind.Unprocessable, "out-of-range", "stages[0].suction.temperature");
    }

    [Fact]
    public void Evaluate_WhenLaterStageCoolerOutletOutOfRange_IsUnprocessableAtOutletTemperature()
    {
        var stage2 = new StageInput
        {
            Intercooler = new IntercoolerInput { OutletTemperature = Q("100 K") },
            Discharge = new DischargeInput { Pressure = Q("900 kPa(a)") },
            Efficiency = new EfficiencyInput { Isentropic = 0.8 },
        };
        AssertProblem(Refuse(AirRequest(AirStage(), stage2)), ProblemKind.Unprocessable, "out-of-range", "stages[1].intercooler.outletTemperature");
    }

    [Fact]
    public void Evaluate_WhenCoolerDropExceedsPressure_IsUnprocessableAtPressureDrop()
    {
        var stage2 = new StageInput
        {
            Intercooler = new IntercoolerInput { OutletTemperature = Q("40 °C"), PressureDrop = Q("400 kPa") },
            Discharge = new DischargeInput { Pressure = Q("900 kPa(a)") },
            Efficiency = new EfficiencyInput { Isentropic = 0.8 },
        };
        AssertProblem(Refuse(AirRequest(AirStage(), stage2)), ProblemKind.Unprocessable, "out-of-range", "stages[1].intercooler.pressureDrop");
    }

    [Fact]
    public void Evaluate_WhenBarometricPressureFiveKilopascals_IsUnprocessableAtBarometricPressure()
    {
        var request = AirRequest(AirStage(suction: "0.5 barg", discharge: "3 barg")) with { Site = new SiteInput { Id = Site, BarometricPressure = Q("5 kPa") } };
        AssertProblem(Refuse(request), ProblemKind.Unprocessable, "out-of-range", "site.barometricPressure", "30 kPa", "110 kPa");
    }

    [Fact]
    public void Evaluate_WhenElevationAboveTroposphere_IsUnprocessableAtElevation()
    {
        var request = AirRequest(AirStage(suction: "0.5 barg", discharge: "3 barg")) with { Site = new SiteInput { Id = Site, Elevation = Q("12000 m") } };
        AssertProblem(Refuse(request), ProblemKind.Unprocessable, "out-of-range", "site.elevation", "ISO 2533");
    }

    [Fact]
    public void Evaluate_WhenAirStageFarAbovePredictedLimit_FailsWithEnvelopeThatReachesTheLimit()
    {
        // 100 kPa(a), 35 °C to 600 kPa(a), ηs 0.80: T2s ≈ 308 K · 6^(0.4/1.4) ≈ 240 °C (ideal gas, k = 1.4 — textbook
        // relation T2/T1 = (p2/p1)^((k−1)/k)), far above the 150 °C predicted-temperature limit of the shipped rules.
        var request = AirRequest(AirStage(discharge: "600 kPa(a)")) with { Method = "ideal-gas" };
        var response = Evaluate(request);
        var stage = response.Stages[0];
        Assert.Equal("fail", response.Verdict);
        Assert.Equal("fail", stage.Verdict);
        Assert.True(stage.DischargeTemperature!.Isentropic.Value > 220, $"isentropic {stage.DischargeTemperature!.Isentropic.Value} °C");
        Assert.Contains(stage.Findings, f => f.RuleId == "R-API618-GEN" && f.Severity == "violation");

        var governing = stage.Governing!;
        Assert.StartsWith("R-", governing.RuleId, StringComparison.Ordinal);
        Assert.True(governing.Margin!.Value < 0, "beyond the limit");
        var envelope = stage.Envelope!;
        Assert.Equal(governing.RuleId, envelope.GoverningRule);
        Assert.NotNull(envelope.MaxDischargePressure);
        Assert.Equal("kPa", envelope.MaxDischargePressure.Unit);
        Assert.True(envelope.MaxDischargePressure.Value is > 100 and < 600, $"max discharge {envelope.MaxDischargePressure.Value} kPa");

        // Round trip through the contract: the answer's JSON gives the pressure, a new request's JSON feeds it back.
        using var answer = JsonDocument.Parse(JsonSerializer.Serialize(response, EvaluationJson.Options));
        var max = answer.RootElement.GetProperty("stages")[0].GetProperty("envelope").GetProperty("maxDischargePressure");
        var value = max.GetProperty("value").GetDouble();
        Assert.Equal("kPa", max.GetProperty("unit").GetString());
        var requestJson = JsonSerializer.Serialize(request, EvaluationJson.Options)
            .Replace("\"600 kPa(a)\"", string.Create(CultureInfo.InvariantCulture, $"{{\"value\": {value:R}, \"unit\": \"kPa(a)\"}}"), StringComparison.Ordinal);
        var again = Evaluate(JsonSerializer.Deserialize<EvaluationRequest>(requestJson, EvaluationJson.Options)!).Stages[0];
        AssertEx.Within(value, again.Discharge.PressureAbsolute.Value, 1e-9, "fed-back discharge pressure");
        var atLimit = again.Findings.Single(f => f.RuleId == governing.RuleId);
        AssertEx.Within(0.0, atLimit.Margin!.Value, 0.01, $"{governing.RuleId} margin at the envelope pressure (K)");
    }

    [Fact]
    public void Evaluate_WhenStageInsideAllLimits_Passes()
    {
        // 100 to 200 kPa(a) at 20 °C: T2s ≈ 293 K · 2^(0.4/1.4) ≈ 84 °C (ideal gas, k = 1.4), below every shipped limit
        // for a lubricated air cylinder with VDL oil, PEEK valves and FKM seals.
        var stage = AirStage(temperature: "20 °C", discharge: "200 kPa(a)") with
        {
            Equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "mineral-vdl", ValveMaterial = "peek", SealMaterial = "fkm" },
            Operation = new OperationInput { NormalDischargeTemperature = Q("100 °C"), CoolantInletTemperature = Q("30 °C"), UnloadedRunning = false },
        };
        var response = Evaluate(AirRequest(stage));
        Assert.True(response.Verdict == "pass", "verdict " + response.Verdict + ": " + string.Join(", ", response.Stages.SelectMany(x => x.Findings).Where(f => f.Severity is "warning" or "violation").Select(f => f.RuleId)));
    }

    [Fact]
    public void Evaluate_WhenViolationRuleCannotBeChecked_IsReviewNotPass()
    {
        // Without a lubricant the lubricant rules cannot be checked; ENGINE-UNCHECKED-LIMITS makes it a review.
        var stage = AirStage(temperature: "20 °C", discharge: "200 kPa(a)") with { Equipment = new EquipmentInput { CompressorType = "recip-lubricated" } };
        var response = Evaluate(AirRequest(stage));
        Assert.Equal("review", response.Verdict);
        Assert.Contains(response.Stages[0].Findings, f => f.RuleId == "ENGINE-UNCHECKED-LIMITS");
        Assert.Contains(Cautions.NotChecked, response.Cautions);
    }

    [Fact]
    public void Evaluate_WhenCurveRequested_Gives41AscendingPoints()
    {
        var stage = Evaluate(AirRequest(AirStage(discharge: "600 kPa(a)")), curve: true).Stages[0];
        var curve = stage.Curve!;
        Assert.Equal(EvaluationPipeline.CurvePoints, curve.Count);
        Assert.Equal(41, curve.Count);
        for (var i = 1; i < curve.Count; i++)
        {
            Assert.True(curve[i].DischargePressure.Value > curve[i - 1].DischargePressure.Value, $"pressure at point {i}");
            Assert.True(curve[i].Estimated.Value > curve[i - 1].Estimated.Value, $"estimated at point {i}");
            Assert.True(curve[i].Isentropic.Value > curve[i - 1].Isentropic.Value, $"isentropic at point {i}");
            Assert.True(curve[i].EstimatedUpperBound.Value >= curve[i].Estimated.Value, $"upper bound at point {i}");
        }

        Assert.True(curve[0].DischargePressure.Value > stage.Suction.PressureAbsolute.Value, "curve starts above suction");
        Assert.True(curve[^1].DischargePressure.Value >= stage.Discharge.PressureAbsolute.Value, "curve reaches past the discharge");
    }

    [Fact]
    public void Evaluate_WhenCurveNotRequested_OmitsIt()
    {
        Assert.Null(Evaluate(AirRequest()).Stages[0].Curve);
    }

    [Fact]
    public void Evaluate_WhenAnyRequest_CautionsDeferToCodesAndKeepProtection()
    {
        var cautions = Evaluate(AirRequest()).Cautions;
        Assert.Contains(Cautions.DeferToCodes, cautions);
        Assert.Contains(Cautions.KeepProtection, cautions);
        Assert.DoesNotContain(Cautions.HighPressure, cautions);
    }

    [Fact]
    public void Evaluate_WhenDischargeAboveThreeMegapascals_AddsHighPressureCaution()
    {
        var request = AirRequest(AirStage(suction: "1.2 MPa(a)", discharge: "3.1 MPa(a)")) with { Method = "ideal-gas" }; // the caution is about an ideal-gas answer
        var cautions = Evaluate(request).Cautions;
        Assert.Contains(Cautions.HighPressure, cautions);
        Assert.Contains(Cautions.DeferToCodes, cautions);
    }

    [Fact]
    public void Evaluate_WhenDischargeExactlyThreeMegapascals_HasNoHighPressureCaution()
    {
        Assert.DoesNotContain(Cautions.HighPressure, Evaluate(AirRequest(AirStage(suction: "1.2 MPa(a)", discharge: "3 MPa(a)")) with { Method = "ideal-gas" }).Cautions);
    }

    [Fact]
    public void Evaluate_WhenContextGiven_EchoesIdTimeAssetSiteAndRuleSet()
    {
        var context = Context();
        var response = new EvaluationPipeline().Evaluate(AirRequest() with { Method = "ideal-gas" }, TestRules.Snapshot, context).Response!;
        Assert.Equal(context.Id, response.Id);
        Assert.Equal(FixedTime, response.EvaluatedAt);
        Assert.Equal("K-101A", response.Asset);
        Assert.Equal(Site, response.Site);
        Assert.Equal("ideal-gas", response.Method);
        Assert.Equal(TestRules.Snapshot.Digest, response.RuleSet.Digest);
        Assert.Equal("default", Assert.Single(response.RuleSet.Layers).Name);
        Assert.NotEmpty(Assert.Single(response.Stages).Findings);
    }

    [Theory]
    [InlineData("oxygen", "oxygen-rich")]
    [InlineData("sour", "sour-gas")]
    [InlineData("chlorine", "chlorine")]
    [InlineData("co2", "co2")]
    [InlineData("acetylene", "acetylene")]
    public void Evaluate_WhenServiceDeclared_ReportsItsServiceClass(string service, string serviceClass)
    {
        var response = Evaluate(AirRequest() with { Service = service });
        Assert.Contains(serviceClass, response.Gas.ServiceClasses);
    }

    [Fact]
    public void Evaluate_WhenAnyAcceptedServiceDeclared_MapsToAServiceClassOfTheShippedRules()
    {
        foreach (var service in Validation.ContractValues.Services.Where(s => s != "general"))
        {
            var outcome = Run(AirRequest() with { Service = service });
            Assert.True(outcome.Response is { Gas.ServiceClasses.Count: > 0 }, $"service '{service}' gave no service class");
        }
    }

    [Fact]
    public void Evaluate_WhenOxygenServiceDeclared_NeverPassesOnDefaults()
    {
        var response = Evaluate(AirRequest() with { Service = "oxygen" });
        Assert.Equal("fail", response.Verdict);
        Assert.Contains(response.Stages[0].Findings, f => f.RuleId == "R-SPECIAL-O2");
    }
}
