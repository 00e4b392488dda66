using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Model;
using UnitsNet;
using static DischargeGuard.Rules.Tests.Facts;

namespace DischargeGuard.Rules.Tests;

/// <summary>
/// The engine-level counter-examples of the trustworthy-verdicts review: dangerous proposals that passed, limits that
/// applied where they do not belong, and words that contradicted the verdict. Each failed before the fix.
/// </summary>
public class TrustworthyVerdictTests
{
    private static StageResult Evaluate(StageFacts facts, EffectiveRuleSet? set = null) => RuleEngine.EvaluateStage(set ?? Repo.Defaults, facts);

    private static EffectiveRuleSet WithSite(string yaml) => LayerMerger.Merge([DefaultLayer, Layer("sites/test-site.yaml", yaml)]);

    // A site layer that signs off the oxygen temperature limit, as an oxygen plant would.
    private const string SignedOxygenSite = """
        schemaVersion: 1
        layer:
          kind: site
          id: test-site
        overrides:
          - rule: R-SPECIAL-O2
            limit: 150 °C
            approvedBy: "J. Okafor (invented)"
            approvedOn: 2026-11-02
            reason: "Oxygen compressor practice, site MOC 2026-117 (invented)"
        """;

    private static StageFacts Oxygen(string type, string? lubricant) => Quiet(type) with
    {
        // 99.5 % O2 (industrial oxygen), dry basis.
        OxygenMoleFraction = Ratio.FromPercent(99.5),
        DischargeOxygenPartialPressure = Pressure.FromKilopascals(0.995 * 3000),
        GasMolarMass = MolarMass.FromGramsPerMole(31.99),
        LubricantId = lubricant,
        ValveMaterialId = "metal-plate",
        SealMaterialId = "fkm",
        Estimated = C(110),
        Isentropic = C(100),
    };

