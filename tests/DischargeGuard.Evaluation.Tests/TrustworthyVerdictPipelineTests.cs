using System.Globalization;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Thermo;
using UnitsNet;
using static DischargeGuard.Evaluation.Tests.Scenario;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>
/// The trustworthy-verdicts counter-examples, end to end through the pipeline: each one passed, was refused or
/// contradicted itself before the fix.
/// </summary>
public sealed class TrustworthyVerdictPipelineTests
{
    private static EvaluationRequest Request(IReadOnlyDictionary<string, double> composition, StageInput stage, string? method = null, double? rh = null) => new()
    {
        Asset = "K-102B",
        Site = new SiteInput { Id = Site, BarometricPressure = Q("98.6 kPa") },
        Gas = new GasInput { Composition = composition, RelativeHumidity = rh },
        Method = method,
        Stages = [stage],
    };

    private static StageInput Stage(string suction, string temperature, string discharge, string type = "recip-lubricated", string? lubricant = "mineral-vdl") => new()
    {
        Suction = new SuctionInput { Pressure = Q(suction), Temperature = Q(temperature) },
        Discharge = new DischargeInput { Pressure = Q(discharge) },
        Efficiency = new EfficiencyInput { Isentropic = 0.80 },
        Equipment = new EquipmentInput { CompressorType = type, Lubricant = lubricant, ValveMaterial = "peek", SealMaterial = "fkm" },
    };

    [Theory]
    // Counter-example: 24.5–25 % O2 (dry) at RH 0.95 and 40 °C was classed neither air (dry basis) nor oxygen-rich (wet
    // basis: 25 % × (1 − 0.07) ≈ 23.3 % < 23.5 %), and a mineral-oil lubricated recip passed.
    [InlineData(0.245)]
    [InlineData(0.25)]
    public void OxygenEnrichedHumidAir_LubricatedRecip_IsOxygenRichAndFails(double o2Dry)
    {
        var composition = new Dictionary<string, double> { ["O2"] = o2Dry, ["N2"] = 1 - o2Dry };
        var response = Evaluate(Request(composition, Stage("1.0 bara", "40 °C", "3.5 bara"), rh: 0.95));

        Assert.Equal("fail", response.Verdict);
        Assert.Contains("oxygen-rich", response.Gas.ServiceClasses);
        Assert.Contains(response.Stages[0].Findings, f => f.RuleId == "R-O2-LUBRICATED" && f.Severity == "violation" && f.Limit is null);
    }

    [Theory]
    // Counter-example: propane at 5 bara and −5 °C passed under method ideal-gas, the liquid only in a note. Propane's
    // vapour pressure at −5 °C is about 4.06 bar (NIST Chemistry WebBook saturation table — from memory — verify), so
    // at 5 bara it is a compressed liquid.
    [InlineData("ideal-gas")]
    [InlineData("auto")]
    [InlineData("real-gas")]
    public void Propane_At5BaraMinus5C_IsLiquidAndFailsWhateverTheMethod(string method)
    {
        var response = Evaluate(Request(new Dictionary<string, double> { ["C3H8"] = 1 }, Stage("5 bara", "-5 °C", "15 bara"), method));
        var stage = response.Stages[0];

        Assert.Equal("fail", response.Verdict);
        Assert.Equal("liquid", stage.Phase!.Suction);
        Assert.Null(stage.DischargeTemperature);
        Assert.Null(stage.Envelope);
        Assert.Single(stage.Findings, f => f.RuleId == "R-SUCTION-LIQUID" && f.Severity == "violation");
        Assert.DoesNotContain(stage.Findings, f => f.RuleId is "R-API618-GEN" or "R-AIT");
    }

