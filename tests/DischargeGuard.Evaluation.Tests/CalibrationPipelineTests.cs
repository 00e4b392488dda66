using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Validation;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Testing;
using static DischargeGuard.Evaluation.Tests.Scenario;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>
/// Calibration from a measured duty. Check values are hand calculations (marked) on gases whose cp is closed form
/// (argon: cp = 5/2·R exactly for a monatomic ideal gas; NIST-JANAF Ar table lists cp = 20.786 J/(mol·K) = 5/2·R at
/// every temperature) or on the fitted exponent itself, which needs no property data.
/// </summary>
public sealed class CalibrationPipelineTests
{
    private static EvaluationRequest Request(string gasKey, StageInput stage) => new()
    {
        Asset = "K-101A",
        Site = new SiteInput { Id = Site, BarometricPressure = Q("98.6 kPa") },
        Gas = gasKey == "Ar" ? new GasInput { Composition = new Dictionary<string, double> { ["Ar"] = 1 } } : new GasInput { Preset = "dry-air" },
        Stages = [stage],
    };

    private static StageInput Stage(string discharge, CalibrationInput calibration, string? coolant = null) => new()
    {
        Suction = new SuctionInput { Pressure = Q("100 kPa(a)"), Temperature = Q("300 K") },
        Discharge = new DischargeInput { Pressure = Q(discharge) },
        Equipment = new EquipmentInput { CompressorType = "recip-nonlube" },
        Operation = coolant is null ? null : new OperationInput { CoolantInletTemperature = Q(coolant) },
        Calibration = calibration,
    };

    private static CalibrationInput Measured(string measured, string discharge = "300 kPa(a)") => new()
    {
        Suction = new SuctionInput { Pressure = Q("100 kPa(a)"), Temperature = Q("300 K") },
        Discharge = new DischargeInput { Pressure = Q(discharge) },
        MeasuredDischargeTemperature = Q(measured),
    };

    [Fact]
    public void Calibration_WhenMeasuredAboveIsentropic_ImpliesEfficienciesAndCarriesThePolytropicOne()
    {
        // Hand calculation (argon, constant cp, k = 5/3): r = 3, T2s = 300·3^0.4 = 465.554 K; measured 500 K gives
        // ηs = 165.554/200 = 0.82777; (n−1)/n = ln(500/300)/ln 3 = 0.464974, ηp = 0.4/0.464974 = 0.86026;
        // at r = 4 the same ηp gives T2 = 300·4^0.464974 = 571.56 K. The hand calculation is the ideal gas's, so the ideal
        // gas decides (under auto, Peng-Robinson would, its discharge being above GERG-2008's normal 450 K).
        var response = Evaluate(Request("Ar", Stage("400 kPa(a)", Measured("500 K"))) with { Method = "ideal-gas" });
        var stage = response.Stages[0];

        Assert.Equal("calibration", stage.Efficiency.Source);
        var cal = stage.Efficiency.Calibration!;
        Assert.Equal("efficiency", cal.Kind);
        Assert.True(cal.Used);
        AssertEx.Within(0.82777, cal.ImpliedIsentropic!.Value, 2e-4);
        AssertEx.Within(0.86026, cal.ImpliedPolytropic!.Value, 2e-4);
        AssertEx.Within(465.554 - 273.15, cal.IsentropicAtMeasuredDuty.Value, 0.05);
        AssertEx.Within(571.56 - 273.15, stage.DischargeTemperature!.Estimated.Value, 0.1);
        Assert.DoesNotContain(stage.Findings, f => f.RuleId == "ENGINE-DEFAULT-EFFICIENCY");
    }

    [Fact]
    public void Calibration_WhenMeasuredAtItsOwnDuty_ReproducesTheMeasurement()
    {
        // Consistency: the proposed duty equal to the measured one must give back the measured 500 K (argon, hand calculation above).
        var stage = Evaluate(Request("Ar", Stage("300 kPa(a)", Measured("500 K")))).Stages[0];

        AssertEx.Within(500 - 273.15, stage.DischargeTemperature!.Estimated.Value, 0.05);
    }

