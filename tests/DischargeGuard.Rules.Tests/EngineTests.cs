using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using UnitsNet;
using static DischargeGuard.Rules.Tests.Facts;

namespace DischargeGuard.Rules.Tests;

public class EngineTests
{
    /// <summary>
    /// Closed-form ideal gas with constant k, written here to prove the wiring (not Thermo's solver):
    /// T2s = T1·r^((k−1)/k) (textbook isentropic relation for an ideal gas, e.g. GPSA Engineering Data Book §13).
    /// Handles the isentropic quantity and the pressure ratio; anything else is reported not computable.
    /// </summary>
    private sealed class ConstantKCalculator(double k) : IEnvelopeCalculator
    {
        public List<(CheckedQuantity Quantity, Reading Limit)> Calls { get; } = [];

        public (EnvelopeBound<Pressure> MaxDischargePressure, EnvelopeBound<Temperature> MaxSuctionTemperature) Compute(StageFacts stage, CheckedQuantity quantity, Reading limit)
        {
            Calls.Add((quantity, limit));
            var e = (k - 1) / k;
            var t1 = stage.SuctionTemperature.Kelvins;
            var r = stage.PressureRatio;
            double rMax;
            double t1Max;
            switch (quantity)
            {
                case CheckedQuantity.Isentropic or CheckedQuantity.IsentropicInternal:
                    rMax = Math.Pow(limit.SiValue / t1, 1 / e);
                    t1Max = limit.SiValue / Math.Pow(r, e);
                    break;
                case CheckedQuantity.PressureRatio:
                    rMax = limit.SiValue;
                    t1Max = double.PositiveInfinity;
                    break;
                default:
                    return (new(EnvelopeBoundStatus.NotComputableForQuantity, null), new(EnvelopeBoundStatus.NotComputableForQuantity, null));
            }

            var pStatus = rMax < r ? EnvelopeBoundStatus.AlreadyExceeded : EnvelopeBoundStatus.Found;
            var tStatus = double.IsPositiveInfinity(t1Max) ? EnvelopeBoundStatus.NotReachableInRange : t1Max < t1 ? EnvelopeBoundStatus.AlreadyExceeded : EnvelopeBoundStatus.Found;
            return (new(pStatus, pStatus == EnvelopeBoundStatus.Found ? Pressure.FromPascals(stage.SuctionPressure.Pascals * rMax) : null),
                    new(tStatus, tStatus == EnvelopeBoundStatus.Found ? Temperature.FromKelvins(t1Max) : null));
        }
    }

    private static StageFacts AirStage()
    {
        // Air, k = 1.4 (diatomic ideal gas, cp/cv = 7/5), T1 = 300 K, r = 3: T2s = 300·3^(2/7) = 410.6 K.
        var t2s = 300 * Math.Pow(3, 0.4 / 1.4);
        return Quiet() with { SuctionTemperature = K(300), SuctionPressure = Pressure.FromBars(1), DischargePressure = Pressure.FromBars(3), Isentropic = K(t2s), IsentropicInternal = K(t2s), Estimated = K(t2s), EstimatedUpperBound = K(t2s) };
    }

    [Fact]
    public void Governing_WhenSeveralViolationRules_IsSmallestMargin()
    {
        // R-API618-GEN: 140 °C vs 150 °C → margin 10 K; R-LUBE-CLASS (VBL 140 °C): 135 °C → margin 5 K.
        var result = RuleEngine.EvaluateStage(Repo.Defaults, Quiet() with { Isentropic = C(140), IsentropicInternal = C(140), Estimated = C(135), LubricantId = "mineral-vbl" });
        Assert.Equal("R-LUBE-CLASS", result.Governing!.RuleId);
        Assert.Equal(CheckedQuantity.Estimated, result.Governing.Quantity);
        AssertEx.Close(5.0, result.Governing.Margin!.Value.SiValue, 1e-9, "governing margin");
        Assert.Equal(Verdict.Review, result.Verdict); // 5 K is inside R-LUBE-CLASS's 10 K warning band.
    }