    [Fact]
    public void RichGas_At40Bara10C_IsTwoPhaseAndFailsUnderTheRealGas()
    {
        // Counter-example: a rich natural gas (C3+ about 10 %), about 15 K inside its two-phase region, passed under
        // real-gas. The composition is the phase-stability tests' rich gas (its PR dew point at 40 bara is near 25 °C).
        var rich = new Dictionary<string, double>
        {
            ["CH4"] = 0.78, ["C2H6"] = 0.10, ["C3H8"] = 0.05, ["i-C4H10"] = 0.015, ["n-C4H10"] = 0.02, ["n-C5H12"] = 0.02, ["N2"] = 0.01, ["CO2"] = 0.005,
        };
        var response = Evaluate(Request(rich, Stage("40 bara", "10 °C", "80 bara", "recip-packaged-lubricated"), "real-gas"));
        var stage = response.Stages[0];

        Assert.Equal("fail", response.Verdict);
        Assert.Equal("two-phase", stage.Phase!.Suction);
        Assert.True(stage.Phase.SuperheatAboveHydrocarbonDewPoint!.Value < -5, "superheat " + stage.Phase.SuperheatAboveHydrocarbonDewPoint.Value);
        Assert.NotNull(stage.Phase.HydrocarbonDewPoint);
        Assert.Contains("Not evaluated", stage.NotEvaluated, StringComparison.Ordinal);
    }

    [Fact]
    public void RichGas_FewKelvinAboveItsDewPoint_IsAWarning()
    {
        // 10 K of superheat above the hydrocarbon dew point is the margin (common practice, no single source).
        var rich = new Dictionary<string, double>
        {
            ["CH4"] = 0.78, ["C2H6"] = 0.10, ["C3H8"] = 0.05, ["i-C4H10"] = 0.015, ["n-C4H10"] = 0.02, ["n-C5H12"] = 0.02, ["N2"] = 0.01, ["CO2"] = 0.005,
        };
        var dew = Evaluate(Request(rich, Stage("40 bara", "10 °C", "80 bara", "recip-packaged-lubricated"), "real-gas")).Stages[0].Phase!.HydrocarbonDewPoint!.Value;
        var t = (dew + 4).ToString("0.##", CultureInfo.InvariantCulture) + " °C";
        var stage = Evaluate(Request(rich, Stage("40 bara", t, "80 bara", "recip-packaged-lubricated"), "real-gas")).Stages[0];

        Assert.Equal("gas", stage.Phase!.Suction);
        Assert.Equal("warning", Assert.Single(stage.Findings, f => f.RuleId == "R-SUCTION-DEWPOINT").Severity);
        Assert.NotNull(stage.DischargeTemperature);
    }

    [Theory]
    // Counter-example: R-AIT governed hydrogen, natural gas, CO2, propane and nitrogen stages with "fire and explosion
    // hazard: stop"; none of them carries oxidant.
    [InlineData("H2", "20 bara", "30 °C", "60 bara")]
    [InlineData("CH4", "20 bara", "30 °C", "80 bara")]
    [InlineData("CO2", "10 bara", "40 °C", "30 bara")]
    [InlineData("C3H8", "3 bara", "30 °C", "15 bara")]
    [InlineData("N2", "5 bara", "30 °C", "25 bara")]
    public void OilIgnitionRules_OnGasesWithoutOxidant_DoNotApply(string species, string p1, string t1, string p2)
    {
        var response = Evaluate(Request(new Dictionary<string, double> { [species] = 1 }, Stage(p1, t1, p2)));
        var stage = response.Stages[0];
        Assert.DoesNotContain(stage.Findings, f => f.RuleId is "R-AIT" or "R-FLASH-SOFT");
        Assert.DoesNotContain(stage.NotChecked, n => n.RuleId is "R-AIT" or "R-FLASH-SOFT");
    }

    [Fact]
    public void OilIgnitionRules_OnAir_Apply()
    {
        var stage = Evaluate(AirRequest()).Stages[0];
        Assert.Contains(stage.Findings, f => f.RuleId == "R-AIT");
    }

