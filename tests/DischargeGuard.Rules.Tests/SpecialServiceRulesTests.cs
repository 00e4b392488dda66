using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using UnitsNet;
using static DischargeGuard.Rules.Tests.Facts;

namespace DischargeGuard.Rules.Tests;

/// <summary>
/// The special-service and machine-type rules: classes detected from the composition, prohibited material
/// combinations, the wet-CO2 caution and the decomposition hazards. Quiet() discharges at 30 bar absolute.
/// </summary>
public class SpecialServiceRulesTests
{
    private static StageResult Evaluate(StageFacts facts) => RuleEngine.EvaluateStage(Repo.Defaults, facts);

    private static Dictionary<string, double> Gas(params (string Species, double Fraction)[] parts) => parts.ToDictionary(p => p.Species, p => p.Fraction);

    private static IReadOnlyList<string> Detect(Dictionary<string, double> gas, double dischargeBar) =>
        ServiceClassDetector.Detect(Repo.Defaults, null, null, gas, Pressure.FromBars(dischargeBar));

    [Fact]
    public void SourGas_WhenH2SPartialPressureCrossesThreshold_IsDetected()
    {
        // NACE MR0175 / ISO 15156-2: sour at 0.3 kPa (0.05 psia) H2S partial pressure — from memory — verify ((c) high).
        // At 30 bar (3000 kPa): 0.3 kPa is a mole fraction of 1e-4 (100 ppm).
        Assert.Contains("sour-gas", Detect(Gas(("CH4", 1 - 1.01e-4), ("H2S", 1.01e-4)), 30));
        Assert.DoesNotContain("sour-gas", Detect(Gas(("CH4", 1 - 0.99e-4), ("H2S", 0.99e-4)), 30));
    }

    [Fact]
    public void Acetylene_WhenImpurityInEthylene_IsDetectedAndNeverPassesOnDefaults()
    {
        // 1 % C2H2 in ethylene at 30 bar: 30 kPa partial pressure, above the 10 kPa detection threshold (project choice,
        // common practice, no single source); 0.01 % (3 kPa) is not named.
        Assert.Contains("acetylene", Detect(Gas(("C2H4", 0.99), ("C2H2", 0.01)), 30));
        Assert.DoesNotContain("acetylene", Detect(Gas(("C2H4", 0.9999), ("C2H2", 0.0001)), 30));
        var result = Evaluate(Quiet() with { MoleFractions = Gas(("C2H4", 0.99), ("C2H2", 0.01)) });
        Assert.Equal(Severity.Violation, result.Find("R-SPECIAL-C2H2").Severity);
        // 30 kPa is far below 1.5 bar g (251.3 kPa absolute, EIGA Doc 123 practice — from memory — verify): no decomposition rule.
        Assert.DoesNotContain(result.Findings, f => f.RuleId == "R-C2H2-DECOMPOSITION");
    }

    [Fact]
    public void Chlorine_WhenAboveOnePercentDry_IsDetectedWithoutDeclaration()
    {
        // Threshold 1 % Cl2 on the dry basis: common practice, no single source. 0.9 % wet with 20 % water is 1.125 % dry.
        Assert.Contains("chlorine", Detect(Gas(("N2", 0.791), ("H2O", 0.2), ("Cl2", 0.009)), 30));
        Assert.DoesNotContain("chlorine", Detect(Gas(("N2", 0.991), ("Cl2", 0.009)), 30));
        var result = Evaluate(Quiet() with { MoleFractions = Gas(("N2", 0.5), ("Cl2", 0.5)), ValveMaterialId = "titanium" });
        // Chlorine Institute Pamphlet 1 §8.3.2 ((a)): titanium reacts violently with dry chlorine.
        Assert.Equal(Severity.Violation, result.Find("R-CL2-TITANIUM").Severity);
    }

    [Theory]
    [InlineData("metal-plate-iso15156", null)]
    [InlineData("peek", null)]
    [InlineData("metal-plate", "materials[metal-plate].sourService")]
    public void SourValveMaterial_WhenQualifiedOrUnstated_PassesOrIsNotChecked(string valve, string? missing)
    {
        var result = Evaluate(Quiet() with { MoleFractions = Gas(("CH4", 0.99), ("H2S", 0.01)), ValveMaterialId = valve });
        Assert.DoesNotContain(result.Findings, f => f.RuleId == "R-SOUR-VALVE-MATERIAL");
        if (missing is null)
        {
            Assert.DoesNotContain(result.NotChecked, n => n.RuleId == "R-SOUR-VALVE-MATERIAL");
        }
        else
        {
            Assert.Contains(missing, Assert.Single(result.NotChecked, n => n.RuleId == "R-SOUR-VALVE-MATERIAL").MissingInputs);
        }
    }

