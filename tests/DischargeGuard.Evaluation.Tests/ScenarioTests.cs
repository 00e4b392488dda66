using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using FluentValidation.Results;
using DischargeGuard.Evaluation.Validation;
using static DischargeGuard.Evaluation.Tests.Scenario;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>
/// Stages fed directly, scenarios, the train's envelope and the model's own error in the margin, against hand
/// calculations. Argon is used where a closed form is wanted: a monatomic ideal gas has cp = 5/2 R at every temperature
/// (NIST-JANAF Ar: cp = 20.786 J/(mol·K) from 100 K to 6000 K), so k = 5/3 and T2s/T1 = r^0.4 exactly.
/// </summary>
public sealed class ScenarioTests
{
    private const double Rounding = 0.0005 + 1e-9;
    private const double T1Kelvin = 300;
    private const double Celsius = 273.15;

    // The compressor type's valve-loss allowance per valve for recip-lubricated in rules/default.yaml (5 % — common
    // practice, no single source): R-API618-GEN checks T2s on the internal ratio r·1.05/0.95.
    private const double ValveLoss = 0.05;

    // R-API618-GEN's limit on the internal isentropic temperature, 150 °C (rules/default.yaml; API 618 — from memory — verify).
    private const double Api618LimitKelvin = 150 + Celsius;