    [Fact]
    public void HumidStage_SuctionTemperatureEnvelope_HoldsRelativeHumidityAndMatchesTheDryStage()
    {
        // Counter-example: a humid stage answered "already exceeded even at the lowest suction temperature" where the
        // same stage dry gives about 14 °C. Water adds little to the discharge temperature at the same suction (a few
        // tenths of a kelvin: mixed cp, common practice, no single source), so the two envelopes lie within a few K.
        var stage = AirStage("100 kPa(a)", "35 °C", "600 kPa(a)");
        var dry = Evaluate(AirRequest(stage)).Stages[0].Envelope!;
        var humidRequest = AirRequest(stage) with { Gas = new GasInput { Preset = "dry-air", RelativeHumidity = 0.8 } };
        var humid = Evaluate(humidRequest).Stages[0].Envelope!;

        Assert.NotNull(dry.MaxSuctionTemperature);
        Assert.NotNull(humid.MaxSuctionTemperature);
        Assert.InRange(humid.MaxSuctionTemperature.Value, dry.MaxSuctionTemperature.Value - 5, dry.MaxSuctionTemperature.Value + 1);
        Assert.DoesNotContain("already exceeded", humid.Note, StringComparison.Ordinal);
    }

    [Fact]
    public void SaturatedAfterIntercooler_IsInfoNotReview()
    {
        // Humid air cooled to 40 °C at 3 bar drops water: the second stage is saturated; that is an info, not a review.
        var stage2 = new StageInput
        {
            Intercooler = new IntercoolerInput { OutletTemperature = Q("40 °C") },
            Discharge = new DischargeInput { Pressure = Q("900 kPa(a)") },
            Efficiency = new EfficiencyInput { Isentropic = 0.80 },
            Equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "mineral-vdl" },
        };
        var request = AirRequest(AirStage(), stage2) with { Gas = new GasInput { Preset = "dry-air", RelativeHumidity = 0.9 } };
        var response = Evaluate(request);
        var second = response.Stages[1];