    [Theory]
    // Counter-example: CO2 30 → 75 bar(a) from 40 °C, measured 135 °C at that duty. The efficiency was fitted on the
    // ideal gas and applied with the real-gas model that decides, so the measured duty came back 133.96 °C under
    // GERG-2008 and 136.69 °C under Peng-Robinson. Consistency (no property data needed): at its own duty a calibration
    // gives back its measurement, whichever model decides.
    [InlineData("auto", "gerg-2008")]
    [InlineData("gerg-2008", "gerg-2008")]
    [InlineData("peng-robinson", "peng-robinson")]
    [InlineData("ideal-gas", "ideal-gas")]
    public void Calibration_AtItsOwnDuty_ReproducesTheMeasurementWhicheverModelDecides(string method, string decidedBy)
    {
        var duty = new CalibrationInput
        {
            Suction = new SuctionInput { Pressure = Q("30 bara"), Temperature = Q("40 °C") },
            Discharge = new DischargeInput { Pressure = Q("75 bara") },
            MeasuredDischargeTemperature = Q("135 °C"),
        };
        var request = new EvaluationRequest
        {
            Asset = "K-101A",
            Site = new SiteInput { Id = Site, BarometricPressure = Q("98.6 kPa") },
            Gas = new GasInput { Composition = new Dictionary<string, double> { ["CO2"] = 1 } },
            Method = method,
            Stages =
            [
                new StageInput
                {
                    Suction = new SuctionInput { Pressure = Q("30 bara"), Temperature = Q("40 °C") },
                    Discharge = new DischargeInput { Pressure = Q("75 bara") },
                    Equipment = new EquipmentInput { CompressorType = "recip-nonlube" },
                    Calibration = duty,
                },
            ],
        };
        var stage = Evaluate(request).Stages[0];

        Assert.Equal(decidedBy, stage.Method);
        AssertEx.Within(135, stage.DischargeTemperature!.Estimated.Value, 0.01, "the measured duty comes back");
        // The efficiency shown is the one the deciding model used, and the calibration block shows the same figure.
        AssertEx.Within(stage.Efficiency.Polytropic, stage.Efficiency.Calibration!.ImpliedPolytropic!.Value, 1e-6, "implied = used");
    }

    [Fact]
    public void Calibration_WhenBelowIsentropicOnACooledStage_AppliesTheApparentExponent()
    {
        // Hand calculation: air 300 K, r = 3, measured 380 K (below the isentropic ≈ 410 K, so heat was removed):
        // (n−1)/n = ln(380/300)/ln 3 = 0.215170, n = 1.27416; at r = 4: T2 = 300·4^0.215170 = 404.27 K.
        var response = Evaluate(Request("air", Stage("400 kPa(a)", Measured("380 K"), coolant: "40 °C")));
        var stage = response.Stages[0];

        Assert.Equal("calibration", stage.Efficiency.Source);
        Assert.Equal("apparent-exponent", stage.Efficiency.Given);
        var cal = stage.Efficiency.Calibration!;
        Assert.Equal("apparent-exponent", cal.Kind);
        Assert.Null(cal.ImpliedIsentropic);
        AssertEx.Within(0.215170, cal.ExponentRatio, 1e-5);
        AssertEx.Within(1.27416, cal.ApparentExponent, 1e-4);
        AssertEx.Within(404.27 - 273.15, stage.DischargeTemperature!.Estimated.Value, 0.05);
        // Never a refusal, and the isentropic prediction is unchanged by the calibration.
        Assert.True(stage.DischargeTemperature.Isentropic.Value > stage.DischargeTemperature.Estimated.Value);
    }

    [Fact]
    public void Calibration_WhenBelowIsentropicOnAnUncooledStage_Is422OnTheMeasurement()
    {
        // Second law: an adiabatic compression ends at or above the isentropic temperature (≈ 410 K for air 300 K, r = 3).
        var problem = Refuse(Request("air", Stage("400 kPa(a)", Measured("380 K"))));

        Assert.Equal(ProblemKind.Unprocessable, problem.Kind);
        var error = Assert.Single(problem.Errors);
        Assert.Equal("stages[0].calibration.measuredDischargeTemperature", error.Key);
        Assert.Contains("isentropic", error.Value[0], StringComparison.Ordinal);
    }

    [Fact]
    public void Calibration_WhenTheStageGivesItsOwnEfficiency_IsReportedButNotUsed()
    {
        var stage = Stage("400 kPa(a)", Measured("500 K")) with { Efficiency = new EfficiencyInput { Isentropic = 0.80 } };
        var response = Evaluate(Request("Ar", stage));

        Assert.Equal("request", response.Stages[0].Efficiency.Source);
        Assert.False(response.Stages[0].Efficiency.Calibration!.Used);
    }

    [Fact]
    public void Calibration_WithoutAMeasurement_IsRefusedAtItsPath()
    {
        var request = Request("Ar", Stage("400 kPa(a)", Measured("500 K") with { MeasuredDischargeTemperature = null }));

        var failures = new EvaluationRequestValidator().Validate(request).Errors;
        Assert.Contains(failures, f => string.Equals(f.PropertyName, "Stages[0].Calibration.MeasuredDischargeTemperature", StringComparison.OrdinalIgnoreCase));
        var problem = Refuse(request);
        Assert.Equal(ProblemKind.InvalidRequest, problem.Kind);
        Assert.Equal("stages[0].calibration.measuredDischargeTemperature", Assert.Single(problem.Errors).Key);
    }

    [Fact]
    public void NoEfficiencyAndNoCalibration_UsesTheRuleDefault_MarkedAsSuch()
    {
        var stage = Stage("400 kPa(a)", Measured("500 K")) with { Calibration = null };
        var response = Evaluate(Request("Ar", stage));

        Assert.Equal("rule-default", response.Stages[0].Efficiency.Source);
        Assert.Null(response.Stages[0].Efficiency.Calibration);
    }
}