    [Theory]
    // Counter-examples: a mineral-oil lubricated recip and an oil-flooded screw on 99.5 % O2 passed once a site signed
    // the R-SPECIAL-O2 temperature. Oxygen compressors are oil-free: CGA G-4.11 / EIGA Doc 10 ((a)).
    [InlineData("recip-lubricated", "mineral-vdl", "R-O2-LUBRICATED")]
    [InlineData("screw-oil-flooded", "pao-dab", "R-O2-LUBRICATED")]
    [InlineData("recip-lubricated", "mineral-vdl", "R-O2-LUBRICANT")]
    public void OxygenRich_WhenLubricatedEvenWithSignedLimit_FailsWithNoNumber(string type, string lubricant, string ruleId)
    {
        var result = Evaluate(Oxygen(type, lubricant), WithSite(SignedOxygenSite));

        Assert.Equal(Verdict.Fail, result.Verdict);
        var f = result.Find(ruleId);
        Assert.Equal(Severity.Violation, f.Severity);
        Assert.Equal(CheckedQuantity.Combination, f.Quantity);
        Assert.Null(f.Value);
        Assert.Null(f.Limit);
        Assert.Null(f.Margin);
        Assert.Contains("prohibited combination", f.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void OxygenRich_WhenOilFreeWithCompatibleMaterialsAndSignedLimit_CanPass()
    {
        // The same machine oil-free, with stainless plates and FKM seals, inside the signed 150 °C: nothing prohibited.
        var result = Evaluate(Oxygen("recip-nonlube", null), WithSite(SignedOxygenSite));
        Assert.DoesNotContain(result.Findings, f => f.RuleId.StartsWith("R-O2-", StringComparison.Ordinal));
        Assert.Equal(Severity.Pass, result.Find("R-SPECIAL-O2").Severity);
    }

    [Theory]
    // Nylon plates and NBR seals are not suited to oxygen (ASTM G63/G94, CGA G-4.4 / EIGA Doc 13 — from memory — verify).
    [InlineData("pa66-gf", "fkm", "R-O2-VALVE-MATERIAL")]
    [InlineData("metal-plate", "nbr", "R-O2-SEAL-MATERIAL")]
    public void OxygenRich_WhenMaterialNotSuitedToOxygen_IsProhibited(string valve, string seal, string ruleId)
    {
        var result = Evaluate(Oxygen("recip-nonlube", null) with { ValveMaterialId = valve, SealMaterialId = seal }, WithSite(SignedOxygenSite));
        Assert.Equal(Severity.Violation, result.Find(ruleId).Severity);
        Assert.Equal(Verdict.Fail, result.Verdict);
    }

    [Theory]
    [InlineData("R-O2-LUBRICATED")]
    [InlineData("R-CL2-TITANIUM")]
    public void ProhibitedRule_WhenALayerDisablesOrOverridesIt_LayerIsRefused(string ruleId)
    {
        var disable = $"""
            schemaVersion: 1
            layer:
              kind: site
              id: test-site
            overrides:
              - rule: {ruleId}
                disabled: true
                reason: "We know better (invented)"
                approvedBy: "A. Person (invented)"
                approvedOn: 2026-11-02
            """;
        var ex = Assert.Throws<RuleFileException>(() => WithSite(disable));
        var e = Assert.Single(ex.Errors);
        Assert.Equal(RuleFileErrorKind.LayeringViolation, e.Kind);
        Assert.Contains("prohibited combination", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void TitaniumInChlorine_FindingCarriesNoNumber()
    {
        // Counter-example: it printed "limit −273.15 °C, margin −350.5 K". Chlorine Institute Pamphlet 1 §8.3.2 ((a)).
        var f = Evaluate(Quiet() with { DeclaredServiceClasses = ["chlorine"], ValveMaterialId = "titanium", Isentropic = C(77.35), IsentropicInternal = C(77.35) }).Find("R-CL2-TITANIUM");
        Assert.Equal(Severity.Violation, f.Severity);
        Assert.Null(f.Limit);
        Assert.Null(f.Margin);
        Assert.Null(f.Value);
        Assert.DoesNotContain("273", f.Detail, StringComparison.Ordinal);
    }

    [Theory]
    // Dry-basis O2 (the one basis for every oxygen class). 15 % is nitrogen-generator product: oxygen-depleted, still
    // oxidant. 19 % is air's lower bound (common practice, no single source); 2 % the depleted class's floor.
    [InlineData(15.0, "oxygen-depleted")]
    [InlineData(2.5, "oxygen-depleted")]
    [InlineData(25.0, "oxygen-rich")]
    public void OxygenClasses_OnTheDryBasis_AreDetected(double percent, string expected)
    {
        Assert.Contains(expected, ServiceClassDetector.Detect(Repo.Defaults, null, Ratio.FromPercent(percent)));
    }

    [Theory]
    [InlineData(19.0)]
    [InlineData(20.95)]
    [InlineData(1.0)]
    public void OxygenDepleted_OutsideItsRange_IsNotDetected(double percent)
    {
        Assert.DoesNotContain("oxygen-depleted", ServiceClassDetector.Detect(Repo.Defaults, null, Ratio.FromPercent(percent)));
    }

    [Fact]
    public void OxygenDepletedAir_LubricatedRecip_GetsTheAirFireLimitAndOilIgnitionRules()
    {
        // 12 % O2 dry at 8 bara discharge: O2 partial pressure 96 kPa, above the 10 kPa oxidant threshold (common practice).
        var facts = Quiet() with
        {
            OxygenMoleFraction = Ratio.FromPercent(12),
            DischargeOxygenPartialPressure = Pressure.FromKilopascals(96),
            LubricantId = "mineral-vdl",
            Estimated = C(155),
        };
        var result = Evaluate(facts);
        Assert.Contains("oxygen-depleted", result.ServiceClasses);
        Assert.Equal(Severity.Violation, result.Find("R-AIT").Severity);
        Assert.Contains(result.Findings, f => f.RuleId == "R-AIR-RECIP");
    }

    [Theory]
    // Counter-example: R-AIT governed hydrogen, natural gas, CO2, propane and nitrogen stages with "fire and explosion
    // hazard: stop". With no oxidant at discharge the oil cannot autoignite.
    [InlineData(0.0)]
    [InlineData(9.9)]
    public void OilIgnitionRules_WithoutOxidant_DoNotApply(double o2KiloPascals)
    {
        var result = Evaluate(Quiet() with { LubricantId = "mineral-vdl", Estimated = C(200), DischargeOxygenPartialPressure = Pressure.FromKilopascals(o2KiloPascals) });
        Assert.DoesNotContain(result.Findings, f => f.RuleId is "R-AIT" or "R-FLASH-SOFT");
        Assert.DoesNotContain(result.NotChecked, n => n.RuleId is "R-AIT" or "R-FLASH-SOFT");
        // The lubricant's own class rating still applies (DIN 51506 VDL 220 °C — from memory — verify).
        Assert.Contains(result.Findings, f => f.RuleId == "R-LUBE-CLASS");
    }

    [Fact]
    public void RealGasCorrection_WhenTheRealGasDecided_IsNoReasonForReview()
    {
        // Counter-example: every propane, CO2 and dense-hydrogen stage was review although Peng-Robinson decided.
        var decidedByRealGas = Evaluate(Quiet() with { RealGasCorrection = TemperatureDelta.FromKelvins(12), DecidedBy = "real-gas" });
        Assert.DoesNotContain(decidedByRealGas.Findings, f => f.RuleId == "R-REALGAS");
        var decidedByIdealGas = Evaluate(Quiet() with { RealGasCorrection = TemperatureDelta.FromKelvins(12), DecidedBy = "ideal-gas" });
        Assert.Equal(Severity.Warning, decidedByIdealGas.Find("R-REALGAS").Severity);
    }

    [Fact]
    public void MeasuredBelowIsentropic_OnAnUncooledStage_IsAnImplausibilityWarning()
    {
        // Second law: an adiabatic stage ends at or above its isentropic temperature (any thermodynamics text, (a)).
        var uncooled = Evaluate(Quiet() with { MeasuredDischarge = C(95) }).Find("R-MEASURED-BELOW-ISENTROPIC");
        Assert.Equal(Severity.Warning, uncooled.Severity);
        Assert.Contains("thermometer", uncooled.Message, StringComparison.Ordinal);
        var cooled = Evaluate(Quiet() with { MeasuredDischarge = C(95), JacketCoolantInlet = C(40) });
        Assert.DoesNotContain(cooled.Findings, f => f.RuleId == "R-MEASURED-BELOW-ISENTROPIC");
    }

    [Fact]
    public void Wording_PassingDeviationFarBelowPrediction_DoesNotSayAbove()
    {
        // Counter-example: a pass R-DEVIATION at −36.5 K read "well above the prediction".
        var f = Evaluate(Quiet() with { Estimated = C(150), MeasuredDischarge = C(113.5), JacketCoolantInlet = C(40) }).Find("R-DEVIATION");
        Assert.Equal(Severity.Pass, f.Severity);
        Assert.StartsWith("Passes", f.Message, StringComparison.Ordinal);
        Assert.DoesNotContain("above the prediction", f.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Wording_ElastomerInsideWarningBand_SaysCloseNotExceeds()
    {
        // Counter-example: 141.7 °C against an HNBR 150 °C limit (seal supplier table, (a)) said "exceeds".
        var f = Evaluate(Quiet() with { Estimated = C(141.7), SealMaterialId = "hnbr" }).Find("R-ELASTOMER");
        Assert.Equal(Severity.Warning, f.Severity);
        Assert.StartsWith("Close to the limit: 8.3 K", f.Message, StringComparison.Ordinal);
        Assert.DoesNotContain("exceeds", f.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Wording_EveryOutcome_MatchesItsSeverity()
    {
        // Sweep R-API618-GEN (150 °C, band 5 K) across its limit: pass says passes, the band says close, beyond exceeds.
        foreach (var celsius in new[] { 120.0, 146.0, 151.0 })
        {
            var f = Evaluate(Quiet() with { Isentropic = C(celsius), IsentropicInternal = C(celsius) }).Find("R-API618-GEN");
            switch (f.Severity)
            {
                case Severity.Pass:
                    Assert.StartsWith("Passes", f.Message, StringComparison.Ordinal);
                    break;
                case Severity.Warning:
                    Assert.StartsWith("Close to the limit", f.Message, StringComparison.Ordinal);
                    break;
                default:
                    Assert.Contains("exceeds", f.Message, StringComparison.Ordinal);
                    break;
            }
        }
    }

    [Fact]
    public void SuctionPhase_TwoPhase_IsAProhibitedCondition_AndSaturatedIsOnlyInfo()
    {
        var twoPhase = Evaluate(Quiet() with { SuctionPhase = StagePhase.TwoPhase, SuctionSuperheat = TemperatureDelta.FromKelvins(-15) });
        Assert.Equal(Severity.Violation, twoPhase.Find("R-SUCTION-LIQUID").Severity);
        Assert.Equal(Verdict.Fail, twoPhase.Verdict);

        var saturated = Evaluate(Quiet() with { SuctionPhase = StagePhase.Saturated });
        Assert.Equal(Severity.Info, saturated.Find("R-SUCTION-SATURATED").Severity);
        Assert.Contains("separator", saturated.Find("R-SUCTION-SATURATED").Message, StringComparison.Ordinal);
        Assert.DoesNotContain(saturated.Findings, f => f.RuleId.StartsWith("R-SUCTION", StringComparison.Ordinal) && f.Severity >= Severity.Warning);

        // A gas with no dew point at its suction pressure: the superheat rule has nothing to keep and is silent.
        var noDewPoint = Evaluate(Quiet() with { SuctionPhase = StagePhase.Gas, SuctionSuperheat = null });
        Assert.DoesNotContain(noDewPoint.Findings, f => f.RuleId == "R-SUCTION-DEWPOINT");
        Assert.DoesNotContain(noDewPoint.NotChecked, n => n.RuleId == "R-SUCTION-DEWPOINT");
    }

    [Fact]
    public void FloodedScrew_ScrewOilClassRating_IsChecked()
    {
        // ISO 6743-3 DAG oils for oil-flooded rotary air compressors: air/oil discharge below about 90 °C (from memory —
        // verify). A flooded screw measured at 95 °C on DAG oil exceeds its class rating.
        var result = Evaluate(Quiet("screw-oil-flooded") with { LubricantId = "mineral-dag", MeasuredDischarge = C(95), Estimated = C(85) });
        Assert.Equal(Severity.Violation, result.Find("R-LUBE-CLASS").Severity);
    }
}