        Assert.NotNull(second.Condensate);
        Assert.Equal("saturated", second.Phase!.Suction);
        var info = Assert.Single(second.Findings, f => f.RuleId == "R-SUCTION-SATURATED");
        Assert.Equal("info", info.Severity);
        Assert.DoesNotContain(second.Findings, f => f.RuleId.StartsWith("R-SUCTION", StringComparison.Ordinal) && f.Severity is "warning" or "violation");
    }

    [Fact]
    public void Deviation_12KOnA150CStage_IsCaught()
    {
        // A leaking valve or ring shows 5–15 K above prediction (common practice, no single source); 12 K on a 150 °C
        // stage was below the old 21 K threshold.
        var stage = AirStage("100 kPa(a)", "35 °C", "420 kPa(a)");
        var predicted = Evaluate(AirRequest(stage)).Stages[0].DischargeTemperature!.Estimated.Value;
        var measured = (predicted + 12).ToString("0.###", CultureInfo.InvariantCulture) + " °C";
        var response = Evaluate(AirRequest(stage with { Measured = new MeasuredInput { DischargeTemperature = Q(measured) } }));

        Assert.Equal("warning", Assert.Single(response.Stages[0].Findings, f => f.RuleId == "R-DEVIATION").Severity);
    }

    [Fact]
    public void MeasuredFarBelowPrediction_PassingDeviationSaysItPasses_AndTheImplausibilityIsWarned()
    {
        var stage = AirStage() with { Measured = new MeasuredInput { DischargeTemperature = Q("60 °C") } };
        var findings = Evaluate(AirRequest(stage)).Stages[0].Findings;

        var deviation = Assert.Single(findings, f => f.RuleId == "R-DEVIATION");
        Assert.Equal("pass", deviation.Severity);
        Assert.DoesNotContain("above the prediction", deviation.Message, StringComparison.Ordinal);
        Assert.Equal("warning", Assert.Single(findings, f => f.RuleId == "R-MEASURED-BELOW-ISENTROPIC").Severity);
    }

    [Fact]
    public void EveryFinding_WordingMatchesItsSeverity()
    {
        var stage = AirStage("100 kPa(a)", "35 °C", "500 kPa(a)") with
        {
            Equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "mineral-vdl", ValveMaterial = "pa66-gf", SealMaterial = "hnbr" },
        };
        foreach (var f in Evaluate(AirRequest(stage)).Stages[0].Findings.Where(f => f.Limit is not null && f.Margin is not null))
        {
            switch (f.Severity)
            {
                case "pass":
                    Assert.StartsWith("Passes", f.Message, StringComparison.Ordinal);
                    break;
                case "info" or "warning" when f.Margin!.Value >= 0:
                    Assert.StartsWith("Close to the limit", f.Message, StringComparison.Ordinal);
                    break;
                default:
                    Assert.DoesNotMatch("^(Passes|Close to the limit)", f.Message);
                    break;
            }
        }
    }

    /// <summary>
    /// A saturated gas is a gas: sweeps relative humidity 0–1, intercooler approach, coolant temperature and pressure drop
    /// over two- and three-stage trains, ideal and real gas. Every case is evaluated (the README's own two-stage example
    /// and 1 in 20–30 saturated cases were refused with "water partial pressure … is above its saturation pressure").
    /// </summary>
    [Theory]
    [InlineData("ideal-gas", 2)]
    [InlineData("real-gas", 2)]
    [InlineData("auto", 3)]
    [InlineData("real-gas", 3)]
    public void Sweep_SaturatedTrains_AreAlwaysEvaluated(string method, int stages)
    {
        var random = new Random(20261204 + stages + method.Length);
        double[] humidities = [0, 0.25, 0.5, 0.8, 0.95, 0.999, 1.0];
        var refused = new List<string>();
        for (var n = 0; n < 120; n++)
        {
            var rh = n < humidities.Length ? humidities[n] : Math.Min(1, random.NextDouble() * 1.1);
            var approach = 3 + (random.NextDouble() * 17);
            var coolant = 5 + (random.NextDouble() * 40);
            var drop = random.Next(3) switch { 0 => null, 1 => Q((random.NextDouble() * 4).ToString("0.###", CultureInfo.InvariantCulture) + " %"), _ => Q((random.NextDouble() * 30).ToString("0.###", CultureInfo.InvariantCulture) + " kPa") };
            var t1 = 10 + (random.NextDouble() * 35);
            var list = new List<StageInput> { AirStage("100 kPa(a)", t1.ToString("0.###", CultureInfo.InvariantCulture) + " °C", "320 kPa(a)") };
            var p = 320.0;
            for (var k = 1; k < stages; k++)
            {
                p *= 3.1;
                list.Add(new StageInput
                {
                    Intercooler = new IntercoolerInput
                    {
                        Approach = Q(approach.ToString("0.###", CultureInfo.InvariantCulture) + " K"),
                        CoolantTemperature = Q(coolant.ToString("0.###", CultureInfo.InvariantCulture) + " °C"),
                        PressureDrop = drop,
                    },
                    Discharge = new DischargeInput { Pressure = Q(p.ToString("0.###", CultureInfo.InvariantCulture) + " kPa(a)") },
                    Efficiency = new EfficiencyInput { Isentropic = 0.80 },
                    Equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "mineral-vdl" },
                });
            }

            var request = AirRequest([.. list]) with { Method = method, Gas = new GasInput { Preset = "dry-air", RelativeHumidity = rh } };
            var outcome = Run(request);
            if (outcome.Problem is { } problem)
            {
                refused.Add(string.Create(CultureInfo.InvariantCulture, $"rh {rh:0.###}, t1 {t1:0.#}, approach {approach:0.#}, coolant {coolant:0.#}: ")
                    + string.Join("; ", problem.Errors.Select(e => e.Key + " " + string.Join(" ", e.Value))));
                continue;
            }

            foreach (var s in outcome.Response!.Stages.Skip(1))
            {
                Assert.NotNull(s.DischargeTemperature);
                Assert.DoesNotContain(s.Findings, f => f.RuleId.StartsWith("R-SUCTION", StringComparison.Ordinal) && f.Severity is "warning" or "violation");
            }
        }

        Assert.True(refused.Count == 0, $"{refused.Count} refused:\n" + string.Join("\n", refused.Take(5)));
    }

    [Fact]
    public void ProhibitedCombination_GovernsTheStageAndTheAnswer_WhateverTheNumericMargins()
    {
        // Counter-example: ammonia with a standard FKM seal failed on R-SEAL-FKM-AMMONIA-AMINE (a rule with no number),
        // while both the stage's and the answer's governing named R-API618-GEN with +35 K of margin: the words
        // contradicted the verdict. A violation with no number decides the stage, so it governs, and no envelope is
        // given because no operating point makes the combination acceptable.
        var response = Evaluate(Request(new Dictionary<string, double> { ["NH3"] = 1 }, Stage("2 bara", "20 °C", "8 bara", lubricant: "pao-dab")));
        var stage = response.Stages[0];

        Assert.Equal("fail", response.Verdict);
        Assert.Contains(stage.Findings, f => f.RuleId == "R-API618-GEN" && f.Margin!.Value > 0);
        Assert.Equal("R-SEAL-FKM-AMMONIA-AMINE", stage.Governing!.RuleId);
        Assert.Null(stage.Governing.Limit);
        Assert.Null(stage.Governing.Margin);
        Assert.Null(stage.Envelope);
        Assert.Equal("R-SEAL-FKM-AMMONIA-AMINE", response.Governing!.RuleId);
        Assert.Equal(0, response.Governing.Stage);
        Assert.Null(response.Governing.Margin);
    }

    [Fact]
    public void LiquidAtALaterStage_GovernsTheAnswer_NotTheFirstStagesMargin()
    {
        // Propane cooled to 30 °C at 12 bara after stage 1: its vapour pressure at 30 °C is about 10.8 bar (NIST Chemistry
        // WebBook saturation table, from memory, verify), so the second stage's suction is liquid. Before the fix the
        // answer failed while its governing named stage 1's passing limit with a positive margin.
        var request = Request(new Dictionary<string, double> { ["C3H8"] = 1 }, Stage("3 bara", "20 °C", "12 bara")) with
        {
            Stages =
            [
                Stage("3 bara", "20 °C", "12 bara"),
                new StageInput
                {
                    Intercooler = new IntercoolerInput { OutletTemperature = Q("30 °C") },
                    Discharge = new DischargeInput { Pressure = Q("20 bara") },
                    Efficiency = new EfficiencyInput { Isentropic = 0.80 },
                    Equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "mineral-vdl", ValveMaterial = "peek", SealMaterial = "fkm" },
                },
            ],
        };
        var response = Evaluate(request);

        Assert.Equal("fail", response.Verdict);
        Assert.NotEqual("fail", response.Stages[0].Verdict);
        Assert.Equal("R-SUCTION-LIQUID", response.Stages[1].Governing!.RuleId);
        Assert.Equal(1, response.Governing!.Stage);
        Assert.Equal("R-SUCTION-LIQUID", response.Governing.RuleId);
        Assert.Null(response.Governing.Margin);
    }

    [Fact]
    public void OxygenAndWaterAlone_AfterACoolerDropsWater_IsEvaluatedNotAnInternalError()
    {
        // Counter-example found by the batch fuzz test: O2 and H2O alone, cooled between stages so water condenses. The
        // dry-basis O2 fraction O2/(1 − H2O) came out a hair above 1 and the service answered 500. The dry basis of a gas
        // that is O2 and water is exactly 1 (consistency, no property data).
        var request = Request(new Dictionary<string, double> { ["H2O"] = 0.363636, ["O2"] = 0.636364 }, Stage("942.5531 psig", "333.4965 °C", "2492.495 psig"), "ideal-gas") with
        {
            Site = new SiteInput { Id = Site, BarometricPressure = Q("101.325 kPa") },
            Stages =
            [
                new StageInput
                {
                    Suction = new SuctionInput { Pressure = Q("942.5531 psig"), Temperature = Q("333.4965 °C") },
                    Discharge = new DischargeInput { Pressure = Q("2492.495 psig") },
                    Efficiency = new EfficiencyInput { Polytropic = 1 },
                },
                new StageInput
                {
                    Intercooler = new IntercoolerInput { OutletTemperature = Q("137.6002 °C") },
                    Discharge = new DischargeInput { Pressure = Q("17535.6409 psig") },
                    Efficiency = new EfficiencyInput { Isentropic = 1 },
                },
            ],
        };
        var outcome = Run(request);

        if (outcome.Response is { } response)
        {
            Assert.Contains("oxygen-rich", response.Gas.ServiceClasses);
        }
        else
        {
            Assert.Equal(ProblemKind.Unprocessable, outcome.Problem!.Kind);
        }
    }
}