    private static StageInput Argon(string? suction, string discharge) => new()
    {
        Suction = suction is null ? null : new SuctionInput { Pressure = Q(suction), Temperature = Q("300 K") },
        Intercooler = suction is null ? new IntercoolerInput { OutletTemperature = Q("300 K") } : null,
        Discharge = new DischargeInput { Pressure = Q(discharge) },
        Efficiency = new EfficiencyInput { Isentropic = 0.80 },
        Equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "mineral-vdl" },
    };

    private static EvaluationRequest ArgonTrain(params StageInput[] stages) => AirRequest(stages) with
    {
        Gas = new GasInput { Composition = new Dictionary<string, double> { ["Ar"] = 1.0 } },
        Method = "ideal-gas",
    };

    // T2/T1 of an argon stage at ratio r and ηs: 1 + (r^0.4 − 1)/ηs (isentropic relation for k = 5/3, then the efficiency's definition).
    private static double ArgonStageTemperatureRatio(double r, double etaS) => 1 + ((Math.Pow(r, 0.4) - 1) / etaS);

    private static ValidationFailure[] Failures(EvaluationRequest request) => new EvaluationRequestValidator().Validate(request).Errors.ToArray();

    private static void AssertFailure(EvaluationRequest request, string path, string fragment)
    {
        var failures = Failures(request).Select(f => (Path: ContractPaths.FromValidator(f.PropertyName), f.ErrorMessage)).ToArray();
        Assert.True(failures.Any(f => f.Path == path && f.ErrorMessage.Contains(fragment, StringComparison.Ordinal)),
            $"No failure at '{path}' containing '{fragment}': " + string.Join("; ", failures.Select(f => f.Path + ": " + f.ErrorMessage)));
    }

    [Fact]
    public void FedDirectly_WhenLaterStageBypassesItsCooler_TakesPreviousDischargeLessTheDrop()
    {
        var second = Argon(null, "900 kPa(a)") with { FedDirectly = true, Intercooler = new IntercoolerInput { PressureDrop = Q("2 %") } };
        var response = Evaluate(ArgonTrain(Argon("100 kPa(a)", "300 kPa(a)"), second));

        // Hand calculation: an adiabatic cooler out of service removes no heat (first law, steady flow), so stage 2 sees
        // stage 1's discharge temperature, 300 K · (1 + (3^0.4 − 1)/0.8) = 506.942 K = 233.792 °C, and 300 kPa less 2 %.
        var expected = (T1Kelvin * ArgonStageTemperatureRatio(3, 0.8)) - Celsius;
        AssertEx.Within(expected, response.Stages[0].DischargeTemperature!.Estimated.Value, 0.01, "stage 1 estimated");
        AssertEx.Within(expected, response.Stages[1].Suction.Temperature.Value, 0.01, "stage 2 suction");
        AssertEx.Within(294.0, response.Stages[1].Suction.PressureAbsolute.Value, Rounding, "stage 2 suction pressure");
        Assert.Contains(Cautions.FedDirectly, response.Cautions);
    }

    [Fact]
    public void Validate_WhenFirstStageIsFedDirectly_RefusesAtItsPath()
    {
        AssertFailure(ArgonTrain(Argon("100 kPa(a)", "300 kPa(a)") with { FedDirectly = true }), "stages[0].fedDirectly", "first stage");
    }

    [Fact]
    public void HotDay_WhenSuctionRisesTenKelvin_ScenarioGovernsWithItsOwnMargin()
    {
        var request = ArgonTrain(Argon("100 kPa(a)", "200 kPa(a)")) with
        {
            Scenarios = [new ScenarioInput { Name = "hot-day", HotDay = new HotDayInput { SuctionTemperatureRise = Q("10 K") } }],
        };
        var response = Evaluate(request);
        var hot = Assert.Single(response.Scenarios!);
        AssertEx.Within(36.85, hot.Stages[0].Suction.Temperature.Value, Rounding, "300 K + 10 K = 310 K = 36.85 °C");

        // Hand calculation of the governing margin (R-API618-GEN, T2s on the internal ratio): T1·(r·1.05/0.95)^0.4 − 423.15 K.
        var internalRatio = 2 * (1 + ValveLoss) / (1 - ValveLoss);
        var baseMargin = Api618LimitKelvin - (T1Kelvin * Math.Pow(internalRatio, 0.4));
        var hotMargin = Api618LimitKelvin - (310 * Math.Pow(internalRatio, 0.4));
        AssertEx.Within(baseMargin, response.Stages[0].Governing!.Margin!.Value, 0.01, "base margin");
        AssertEx.Within(hotMargin, hot.Governing!.Margin!.Value, 0.01, "hot-day margin");
        Assert.Equal("hot-day", response.Governing!.Scenario);
        AssertEx.Within(hotMargin, response.Governing.Margin!.Value, 0.01, "top-level governing margin is the scenario's");
        Assert.NotNull(response.BaseVerdict);
    }

    [Fact]
    public void FouledCoolerAndCoolingWaterFailure_WhenNamedOnStageOne_MoveItsSuctionAsStated()
    {
        var second = Argon(null, "600 kPa(a)") with { Intercooler = new IntercoolerInput { Approach = Q("10 K"), CoolantTemperature = Q("25 °C") } };
        var request = ArgonTrain(Argon("100 kPa(a)", "250 kPa(a)"), second) with
        {
            Scenarios =
            [
                new ScenarioInput { Name = "fouled", FouledCooler = new FouledCoolerInput { Stages = [1], ApproachRise = Q("8 K") } },
                new ScenarioInput { Name = "cw-failure", CoolingWaterFailure = new CoolingWaterFailureInput() },
            ],
        };
        var response = Evaluate(request);

        // Fouled: gas outlet = coolant + approach = 25 °C + 10 K + 8 K = 43 °C.
        AssertEx.Within(35.0, response.Stages[1].Suction.Temperature.Value, Rounding, "base: 25 °C + 10 K");
        AssertEx.Within(43.0, response.Scenarios![0].Stages[1].Suction.Temperature.Value, Rounding, "fouled");

        // Cooling water lost: stage 2 takes stage 1's discharge temperature (first law, no heat removed).
        var t2 = (T1Kelvin * ArgonStageTemperatureRatio(2.5, 0.8)) - Celsius;
        AssertEx.Within(t2, response.Scenarios[1].Stages[1].Suction.Temperature.Value, 0.01, "cooling-water failure");

        // The words count stages from 1, as people and the page do: the request's stages[1] is "stage 2".
        Assert.Contains(response.Scenarios[0].Changes, c => c.Contains("before stage 2", StringComparison.Ordinal));
    }

    [Fact]
    public void Recycle_WhenCooled_MixesToTheEnthalpyAverage()
    {
        var request = ArgonTrain(Argon("100 kPa(a)", "200 kPa(a)")) with
        {
            Scenarios = [new ScenarioInput { Name = "recycle", Recycle = new RecycleInput { Fraction = 0.25, CooledTo = Q("340 K") } }],
        };
        var response = Evaluate(request);

        // Hand calculation: constant cp (argon), so 0.75 · 300 K + 0.25 · 340 K = 310 K = 36.85 °C.
        AssertEx.Within(36.85, response.Scenarios![0].Stages[0].Suction.Temperature.Value, 0.001, "mixed suction");
        Assert.Contains(response.Scenarios[0].Changes, c => c.Contains("300 K → 310 K", StringComparison.Ordinal));
    }

    [Fact]
    public void Recycle_WhenUncooledAroundOneStage_ReachesTheClosedFormSteadyState()
    {
        var request = ArgonTrain(Argon("100 kPa(a)", "300 kPa(a)")) with
        {
            Scenarios = [new ScenarioInput { Name = "recycle", Recycle = new RecycleInput { Fraction = 0.2 } }],
        };
        var response = Evaluate(request);

        // Hand calculation: with constant cp, Tm = (1 − x)·Tf + x·a·Tm, a = T2/T1, so Tm = (1 − x)·Tf / (1 − x·a):
        // a = 1 + (3^0.4 − 1)/0.8 = 1.689808, Tm = 240 K / (1 − 0.337962) = 362.517 K.
        var a = ArgonStageTemperatureRatio(3, 0.8);
        var expected = (0.8 * T1Kelvin / (1 - (0.2 * a))) - Celsius;
        AssertEx.Within(expected, response.Scenarios![0].Stages[0].Suction.Temperature.Value, 0.001, "steady mixed suction");
    }

    [Fact]
    public void Recycle_WhenUncooledAroundACooledTrain_MixesWithTheFinalDischarge()
    {
        var request = ArgonTrain(Argon("100 kPa(a)", "300 kPa(a)"), Argon(null, "900 kPa(a)")) with
        {
            Scenarios = [new ScenarioInput { Name = "recycle", Recycle = new RecycleInput { Fraction = 0.2 } }],
        };
        var response = Evaluate(request);

        // Hand calculation: the second stage's suction is cooled to 300 K whatever the first does, so the recycle returns
        // 300 K · 1.689808 = 506.942 K and Tm = 0.8 · 300 K + 0.2 · 506.942 K = 341.388 K.
        var expected = (0.8 * T1Kelvin) + (0.2 * T1Kelvin * ArgonStageTemperatureRatio(3, 0.8)) - Celsius;
        AssertEx.Within(expected, response.Scenarios![0].Stages[0].Suction.Temperature.Value, 0.001, "mixed suction");
    }

    [Fact]
    public void Recycle_WhenUncooledFractionHasNoSteadyState_IsRefusedAtTheFraction()
    {
        // x·a = 0.7 · 1.69 > 1: with constant cp the mixed suction has no finite steady state (it runs away).
        var request = ArgonTrain(Argon("100 kPa(a)", "300 kPa(a)")) with
        {
            Scenarios = [new ScenarioInput { Name = "recycle", Recycle = new RecycleInput { Fraction = 0.7 } }],
        };
        var problem = Refuse(request);
        Assert.Equal(ProblemKind.Unprocessable, problem.Kind);
        Assert.Contains("scenarios[0].recycle.fraction", problem.Errors.Keys);
    }

    [Fact]
    public void Override_WhenItChangesOneStage_MergesStageByStage()
    {
        var request = ArgonTrain(Argon("100 kPa(a)", "200 kPa(a)"), Argon(null, "400 kPa(a)")) with
        {
            Scenarios = [new ScenarioInput { Name = "higher", Override = new EvaluationRequest { Stages = [new StageInput(), new StageInput { Discharge = new DischargeInput { Pressure = Q("500 kPa(a)") } }] } }],
        };
        var response = Evaluate(request);
        var s = response.Scenarios![0];
        AssertEx.Within(200.0, s.Stages[0].Discharge.PressureAbsolute.Value, Rounding, "stage 1 unchanged");
        AssertEx.Within(500.0, s.Stages[1].Discharge.PressureAbsolute.Value, Rounding, "stage 2 overridden");
        AssertEx.Within(300.0 - Celsius, s.Stages[1].Suction.Temperature.Value, Rounding, "stage 2 keeps its cooler");
    }

    [Theory]
    [InlineData("fouled", "scenarios[0].fouledCooler.stages[0]", "does not exist")]
    [InlineData("fraction", "scenarios[0].recycle.fraction", "[0, 1)")]
    [InlineData("first", "scenarios[0].override.stages[0].fedDirectly", "first stage")]
    [InlineData("name", "scenarios[1].name", "earlier scenario")]
    [InlineData("cooler-day", "scenarios[0].hotDay.suctionTemperatureRise", "0 K or more")]
    [InlineData("cleaner", "scenarios[0].fouledCooler.approachRise", "0 K or more")]
    public void Validate_WhenAScenarioIsBad_RefusesKeyedByItsPath(string which, string path, string fragment)
    {
        ScenarioInput[] scenarios = which switch
        {
            "fouled" => [new ScenarioInput { Name = "fouled", FouledCooler = new FouledCoolerInput { Stages = [5], ApproachRise = Q("8 K") } }],
            "fraction" => [new ScenarioInput { Name = "recycle", Recycle = new RecycleInput { Fraction = 1.2 } }],
            "first" => [new ScenarioInput { Name = "direct", Override = new EvaluationRequest { Stages = [new StageInput { FedDirectly = true }] } }],
            "cooler-day" => [new ScenarioInput { Name = "hot", HotDay = new HotDayInput { SuctionTemperatureRise = Q("-5 K") } }],
            "cleaner" => [new ScenarioInput { Name = "fouled", FouledCooler = new FouledCoolerInput { Stages = [1], ApproachRise = Q("-3 K") } }],
            _ => [new ScenarioInput { Name = "a", Recycle = new RecycleInput { Fraction = 0.1 } }, new ScenarioInput { Name = "a", Recycle = new RecycleInput { Fraction = 0.2 } }],
        };
        AssertFailure(ArgonTrain(Argon("100 kPa(a)", "200 kPa(a)"), Argon(null, "400 kPa(a)")) with { Scenarios = scenarios }, path, fragment);
    }

    [Fact]
    public void TrainEnvelope_WhenEqualSplitWithPerfectIntercooling_EqualsStageRatioSquared()
    {
        var response = Evaluate(ArgonTrain(Argon("100 kPa(a)", "300 kPa(a)"), Argon(null, "900 kPa(a)")) with { TrainEnvelopeSplit = "equal" });

        // Hand calculation: each stage reaches R-API618-GEN at T1·(r·1.05/0.95)^0.4 = 423.15 K, so
        // r_max = (423.15/300)^2.5 · 0.95/1.05 = 2.1378; with both stages cooled to 300 K and no drop the train reaches
        // its limit at 100 kPa · r_max² and, holding 900 kPa, at a suction of 900 kPa / r_max².
        var rMax = Math.Pow(Api618LimitKelvin / T1Kelvin, 2.5) * (1 - ValveLoss) / (1 + ValveLoss);
        var e = response.TrainEnvelope!;
        Assert.Equal("equal", e.Split);
        AssertEx.Within(100 * rMax * rMax, e.MaxFinalDischargePressure.Pressure!.Value, 0.1, "max final discharge");
        AssertEx.Within(900 / (rMax * rMax), e.MinSuctionPressure.Pressure!.Value, 0.05, "min suction");
        Assert.Equal("R-API618-GEN", e.MaxFinalDischargePressure.RuleId);
        Assert.Equal("other-stages", response.Stages[0].Envelope!.HeldFixed);
    }

    [Fact]
    public void TrainEnvelope_WhenStatedSplitHeld_TheLargerRatioStageGoverns()
    {
        var response = Evaluate(ArgonTrain(Argon("100 kPa(a)", "200 kPa(a)"), Argon(null, "900 kPa(a)")) with { TrainEnvelopeSplit = "stated" });

        // Hand calculation: shares w = ln 2/ln 9 and ln 4.5/ln 9 of the overall ratio R are held; the second stage
        // (ratio 4.5) reaches r_max first, at R = r_max^(ln 9/ln 4.5), so the final discharge is 100 kPa · R.
        var rMax = Math.Pow(Api618LimitKelvin / T1Kelvin, 2.5) * (1 - ValveLoss) / (1 + ValveLoss);
        var overall = Math.Pow(rMax, Math.Log(9) / Math.Log(4.5));
        var e = response.TrainEnvelope!;
        Assert.Equal("stated", e.Split);
        AssertEx.Within(100 * overall, e.MaxFinalDischargePressure.Pressure!.Value, 0.1, "max final discharge");
        Assert.Equal(1, e.MaxFinalDischargePressure.Stage);
    }

    [Fact]
    public void ModelUncertainty_WhenEfficiencySpreadIsComparableToTheMargin_WidensTheWarningBand()
    {
        var stage = AirStage(discharge: "370 kPa(a)") with { Efficiency = new EfficiencyInput { Isentropic = 0.80, Uncertainty = 0.05 } };
        var response = Evaluate(AirRequest(stage) with { Method = "ideal-gas" });
        var s = response.Stages[0];
        var f = s.Findings.Single(x => x.RuleId == "R-LUBE-CLASS");

        // R-LUBE-CLASS (mineral VDL, rules/default.yaml) has a 10 K band; the margin lies above it, so only the widening
        // makes it a warning. Expected widening: T2 at ηs − 0.05 less T2, plus the ideal gas's 7.21 K in 236.56 K of rise
        // at 10 MPa (docs/real-gas.md, CO2 row) scaled by 0.37 MPa / 10 MPa, times this stage's rise.
        var dt = s.DischargeTemperature!;
        var expected = (dt.EstimatedUpperBound.Value - dt.Estimated.Value) + (7.21 / 236.56 * 0.037 * (dt.Estimated.Value - 35));
        Assert.True(f.Margin!.Value > 10, "margin " + f.Margin.Value);
        Assert.True(f.Margin.Value < 10 + expected, "margin inside the widened band");
        Assert.Equal("warning", f.Severity);
        AssertEx.Within(expected, f.Uncertainty!.WidenedBy.Value, 0.01, "widening");
        Assert.Contains(Cautions.ModelUncertainty, response.Cautions);
    }

    [Fact]
    public void TrainEnvelope_WhenNotAskedFor_IsAbsent()
    {
        Assert.Null(Evaluate(ArgonTrain(Argon("100 kPa(a)", "200 kPa(a)"))).TrainEnvelope);
    }

    [Fact]
    public void ModelUncertainty_WhenMarginIsWide_LeavesThePassAlone()
    {
        var response = Evaluate(AirRequest(AirStage(discharge: "200 kPa(a)")) with { Method = "ideal-gas" });
        Assert.All(response.Stages[0].Findings, f => Assert.Null(f.Uncertainty));
        Assert.DoesNotContain(Cautions.ModelUncertainty, response.Cautions);
    }
}