    [Fact]
    public void SourGas_WithNbrSealAndCarbonSteelValves_IsProhibited()
    {
        // Sour-service marks in the catalogue: NBR hardens in H2S ((c) — from memory — verify); plain carbon-steel valve
        // parts carry no NACE MR0175 / ISO 15156 statement, so they are not checked; a valve material marked false is refused.
        var nbr = Evaluate(Quiet() with { MoleFractions = Gas(("CH4", 0.99), ("H2S", 0.01)), SealMaterialId = "nbr" });
        Assert.Equal(Severity.Violation, nbr.Find("R-SOUR-SEAL-MATERIAL").Severity);
        Assert.Equal(Verdict.Fail, nbr.Verdict);
        var sweet = Evaluate(Quiet() with { MoleFractions = Gas(("CH4", 1.0)), SealMaterialId = "nbr" });
        Assert.DoesNotContain(sweet.Findings, f => f.RuleId == "R-SOUR-SEAL-MATERIAL");
    }

    [Theory]
    // NACE MR0175 / ISO 15156: hard spring steels (Cr-V) and 17-7PH are not qualified for sour service; alloy X-750 is,
    // in stated conditions ((c) — from memory — verify).
    [InlineData("spring-crv", true)]
    [InlineData("spring-17-7ph", true)]
    [InlineData("spring-x750", false)]
    public void SourGas_ValveSpringMaterial_IsCheckedOnItsOwn(string spring, bool prohibited)
    {
        var result = Evaluate(Quiet() with { MoleFractions = Gas(("CH4", 0.99), ("H2S", 0.01)), SpringMaterialId = spring });
        if (prohibited)
        {
            var f = result.Find("R-SOUR-SPRING-MATERIAL");
            Assert.Equal(Severity.Violation, f.Severity);
            Assert.Null(f.Limit);
        }
        else
        {
            Assert.DoesNotContain(result.Findings, f => f.RuleId == "R-SOUR-SPRING-MATERIAL");
            Assert.DoesNotContain(result.NotChecked, n => n.RuleId == "R-SOUR-SPRING-MATERIAL");
        }

        var sweet = Evaluate(Quiet() with { MoleFractions = Gas(("CH4", 1.0)), SpringMaterialId = "spring-crv" });
        Assert.DoesNotContain(sweet.Findings, f => f.RuleId == "R-SOUR-SPRING-MATERIAL");
    }

    [Theory]
    [InlineData("epdm-peroxide", "hydrocarbon", "R-SEAL-EPDM-HYDROCARBON")]
    [InlineData("epdm-sulfur", "hydrocarbon", "R-SEAL-EPDM-HYDROCARBON")]
    [InlineData("fkm", "amine", "R-SEAL-FKM-AMMONIA-AMINE")]
    [InlineData("nbr", "ozone", "R-SEAL-NBR-OZONE")]
    public void ElastomerCompatibility_WhenIncompatible_IsProhibitedAtAnyTemperature(string seal, string service, string ruleId)
    {
        // Compatibility practice (c) — from memory — verify: EPDM/hydrocarbons, FKM/amines, NBR/ozone are "not recommended".
        var result = Evaluate(Quiet() with { SealMaterialId = seal, DeclaredServiceClasses = [service], Estimated = C(40) });
        var f = result.Find(ruleId);
        Assert.Equal(Severity.Violation, f.Severity);
        Assert.Null(f.Limit);
        Assert.Equal(Verdict.Fail, result.Verdict);
    }

    [Fact]
    public void FkmSeal_WhenAmmoniaInTheComposition_IsProhibited()
    {
        // Ammonia detected above 1 % NH3 dry (common practice, no single source); FKM attacked by ammonia ((c)).
        var result = Evaluate(Quiet() with { SealMaterialId = "fkm", MoleFractions = Gas(("NH3", 1.0)) });
        Assert.Equal(Severity.Violation, result.Find("R-SEAL-FKM-AMMONIA-AMINE").Severity);
        var ffkm = Evaluate(Quiet() with { SealMaterialId = "ffkm", MoleFractions = Gas(("NH3", 1.0)) });
        Assert.DoesNotContain(ffkm.Findings, f => f.RuleId == "R-SEAL-FKM-AMMONIA-AMINE");
    }

    [Fact]
    public void EpdmSeal_WithMineralOil_IsProhibited()
    {
        var result = Evaluate(Quiet() with { SealMaterialId = "epdm-peroxide", LubricantId = "mineral-vdl" });
        Assert.Equal(Severity.Violation, result.Find("R-SEAL-EPDM-OIL").Severity);
    }