    [Fact]
    public void Governing_WhenOnlyWarningRulesBreached_IsStillAViolationRule()
    {
        // R-RATIO (warning-only) is beyond its limit at r = 5 but never governs; R-API618-GEN does.
        var result = RuleEngine.EvaluateStage(Repo.Defaults, Quiet() with { DischargePressure = Pressure.FromBars(50), IsentropicInternal = C(100) });
        Assert.Equal(Severity.Warning, result.Find("R-RATIO").Severity);
        Assert.Equal("R-API618-GEN", result.Governing!.RuleId);
    }

    [Fact]
    public void Envelope_WhenGoverningIsIsentropic_CalculatorGetsQuantityAndLimit()
    {
        var calc = new ConstantKCalculator(1.4);
        var result = RuleEngine.EvaluateStage(Repo.Defaults, AirStage(), calc);
        var (q, limit) = Assert.Single(calc.Calls);
        // The process-standard limit is checked on the internal ratio's η = 1 temperature (the stage sets it equal here).
        Assert.Equal(CheckedQuantity.IsentropicInternal, q);
        AssertEx.Close(423.15, limit.SiValue, 1e-9, "limit passed to the calculator");

        // r_max = (423.15/300)^(1.4/0.4) and T1_max = 423.15/3^(0.4/1.4): the inverse of the relation above.
        var env = result.Envelope!;
        Assert.Equal(EnvelopeBoundStatus.Found, env.MaxDischargePressure.Status);
        AssertEx.Close(1e5 * Math.Pow(423.15 / 300, 3.5), env.MaxDischargePressure.Value!.Value.Pascals, 1e-6, "max discharge pressure");
        AssertEx.Close(423.15 / Math.Pow(3, 0.4 / 1.4), env.MaxSuctionTemperature.Value!.Value.Kelvins, 1e-9, "max suction temperature");
        Assert.Equal("R-API618-GEN", env.RuleId);
    }

    [Fact]
    public void Envelope_WhenAlreadyBeyondLimit_ReportsAlreadyExceeded()
    {
        var calc = new ConstantKCalculator(1.4);
        // r = 3.9 (kept below 4 so R-RATIO stays quiet): T2s = 300·3.9^(2/7) = 442.3 K, beyond 423.15 K.
        var stage = AirStage() with { DischargePressure = Pressure.FromBars(3.9), Isentropic = K(300 * Math.Pow(3.9, 0.4 / 1.4)), IsentropicInternal = K(300 * Math.Pow(3.9, 0.4 / 1.4)) };
        var result = RuleEngine.EvaluateStage(Repo.Defaults, stage, calc);
        Assert.Equal(EnvelopeBoundStatus.AlreadyExceeded, result.Envelope!.MaxDischargePressure.Status);
        Assert.Equal(Verdict.Fail, result.Verdict);
    }

    [Fact]
    public void Envelope_WhenGoverningIsMeasured_NotComputableWithoutCallingCalculator()
    {
        var calc = new ConstantKCalculator(1.4);
        var result = RuleEngine.EvaluateStage(Repo.Defaults, Quiet("screw-oil-flooded") with { MeasuredDischarge = C(100) }, calc);
        Assert.Equal("R-SCREW-FLOODED", result.Governing!.RuleId);
        Assert.Empty(calc.Calls);
        Assert.Equal(EnvelopeBoundStatus.NotComputableForQuantity, result.Envelope!.MaxDischargePressure.Status);
        Assert.Equal(EnvelopeBoundStatus.NotComputableForQuantity, result.Envelope.MaxSuctionTemperature.Status);
    }

    [Fact]
    public void Verdict_WhenTrainHasPassReviewAndFail_OverallIsWorst()
    {
        var pass = Complete(Quiet());
        var review = Complete(Quiet()) with { StageIndex = 1, Position = StagePosition.Intermediate, Isentropic = C(147), IsentropicInternal = C(147) };
        var fail = Complete(Quiet()) with { StageIndex = 2, Position = StagePosition.Last, Isentropic = C(151), IsentropicInternal = C(151) };
        var set = Repo.Defaults;
        Assert.Equal(Verdict.Pass, RuleEngine.Evaluate(set, [pass]).Verdict);
        Assert.Equal(Verdict.Review, RuleEngine.Evaluate(set, [pass, review]).Verdict);
        var all = RuleEngine.Evaluate(set, [pass, review, fail]);
        Assert.Equal(Verdict.Fail, all.Verdict);
        Assert.Equal([Verdict.Pass, Verdict.Review, Verdict.Fail], all.Stages.Select(s => s.Verdict));
        Assert.Equal(set.Digest, all.RuleSetDigest);
        Assert.Equal(set.Layers, all.Layers);
    }