    [Theory]
    [InlineData("CO2", 60.0, "fkm", true)]      // 6 MPa CO2 > 5 MPa
    [InlineData("H2", 60.0, "hnbr", true)]      // 6 MPa H2 > 5 MPa
    [InlineData("CO2", 60.0, "fkm-rgd", false)] // RGD-rated grade
    [InlineData("CO2", 40.0, "fkm", false)]     // 4 MPa: below the threshold
    public void RapidGasDecompression_AboveFiveMegapascals_NeedsRatedGrade(string species, double bar, string seal, bool refused)
    {
        // RGD-rated elastomers above about 5 MPa (50 bar) CO2 or H2 — from memory — verify ((c) low).
        var result = Evaluate(Quiet() with { DischargePressure = Pressure.FromBars(bar), MoleFractions = Gas((species, 1.0)), SealMaterialId = seal });
        Assert.Equal(refused, result.Findings.Any(f => f.RuleId == "R-RGD-SEAL" && f.Severity == Severity.Violation));
    }

    [Fact]
    public void DryScrew_At236C_FailsItsOwnLimit()
    {
        // 236 °C against the dry-screw 230 °C practice limit ((c) low — from memory — verify).
        var f = Evaluate(Quiet("screw-dry") with { Estimated = C(236) }).Find("R-SCREW-DRY");
        Assert.Equal(Severity.Violation, f.Severity);
        AssertEx.Close(-6.0, f.Margin!.Value.SiValue, 1e-9, "margin K");
    }

    [Fact]
    public void Htha_WhenHydrogenPartialPressureLowOrSteelAlloyed_DoesNotApply()
    {
        // API RP 941 simplified applicability: H2 above about 0.345 MPa (50 psia) — from memory — verify ((c)).
        // 10 % H2 at 30 bar is 0.3 MPa: below it.
        var low = Evaluate(Quiet() with { Estimated = C(260), MoleFractions = Gas(("N2", 0.9), ("H2", 0.1)), DischargeMaterial = "carbon-steel" });
        Assert.DoesNotContain(low.Findings, f => f.RuleId == "R-HTHA-CS");
        Assert.DoesNotContain(low.NotChecked, n => n.RuleId == "R-HTHA-CS");
        var crMo = Evaluate(Quiet() with { Estimated = C(260), MoleFractions = Gas(("H2", 1.0)), DischargeMaterial = "2.25cr-1mo" });
        Assert.DoesNotContain(crMo.Findings, f => f.RuleId == "R-HTHA-CS");
        var cMo = Evaluate(Quiet() with { Estimated = C(260), MoleFractions = Gas(("H2", 1.0)), DischargeMaterial = "c-0.5mo" });
        Assert.Equal(Severity.Violation, cMo.Find("R-HTHA-CS").Severity);
    }

    [Fact]
    public void WetCo2_OnCarbonSteelAfterCooler_IsACautionNotAFailure()
    {
        // Wet CO2 on carbon steel above about 0.05 MPa (7 psia) CO2 partial pressure — from memory — verify ((c)).
        var wet = Quiet() with { SuctionPhase = StagePhase.Saturated, MoleFractions = Gas(("CH4", 0.9), ("CO2", 0.1)), DischargeMaterial = "carbon-steel" };
        var f = Evaluate(wet).Find("R-WET-CO2-CS");
        Assert.Equal(Severity.Warning, f.Severity);
        Assert.Null(f.Limit);
        Assert.DoesNotContain(Evaluate(wet with { DischargeMaterial = "stainless" }).Findings, x => x.RuleId == "R-WET-CO2-CS");
        Assert.DoesNotContain(Evaluate(wet with { SuctionPhase = StagePhase.Gas }).Findings, x => x.RuleId == "R-WET-CO2-CS");
    }

    [Fact]
    public void SpeciesClass_WhenCompositionUnknown_IsNotRuledOut()
    {
        // A class decided on the composition cannot be ruled out without it: listed as not checked, never passed.
        var result = Evaluate(Quiet());
        Assert.Contains("gas.composition", Assert.Single(result.NotChecked, n => n.RuleId == "R-SPECIAL-CL2").MissingInputs);
    }

    [Fact]
    public void LiquidRing_IsCooledAndItsPredictionAnUpperBound()
    {
        var type = Repo.Defaults.CompressorTypes["liquid-ring"];
        Assert.True(type.PredictionIsUpperBound);
        Assert.Equal(EfficiencyKind.NotApplicable, type.EfficiencyKind);
        Assert.Equal(EfficiencyKind.Polytropic, Repo.Defaults.CompressorTypes["integrally-geared"].EfficiencyKind);
        Assert.Equal(0.70, Repo.Defaults.CompressorTypes["diaphragm"].DefaultEfficiency);
    }
}