    [Fact]
    public void Verdict_WhenViolationRuleNotChecked_IsReviewWithEngineWarning()
    {
        // Quiet() gives no molar mass, so the hydrogen-rich limit cannot be checked: the stage must not pass.
        var result = RuleEngine.EvaluateStage(Repo.Defaults, Quiet());
        Assert.Contains(result.NotChecked, n => n.RuleId == "R-API618-H2");
        Assert.Equal(Verdict.Review, result.Verdict);
        var warning = result.Find(RuleEngine.UncheckedLimitsRuleId);
        Assert.Equal(Severity.Warning, warning.Severity);
        Assert.Contains("R-API618-H2", warning.Note, StringComparison.Ordinal);
        Assert.Equal(Verdict.Pass, RuleEngine.EvaluateStage(Repo.Defaults, Complete(Quiet())).Verdict);
    }

    // Every input the default rules can use, far inside their limits (an air stage: 28.96 g/mol, 20.9 % O2).
    private static StageFacts Complete(StageFacts s) => s with
    {
        GasMolarMass = MolarMass.FromGramsPerMole(28.96),
        OxygenMoleFraction = Ratio.FromDecimalFractions(0.209),
        DischargeOxygenPartialPressure = Pressure.FromKilopascals(0.209 * 3000),
        // Dry air (rounded Gordon 1982 composition, NASA TP-2002-211556 'Air'): no species-based class applies.
        MoleFractions = new Dictionary<string, double> { ["N2"] = 0.781, ["O2"] = 0.209, ["Ar"] = 0.01 },
        LubricantId = "mineral-vdl",
        ValveMaterialId = "peek",
        SealMaterialId = "fkm",
        MeasuredDischarge = s.Estimated,
        NormalOperatingDischarge = s.Estimated,
        JacketCoolantInlet = Temperature.FromDegreesCelsius(40),
        UnloadedRunning = false,
        // The internal-ratio η = 1 temperature (valve-loss allowance) as the pipeline supplies it, unless the case set it.
        IsentropicInternal = s.IsentropicInternal ?? s.Isentropic,
    };

    [Fact]
    public void Finding_WhenBeyond_MarginNegativeWithUnitAndDetail()
    {
        var f = RuleEngine.EvaluateStage(Repo.Defaults, Quiet() with { Isentropic = C(162.3), IsentropicInternal = C(162.3) }).Find("R-API618-GEN");
        Assert.Equal(QuantityDimension.TemperatureDifference, f.Margin!.Value.Dimension);
        AssertEx.Close(-12.3, f.Margin.Value.TemperatureDifference!.Value.Kelvins, 1e-9, "margin");
        Assert.Equal("-12.30 K", f.Margin.Value.ToString());
        Assert.Contains("isentropicInternal 162.30 °C > limit 150.00 °C", f.Detail, StringComparison.Ordinal);
    }

    [Fact]
    public void EvaluateStage_WhenUnknownCatalogueId_ThrowsNamingParameter()
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => RuleEngine.EvaluateStage(Repo.Defaults, Quiet() with { LubricantId = "no-such-oil" }));
        Assert.Equal("stage", ex.ParamName);
    }

    [Fact]
    public void EvaluateStage_WhenRepeated_IsDeterministic()
    {
        var facts = Quiet() with { LubricantId = "mineral-vdl", ValveMaterialId = "peek", SealMaterialId = "fkm", MeasuredDischarge = C(120) };
        var a = RuleEngine.EvaluateStage(Repo.Defaults, facts);
        var b = RuleEngine.EvaluateStage(Repo.Defaults, facts);
        Assert.Equal(a.Findings, b.Findings);
    }
}
