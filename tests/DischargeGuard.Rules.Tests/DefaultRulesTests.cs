using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using UnitsNet;
using static DischargeGuard.Rules.Tests.Facts;

namespace DischargeGuard.Rules.Tests;

/// <summary>Every shipped rule: a case that triggers it, a case just inside (boundary ± 0.01), and a missing-input case.</summary>
public class DefaultRulesTests
{
    private const double Step = 0.01; // K, or ratio units for R-RATIO

    /// <summary>A boundary case: the facts with the checked value set to <c>value</c>, the limit, and outcomes either side.</summary>
    private sealed record Boundary(Func<double, StageFacts> At, double Limit, LimitDirection Direction, Severity Beyond, Severity JustInside);

    // Limits in kelvin (or ratio). Each value's source is in the comment; the same marks are in rules/default.yaml.
    private static readonly Dictionary<string, Boundary> Cases = new()
    {
        // 150 °C (300 °F): API 618 5th ed. predicted discharge limit — from memory — verify (shared domain survey, (c) high).
        ["R-API618-GEN"] = new(v => Quiet() with { IsentropicInternal = K(v) }, 423.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // 135 °C (275 °F) for hydrogen-rich (MW <= 12): API 618 5th ed. — from memory — verify ((c) high).
        ["R-API618-H2"] = new(v => Quiet() with { IsentropicInternal = K(v), GasMolarMass = MolarMass.FromGramsPerMole(8) }, 408.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // 350 °F (177 °C) practical ceiling for packaged field units — common practice, no single source ((b)). Stated as
        // 350 °F since the stated-limit change, so 350 °F = (350 − 32)·5/9 °C = 176.67 °C is checked (was 177 °C = 450.15 K).
        ["R-FIELD-HC"] = new(v => Quiet("recip-packaged-lubricated") with { Estimated = K(v), DeclaredServiceClasses = ["hydrocarbon"] }, (350 - 32) * 5.0 / 9 + 273.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // The stage's own design temperature, here 160 °C as a request would state it (the limit is the input itself;
        // pressure-equipment codes forbid running a part above its design temperature, (a)); warning band 10 K (b).
        ["R-DESIGN-TEMP"] = new(v => Quiet() with { Estimated = K(v), DesignTemperature = C(160) }, 433.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // 350 °F = 176.67 °C: Bloch & Hoefner (1996) p.382 "limit operating temperature to 350 °F" ((a)); the file states
        // 350 °F since the stated-limit change (it rounded to 177 °C = 450.15 K before).
        ["R-AIR-RECIP"] = new(v => Quiet() with { Estimated = K(v), DeclaredServiceClasses = ["air"] }, (350 - 32) * 5.0 / 9 + 273.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // DIN 51506 VB/VBL 140 °C (284 °F) — from memory — verify ((c) med).
        ["R-LUBE-CLASS"] = new(v => Quiet() with { Estimated = K(v), LubricantId = "mineral-vbl" }, 413.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // AIT 340 °C (low end of the mineral range 340-370 °C — from memory — verify) − 140 K (GAPS GAP.3.1.1: up to 250 °F
        // lower at pressure, (a)) − 50 K margin (common practice) = 150 °C. Air at 3 bar: O2 partial pressure 63 kPa.
        ["R-AIT"] = new(v => Air() with { Estimated = K(v), LubricantId = "mineral-vdl" }, 423.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // Flash point 200 °C − 30 K = 170 °C — from memory — verify ((c) low); warning only; only with oxidant.
        ["R-FLASH-SOFT"] = new(v => Air() with { Estimated = K(v), LubricantId = "mineral-vdl" }, 443.15, LimitDirection.Upper, Severity.Warning, Severity.Pass),
        // Mineral oil deposits above about 150 °C — common practice, no single source ((b)); warning only.
        ["R-DEPOSIT"] = new(v => Quiet() with { Estimated = K(v), LubricantId = "mineral-vdl" }, 423.15, LimitDirection.Upper, Severity.Warning, Severity.Pass),
        // PEEK plates about 400 °F (204 °C): Bloch & Hoefner p.148 ((a)).
        ["R-VALVE-MAT"] = new(v => Quiet() with { Estimated = K(v), ValveMaterialId = "peek" }, 477.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // FKM standard compound 200 °C: seal supplier elastomer table ((a)).
        ["R-ELASTOMER"] = new(v => Quiet() with { Estimated = K(v), SealMaterialId = "fkm" }, 473.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // Oil-flooded screw trip 120 °C (248 °F): screw high-discharge-temperature guides ((a) low-authority).
        ["R-SCREW-FLOODED"] = new(v => Quiet("screw-oil-flooded") with { MeasuredDischarge = K(v) }, 393.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // Dew point 60 °C + 10 K margin — common practice ((b)), cf. Brun & Kurz p.288 10 K rule ((a)).
        ["R-SCREW-DEWPOINT"] = new(v => Quiet("screw-oil-flooded") with { MeasuredDischarge = K(v), DischargeWaterDewPoint = C(60) }, 343.15, LimitDirection.Lower, Severity.Warning, Severity.Pass),
        // 10 K above prediction, note band 5 K: a leaking valve or ring shows 5-15 K — common practice, no single source ((b));
        // B&H p.336 ((a)) for the meaning. Just inside the limit is inside the 5 K band: info.
        ["R-DEVIATION"] = new(v => Quiet() with { Estimated = C(150), MeasuredDischarge = K(423.15 + v) }, 10.0, LimitDirection.Upper, Severity.Warning, Severity.Info),
        // Measured below the isentropic temperature of an uncooled stage: second law ((a), any thermodynamics text).
        ["R-MEASURED-BELOW-ISENTROPIC"] = new(v => Quiet() with { MeasuredDischarge = K(373.15 + v) }, 0.0, LimitDirection.Lower, Severity.Warning, Severity.Pass),
        // Suction at least 10 K above the hydrocarbon dew point — common practice, no single source ((b)).
        ["R-SUCTION-DEWPOINT"] = new(v => Quiet() with { SuctionSuperheat = TemperatureDelta.FromKelvins(v) }, 10.0, LimitDirection.Lower, Severity.Warning, Severity.Pass),
        // Fitted rise of the deviation over 5 evaluations at pressures within 5 %, limit 5 K — common practice, no single source ((b));
        // meaning from Bloch & Hoefner p.336 ((a)). Three evaluations with deviations 0, v/2, v: the least-squares rise is v.
        ["R-DEVIATION-TREND"] = new(v => Quiet() with { Estimated = C(150), MeasuredDischarge = K(423.15 + v), DeviationHistory = [Sample(0), Sample(v / 2)] }, 5.0, LimitDirection.Upper, Severity.Warning, Severity.Pass),
        // Real-gas correction above 5 K: review — common practice, no single source ((b)).
        ["R-REALGAS"] = new(v => Quiet() with { RealGasCorrection = TemperatureDelta.FromKelvins(v) }, 5.0, LimitDirection.Upper, Severity.Warning, Severity.Pass),
        // Ratio 4.0 per recip stage — common practice, no single source ((b)).
        ["R-RATIO"] = new(v => Quiet() with { DischargePressure = Pressure.FromBars(10 * v) }, 4.0, LimitDirection.Upper, Severity.Warning, Severity.Pass),
        // Coolant inlet >= gas inlet + 5 K (9 °F): API 618-2007 §5.7.3 as restated in a project specification ((a)). Suction 30 °C.
        ["R-COOLING-JACKET"] = new(v => Quiet() with { JacketCoolantInlet = K(v) }, 308.15, LimitDirection.Lower, Severity.Warning, Severity.Pass),
        // Unloaded running and discharge > 100 °C (212 °F): API 618-2007 §5.7.2 as restated ((a)).
        ["R-COOLING-UNLOADED"] = new(v => Quiet() with { Estimated = K(v), UnloadedRunning = true }, 373.15, LimitDirection.Upper, Severity.Warning, Severity.Pass),
        // Unloaded running and adiabatic rise >= 85 K (153 °F): same clause ((a)). Suction 30 °C, so isentropic = 303.15 K + rise.
        ["R-COOLING-UNLOADED-RISE"] = new(v => Quiet() with { Isentropic = K(303.15 + v), IsentropicInternal = K(303.15 + v), UnloadedRunning = true }, 85.0, LimitDirection.Upper, Severity.Warning, Severity.Pass),
        // Carbon steel in chlorine: 120 °C warning — survey default (c, low), from memory — verify.
        ["R-CL2-CARBON-STEEL"] = new(v => Quiet() with { Estimated = K(v), DeclaredServiceClasses = ["chlorine"], ValveMaterialId = "carbon-steel" }, 393.15, LimitDirection.Upper, Severity.Warning, Severity.Pass),
        // Dry screw 230 °C (446 °F), warning from 215 °C: rotor clearances and coating — from memory — verify ((c) low).
        ["R-SCREW-DRY"] = new(v => Quiet("screw-dry") with { Estimated = K(v) }, 503.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // Dry gas seal secondary seals about 200 °C (392 °F) — from memory — verify ((c) low).
        ["R-CENTRIFUGAL-SEALS"] = new(v => Quiet("centrifugal") with { Estimated = K(v) }, 473.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // Filled PTFE rings applied up to about 200 °C — from memory — verify ((c)).
        ["R-RING-MAT"] = new(v => Quiet("recip-nonlube") with { Estimated = K(v), RingMaterialId = "ptfe-filled" }, 473.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // API RP 941 (8th ed., 2016), simplified carbon-steel threshold 204 °C (400 °F) — from memory — verify ((c));
        // pure hydrogen at 30 bar: partial pressure 3 MPa, above the 0.345 MPa (50 psia) applicability.
        ["R-HTHA-CS"] = new(v => Quiet() with { Estimated = K(v), MoleFractions = Gas(("H2", 1.0)), DischargeMaterial = "carbon-steel" }, 477.15, LimitDirection.Upper, Severity.Violation, Severity.Warning),
        // Oil stability in ammonia or CO2 about 135-150 °C (refrigeration practice, (c) low — from memory — verify);
        // warning-only rule with a 15 K band: just inside is a note.
        ["R-OIL-STABILITY-NH3-CO2"] = new(v => Quiet() with { Estimated = K(v), MoleFractions = Gas(("NH3", 1.0)) }, 423.15, LimitDirection.Upper, Severity.Warning, Severity.Info),
    };

    // A composition by species id (wet mole fractions).
    private static Dictionary<string, double> Gas(params (string Species, double Fraction)[] parts) => parts.ToDictionary(p => p.Species, p => p.Fraction);

    // Sour natural gas: 1 % H2S, at Quiet()'s 30 bar discharge a partial pressure of 30 kPa, far above 0.3 kPa.
    private static Dictionary<string, double> Sour => Gas(("CH4", 0.99), ("H2S", 0.01));

    /// <summary>Facts with the rule's input removed, and the input the result must name.</summary>
    private static readonly Dictionary<string, (StageFacts Facts, string Missing)> MissingCases = new()
    {
        ["R-API618-GEN"] = (Quiet() with { CompressorTypeId = null }, "compressorType"),
        ["R-API618-H2"] = (Quiet() with { CompressorTypeId = null, GasMolarMass = MolarMass.FromGramsPerMole(8) }, "compressorType"),
        ["R-FIELD-HC"] = (Quiet() with { CompressorTypeId = null, DeclaredServiceClasses = ["hydrocarbon"] }, "compressorType"),
        ["R-AIR-RECIP"] = (Quiet() with { CompressorTypeId = null, DeclaredServiceClasses = ["air"] }, "compressorType"),
        ["R-DESIGN-TEMP"] = (Quiet(), "designTemperature"),
        ["R-LUBE-CLASS"] = (Quiet(), "lubricant"),
        ["R-AIT"] = (Air(), "lubricant"),
        ["R-FLASH-SOFT"] = (Air(), "lubricant"),
        ["R-DEPOSIT"] = (Quiet(), "lubricant"),
        ["R-VALVE-MAT"] = (Quiet(), "valveMaterial"),
        ["R-ELASTOMER"] = (Quiet(), "sealMaterial"),
        ["R-SCREW-PREDICTION"] = (Quiet() with { CompressorTypeId = null }, "compressorType"),
        ["R-SCREW-FLOODED"] = (Quiet("screw-oil-flooded"), "measuredDischargeTemperature"),
        ["R-SCREW-DEWPOINT"] = (Quiet("screw-oil-flooded") with { MeasuredDischarge = C(80) }, "dischargeWaterDewPoint"),
        ["R-DEVIATION"] = (Quiet(), "measuredDischargeTemperature"),
        ["R-MEASURED-BELOW-ISENTROPIC"] = (Quiet(), "measuredDischargeTemperature"),
        ["R-SUCTION-DEWPOINT"] = (Quiet() with { SuctionPhase = null }, "suctionPhase"),
        ["R-SUCTION-LIQUID"] = (Quiet() with { SuctionPhase = null }, "suctionPhase"),
        ["R-SUCTION-SATURATED"] = (Quiet() with { SuctionPhase = null }, "suctionPhase"),
        ["R-DISCHARGE-PHASE"] = (Quiet() with { DischargePhase = null }, "dischargePhase"),
        ["R-O2-LUBRICATED"] = (Quiet() with { CompressorTypeId = null, OxygenMoleFraction = Ratio.FromPercent(30) }, "compressorType"),
        ["R-O2-LUBRICANT"] = (Quiet() with { OxygenMoleFraction = Ratio.FromPercent(30) }, "lubricant"),
        ["R-O2-VALVE-MATERIAL"] = (Quiet() with { OxygenMoleFraction = Ratio.FromPercent(30) }, "valveMaterial"),
        ["R-O2-SEAL-MATERIAL"] = (Quiet() with { OxygenMoleFraction = Ratio.FromPercent(30) }, "sealMaterial"),
        ["R-DEVIATION-TREND"] = (Quiet() with { MeasuredDischarge = C(112), DeviationHistory = [Sample(1)] }, "history: at least 2 earlier evaluations of this asset with a measured discharge temperature at the same pressures (within 5 %)"),
        ["R-REALGAS"] = (Quiet(), "realGasResult"),
        ["R-SETPOINTS"] = (Quiet(), "normalOperatingDischargeTemperature"),
        ["R-RATIO"] = (Quiet() with { CompressorTypeId = null }, "compressorType"),
        ["R-COOLING-JACKET"] = (Quiet(), "jacketCoolantInletTemperature"),
        ["R-COOLING-UNLOADED"] = (Quiet(), "unloadedRunning"),
        ["R-COOLING-UNLOADED-RISE"] = (Quiet(), "unloadedRunning"),
        ["R-SPECIAL-O2"] = (Quiet() with { CompressorTypeId = null, OxygenMoleFraction = Ratio.FromPercent(30) }, ""),
        ["R-SPECIAL-CL2"] = (Quiet() with { CompressorTypeId = null, DeclaredServiceClasses = ["chlorine"] }, ""),
        ["R-SPECIAL-C2H2"] = (Quiet() with { CompressorTypeId = null, DeclaredServiceClasses = ["acetylene"] }, ""),
        ["R-CL2-CARBON-STEEL"] = (Quiet() with { DeclaredServiceClasses = ["chlorine"] }, "valveMaterial"),
        ["R-CL2-TITANIUM"] = (Quiet() with { DeclaredServiceClasses = ["chlorine"] }, "valveMaterial"),
        ["R-SOUR-VALVE-MATERIAL"] = (Quiet() with { MoleFractions = Sour }, "valveMaterial"),
        ["R-SOUR-SPRING-MATERIAL"] = (Quiet() with { MoleFractions = Sour }, "springMaterial"),
        ["R-SOUR-SEAL-MATERIAL"] = (Quiet() with { MoleFractions = Sour }, "sealMaterial"),
        ["R-RGD-SEAL"] = (Quiet() with { DischargePressure = Pressure.FromBars(60), MoleFractions = Gas(("CO2", 1.0)) }, "sealMaterial"),
        ["R-SEAL-EPDM-HYDROCARBON"] = (Quiet() with { DeclaredServiceClasses = ["hydrocarbon"] }, "sealMaterial"),
        ["R-SEAL-EPDM-OIL"] = (Quiet() with { SealMaterialId = "epdm-sulfur" }, "lubricant"),
        ["R-SEAL-FKM-AMMONIA-AMINE"] = (Quiet() with { DeclaredServiceClasses = ["amine"] }, "sealMaterial"),
        ["R-SEAL-NBR-OZONE"] = (Quiet() with { DeclaredServiceClasses = ["ozone"] }, "sealMaterial"),
        ["R-SCREW-DRY"] = (Quiet() with { CompressorTypeId = null }, "compressorType"),
        ["R-CENTRIFUGAL-SEALS"] = (Quiet() with { CompressorTypeId = null }, "compressorType"),
        ["R-RING-MAT"] = (Quiet("recip-nonlube"), "ringMaterial"),
        ["R-HTHA-CS"] = (Quiet() with { MoleFractions = Gas(("H2", 1.0)) }, "dischargeMaterial"),
        ["R-WET-CO2-CS"] = (Quiet() with { SuctionPhase = StagePhase.Saturated, MoleFractions = Gas(("CH4", 0.9), ("CO2", 0.1)) }, "dischargeMaterial"),
        ["R-OIL-STABILITY-NH3-CO2"] = (Quiet() with { CompressorTypeId = null, MoleFractions = Gas(("NH3", 1.0)) }, "compressorType"),
        // Special: C2H2 at 10 % and 30 bar is 300 kPa partial pressure, above 1.5 bar g (251.3 kPa absolute).
        ["R-C2H2-DECOMPOSITION"] = (Quiet() with { CompressorTypeId = null, MoleFractions = Gas(("N2", 0.9), ("C2H2", 0.1)) }, ""),
        // Special: pure ethylene at 60 bar, above the 5 MPa decomposition practice.
        ["R-C2H4-DECOMPOSITION"] = (Quiet() with { CompressorTypeId = null, DischargePressure = Pressure.FromBars(60), MoleFractions = Gas(("C2H4", 1.0)) }, ""),
    };

    public static TheoryData<string> BoundaryRules() => new(Cases.Keys.Order(StringComparer.Ordinal));

    public static TheoryData<string> MissingRules() => new(MissingCases.Keys.Order(StringComparer.Ordinal));

    private static StageResult Evaluate(StageFacts facts) => RuleEngine.EvaluateStage(Repo.Defaults, facts);

    [Fact]
    public void TitaniumInChlorine_AtAnyTemperature_IsAViolation()
    {
        // Chlorine Institute Pamphlet 1 §8.3.2: titanium reacts violently with dry chlorine ((a)); no safe temperature.
        var cold = Evaluate(Quiet() with { DeclaredServiceClasses = ["chlorine"], ValveMaterialId = "titanium", Isentropic = C(20), IsentropicInternal = C(20) }).Find("R-CL2-TITANIUM");
        Assert.Equal(Severity.Violation, cold.Severity);
        var other = Evaluate(Quiet() with { DeclaredServiceClasses = ["chlorine"], ValveMaterialId = "carbon-steel", Isentropic = C(20), IsentropicInternal = C(20) });
        Assert.DoesNotContain(other.Findings, f => f.RuleId == "R-CL2-TITANIUM");
        var noChlorine = Evaluate(Quiet() with { ValveMaterialId = "titanium" });
        Assert.DoesNotContain(noChlorine.Findings, f => f.RuleId == "R-CL2-TITANIUM");
    }

    [Fact]
    public void DefaultFile_WhenLoaded_EveryRuleHasATriggerOrSpecialCase()
    {
        // Guards the tables: a shipped rule added without tests fails here.
        var covered = Cases.Keys.Concat(["R-SCREW-PREDICTION", "R-SETPOINTS", "R-SPECIAL-O2", "R-SPECIAL-CL2", "R-SPECIAL-C2H2", "R-CL2-TITANIUM",
            "R-O2-LUBRICATED", "R-O2-LUBRICANT", "R-O2-VALVE-MATERIAL", "R-O2-SEAL-MATERIAL", "R-SUCTION-LIQUID", "R-SUCTION-SATURATED", "R-DISCHARGE-PHASE",
            "R-SOUR-VALVE-MATERIAL", "R-SOUR-SPRING-MATERIAL", "R-SOUR-SEAL-MATERIAL", "R-RGD-SEAL", "R-SEAL-EPDM-HYDROCARBON", "R-SEAL-EPDM-OIL", "R-SEAL-FKM-AMMONIA-AMINE",
            "R-SEAL-NBR-OZONE", "R-WET-CO2-CS", "R-C2H2-DECOMPOSITION", "R-C2H4-DECOMPOSITION"]).ToHashSet();
        Assert.Equal(covered.Order(), Repo.Defaults.Rules.Select(r => r.Id).Order());
        Assert.Equal(covered.Order(), MissingCases.Keys.Order());
    }

    [Theory]
    [MemberData(nameof(BoundaryRules))]
    public void DefaultRule_WhenJustBeyondLimit_Triggers(string ruleId)
    {
        var c = Cases[ruleId];
        var beyond = c.Direction == LimitDirection.Upper ? c.Limit + Step : c.Limit - Step;
        var f = Evaluate(c.At(beyond)).Find(ruleId);
        Assert.Equal(c.Beyond, f.Severity);
        AssertEx.Close(c.Limit, f.Limit!.Value.SiValue, 1e-9, ruleId + " limit");
        AssertEx.Close(-Step, f.Margin!.Value.SiValue, 1e-6, ruleId + " margin");
        Assert.Equal("default", f.Layer);
    }

    [Theory]
    [MemberData(nameof(BoundaryRules))]
    public void DefaultRule_WhenJustInsideLimit_DoesNotTrigger(string ruleId)
    {
        var c = Cases[ruleId];
        var inside = c.Direction == LimitDirection.Upper ? c.Limit - Step : c.Limit + Step;
        var f = Evaluate(c.At(inside)).Find(ruleId);
        Assert.Equal(c.JustInside, f.Severity);
        AssertEx.Close(Step, f.Margin!.Value.SiValue, 1e-6, ruleId + " margin");
    }

    [Theory]
    [MemberData(nameof(MissingRules))]
    public void DefaultRule_WhenInputMissing_ListedAsNotCheckedOrSpecialViolation(string ruleId)
    {
        var (facts, missing) = MissingCases[ruleId];
        var result = Evaluate(facts);
        if (missing.Length == 0)
        {
            // Special services: no input is missing, the limit is; they never pass on defaults.
            var f = result.Find(ruleId);
            Assert.Equal(Severity.Violation, f.Severity);
            Assert.Null(f.Limit);
            Assert.Contains("sign off", f.Message, StringComparison.Ordinal);
            Assert.Equal(Verdict.Fail, result.Verdict);
            return;
        }

        Assert.DoesNotContain(result.Findings, f => f.RuleId == ruleId);
        var nc = Assert.Single(result.NotChecked, n => n.RuleId == ruleId);
        Assert.Contains(missing, nc.MissingInputs);
    }

    [Fact]
    public void DesignTemperature_WhenNotStated_IsListedButDoesNotHoldTheVerdictAtReview()
    {
        // Policy (common practice, no single source): an optional input of the stage itself; the shipped limits on the
        // same temperature still apply, so its absence is listed, not escalated by ENGINE-UNCHECKED-LIMITS.
        var result = Evaluate(Quiet() with { LubricantId = "mineral-vdl", ValveMaterialId = "peek", SealMaterialId = "fkm", GasMolarMass = MolarMass.FromGramsPerMole(16), OxygenMoleFraction = Ratio.Zero, DischargeOxygenPartialPressure = Pressure.Zero });
        var nc = Assert.Single(result.NotChecked, n => n.RuleId == "R-DESIGN-TEMP");
        Assert.Equal(NotCheckedReason.OptionalInput, nc.Why);
        Assert.DoesNotContain(result.Findings, f => f.RuleId == RuleEngine.UncheckedLimitsRuleId && f.Note!.Contains("R-DESIGN-TEMP", StringComparison.Ordinal));
    }

    [Fact]
    public void DesignTemperature_WhenLowest_GovernsTheStage()
    {
        // 120 °C design temperature under PEEK's 204 °C (Bloch & Hoefner p.148) and the oil's limits: it governs.
        var result = RuleEngine.EvaluateStage(Repo.Defaults, Quiet() with { Estimated = C(125), DesignTemperature = C(120), ValveMaterialId = "peek" });
        Assert.Equal("R-DESIGN-TEMP", result.Governing!.RuleId);
        Assert.Equal(Verdict.Fail, result.Verdict);
    }

    [Fact]
    public void ProcessStandardLimit_OnAPackagedFieldUnit_DoesNotApply_TheFieldUnitLimitDoes()
    {
        // Packaged field units (ISO 13631 scope, (a)) take the 350 °F (176.67 °C) field-unit practice (b), not API 618's 150 °C (c).
        var result = Evaluate(Quiet("recip-packaged-lubricated") with { IsentropicInternal = C(160), Estimated = C(170), DeclaredServiceClasses = ["hydrocarbon"] });
        Assert.DoesNotContain(result.Findings, f => f.RuleId is "R-API618-GEN" or "R-API618-H2");
        Assert.Equal(Severity.Warning, result.Find("R-FIELD-HC").Severity);
    }

    [Fact]
    public void ProcessStandardLimit_WithoutTheInternalTemperature_IsNotCheckedNamingTheAllowance()
    {
        // The flange-ratio isentropic temperature alone no longer decides the design check.
        var result = Evaluate(Quiet() with { Isentropic = C(160) });
        Assert.Contains("compressorTypes.valveLoss", Assert.Single(result.NotChecked, n => n.RuleId == "R-API618-GEN").MissingInputs);
    }

    [Fact]
    public void HydrogenRich_WhenMolarMassAtThreshold_IsDetected()
    {
        // Threshold MW <= 12 g/mol: API 618 5th ed. hydrogen-rich service — from memory — verify ((c) high).
        Assert.Contains("hydrogen-rich", ServiceClassDetector.Detect(Repo.Defaults, MolarMass.FromGramsPerMole(12.0), null));
        Assert.DoesNotContain("hydrogen-rich", ServiceClassDetector.Detect(Repo.Defaults, MolarMass.FromGramsPerMole(12.01), null));
        // Air, 28.96 g/mol (ISO 2533 standard atmosphere), is not hydrogen-rich.
        Assert.Empty(ServiceClassDetector.Detect(Repo.Defaults, MolarMass.FromGramsPerMole(28.9644), Ratio.FromPercent(20.95)));
    }

    [Theory]
    [InlineData("R-API618-H2", "gasMolarMass")]
    [InlineData("R-SPECIAL-O2", "oxygenMoleFraction")]
    public void DetectedServiceRule_WhenCompositionInputMissing_NotCheckedRatherThanSkipped(string ruleId, string missing)
    {
        var result = Evaluate(Quiet());
        var nc = Assert.Single(result.NotChecked, n => n.RuleId == ruleId);
        Assert.Equal([missing], nc.MissingInputs);
    }

    [Fact]
    public void DetectedServiceRule_WhenCompositionKnownAndOutside_DoesNotApply()
    {
        var result = Evaluate(Quiet() with { GasMolarMass = MolarMass.FromGramsPerMole(18), OxygenMoleFraction = Ratio.FromPercent(0.1) });
        Assert.DoesNotContain(result.NotChecked, n => n.RuleId is "R-API618-H2" or "R-SPECIAL-O2");
        Assert.DoesNotContain(result.Findings, f => f.RuleId is "R-API618-H2" or "R-SPECIAL-O2");
    }

    [Fact]
    public void HydrogenRich_WhenDetected_GovernsAt135C()
    {
        // 140 °C predicted: inside 150 °C (R-API618-GEN) but beyond 135 °C (R-API618-H2) — both (c) high, from memory — verify.
        var result = Evaluate(Quiet() with { Isentropic = C(140), IsentropicInternal = C(140), GasMolarMass = MolarMass.FromGramsPerMole(10) });
        Assert.Equal("R-API618-H2", result.Governing!.RuleId);
        AssertEx.Close(-5.0, result.Governing.Margin!.Value.SiValue, 1e-9, "margin");
        Assert.Contains("hydrogen-rich", result.DetectedServiceClasses);
    }

    [Fact]
    public void OxygenRich_WhenAboveThreshold_IsDetected()
    {
        // 23.5 % O2 oxygen-enriched threshold — from memory — verify; air is 20.95 % O2 (ISO 2533).
        Assert.Contains("oxygen-rich", ServiceClassDetector.Detect(Repo.Defaults, null, Ratio.FromPercent(23.6)));
        Assert.DoesNotContain("oxygen-rich", ServiceClassDetector.Detect(Repo.Defaults, null, Ratio.FromPercent(23.5)));
    }

    [Theory]
    // AIT(p) ≈ AIT(1 atm) − 140 K (GAPS GAP.3.1.1, "up to 250 °F lower", (a)); limit = AIT(p) − 50 K (common practice).
    // One policy, the low end of each base stock's published range (from memory — verify): mineral 340-370 °C → 340 °C → 150 °C;
    // diester 400-430 °C → 400 °C → 210 °C; PAO 340-380 °C → 340 °C → 150 °C. No synthetic gets a lower limit than mineral oil.
    [InlineData("mineral-vdl", 150.0)]
    [InlineData("diester-vdl", 210.0)]
    [InlineData("pao-dab", 150.0)]
    public void Autoignition_WhenDeratedForPressure_LimitIsAitMinus190K(string lubricant, double limitCelsius)
    {
        var f = Evaluate(Air() with { LubricantId = lubricant }).Find("R-AIT");
        AssertEx.Close(limitCelsius + 273.15, f.Limit!.Value.SiValue, 1e-9, "AIT limit");
    }

    [Fact]
    public void Autoignition_WhenBreachedByMeasuredOnly_UsesMeasured()
    {
        var f = Evaluate(Air() with { LubricantId = "mineral-vdl", MeasuredDischarge = C(155) }).Find("R-AIT");
        Assert.Equal(CheckedQuantity.Measured, f.Quantity);
        Assert.Equal(Severity.Violation, f.Severity);
        AssertEx.Close(-5.0, f.Margin!.Value.SiValue, 1e-9, "margin");
    }

    [Theory]
    // A leaking valve or ring typically shows 5-15 K above prediction — common practice, no single source ((b)); the
    // default reviews from 10 K whatever the stage temperature (the old "5 % of absolute" was 21 K at 150 °C and missed it).
    [InlineData(423.15)]
    [InlineData(400.0)]
    [InlineData(190.0)]
    public void Deviation_WhenMeasured12KAbovePredicted_IsAWarning(double estimatedKelvin)
    {
        var f = Evaluate(Quiet() with { Isentropic = K(estimatedKelvin - 5), IsentropicInternal = K(estimatedKelvin - 5), Estimated = K(estimatedKelvin), SuctionTemperature = K(150), MeasuredDischarge = K(estimatedKelvin + 12) }).Find("R-DEVIATION");
        AssertEx.Close(10.0, f.Limit!.Value.SiValue, 1e-9, "deviation limit");
        Assert.Equal(Severity.Warning, f.Severity);
        Assert.Equal(QuantityDimension.TemperatureDifference, f.Value!.Value.Dimension);
    }

    [Fact]
    public void OilFloodedScrew_WhenMeasuredMissing_SaysPredictionIsUpperBoundAndNotChecked()
    {
        // The adiabatic prediction (200 °C here) would fail every temperature rule; for oil-flooded screws it is only an upper bound.
        var result = Evaluate(Quiet("screw-oil-flooded") with { EstimatedUpperBound = C(200), Estimated = C(200), Isentropic = C(200), IsentropicInternal = C(200), LubricantId = "pao-dab" });
        Assert.Equal(Severity.Info, result.Find("R-SCREW-PREDICTION").Severity);
        Assert.Contains(result.NotChecked, n => n.RuleId == "R-SCREW-FLOODED" && n.MissingInputs.Contains("measuredDischargeTemperature"));
        Assert.DoesNotContain(result.Findings, f => f.Severity == Severity.Violation);
    }

    [Fact]
    public void SetPoints_WhenNormalGiven_ProposesAlarmAndTrip()
    {
        // Normal 120 °C: alarm = 120 + min(5 % × 120 = 6, 7) = 126 °C; trip = 120 + min(12, 14) = 132 °C
        // (floating set points — common practice, no single source).
        var f = Evaluate(Quiet() with { NormalOperatingDischarge = C(120) }).Find("R-SETPOINTS");
        Assert.Equal(Severity.Info, f.Severity);
        AssertEx.Close(126.0, f.SetPoints!.Alarm.DegreesCelsius, 1e-9, "alarm");
        AssertEx.Close(132.0, f.SetPoints.Trip.DegreesCelsius, 1e-9, "trip");
        Assert.False(f.SetPoints.Capped);
    }

    [Fact]
    public void SetPoints_WhenProposalWouldPassFailLimit_CappedAtIt()
    {
        // Air with a diester (R-AIT 210 °C): the lowest cap on the estimated or measured temperature is R-AIR-RECIP 350 °F
        // = 176.67 °C (Bloch & Hoefner p.382; 177 °C before the file stated it in °F). Normal 168 °C → trip
        // 168 + min(16.8, 14) = 182 °C > 176.67 °C: trip capped at 176.67 °C; alarm 168 + min(8.4, 7) = 175 °C, lowered to
        // 176.67 − 3 K (minimum step) = 173.67 °C; both stay above normal.
        const double capCelsius = (350 - 32) * 5.0 / 9;
        var f = Evaluate(Air() with { NormalOperatingDischarge = C(168), LubricantId = "diester-vdl", Estimated = C(168) }).Find("R-SETPOINTS");
        AssertEx.Close(capCelsius, f.SetPoints!.Trip.DegreesCelsius, 1e-9, "trip");
        AssertEx.Close(capCelsius - 3, f.SetPoints.Alarm.DegreesCelsius, 1e-9, "alarm");
        Assert.True(f.SetPoints.Capped);
        Assert.Equal("R-AIR-RECIP", f.SetPoints.CapRuleId);
        Assert.Equal(Severity.Info, f.Severity);
    }

    [Fact]
    public void SetPoints_WhenOnlyTheIsentropicLimitIsBelow_NotCapped()
    {
        // Issue counter-example: normal 155 °C gave alarm 150 and trip 150 (capped by R-API618-GEN, an isentropic design
        // limit). A design-prediction limit is no operating ceiling: alarm 155 + min(7.75, 7) = 162 °C, trip 155 + 14 = 169 °C.
        var f = Evaluate(Quiet() with { NormalOperatingDischarge = C(155) }).Find("R-SETPOINTS");
        AssertEx.Close(162.0, f.SetPoints!.Alarm.DegreesCelsius, 1e-9, "alarm");
        AssertEx.Close(169.0, f.SetPoints.Trip.DegreesCelsius, 1e-9, "trip");
        Assert.False(f.SetPoints.Capped);
        Assert.Null(f.SetPoints.CapRuleId);
    }

    [Fact]
    public void SetPoints_WhenLimitLeavesNoRoom_WarnsAndKeepsAlarmAboveNormalAndTripAboveAlarm()
    {
        // Normal 176 °C against R-AIR-RECIP 350 °F (176.67 °C, Bloch & Hoefner p.382): no room for an alarm and a trip 3 K apart (minimum step, common practice).
        var f = Evaluate(Air() with { NormalOperatingDischarge = C(176), LubricantId = "diester-vdl" }).Find("R-SETPOINTS");
        Assert.Equal(Severity.Warning, f.Severity);
        Assert.True(f.SetPoints!.Alarm.DegreesCelsius > 176.0);
        Assert.True(f.SetPoints.Trip.DegreesCelsius >= f.SetPoints.Alarm.DegreesCelsius + 3.0 - 1e-9);
        Assert.Contains("no room", f.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void SetPoints_AtLowNormal_KeepMinimumStep()
    {
        // Normal 20 °C: 5 % is 1 K, raised to the 3 K minimum step; trip 10 % = 2 K, raised to alarm + 3 K.
        var f = Evaluate(Quiet() with { NormalOperatingDischarge = C(20) }).Find("R-SETPOINTS");
        AssertEx.Close(23.0, f.SetPoints!.Alarm.DegreesCelsius, 1e-9, "alarm");
        AssertEx.Close(26.0, f.SetPoints.Trip.DegreesCelsius, 1e-9, "trip");
    }

    [Fact]
    public void Engine_WhenEfficiencyDefaulted_SaysSoWithBasis()
    {
        var result = Evaluate(Quiet() with { EfficiencyDefaulted = true });
        var f = result.Find("ENGINE-DEFAULT-EFFICIENCY");
        Assert.Contains("0.80", f.Detail, StringComparison.Ordinal);
        Assert.Contains("common practice", f.Basis, StringComparison.Ordinal);
    }

    [Fact]
    public void DefaultFile_EveryRule_HasSourceMarkAndDefersToManufacturer()
    {
        foreach (var r in Repo.Defaults.Rules)
        {
            Assert.True(System.Text.RegularExpressions.Regex.IsMatch(r.Basis, @"\((a|b|c)[,)/ ]|common practice|from memory"), r.Id + " basis: " + r.Basis);
            Assert.True(System.Text.RegularExpressions.Regex.IsMatch(r.Message, "manufacturer|supplier|packager|local codes"), r.Id + " message: " + r.Message);
        }
    }

    // Air at Quiet()'s 30 bar discharge: 20.95 % O2 (ISO 2533) → 628.5 kPa O2 partial pressure.
    private static StageFacts Air() => Quiet() with
    {
        DeclaredServiceClasses = ["air"],
        OxygenMoleFraction = Ratio.FromPercent(20.95),
        DischargeOxygenPartialPressure = Pressure.FromKilopascals(0.2095 * 3000),
    };

    // One earlier evaluation at Quiet()'s pressures with this deviation.
    private static DeviationSample Sample(double deviationKelvin) =>
        new(TemperatureDelta.FromKelvins(deviationKelvin), Quiet().SuctionPressure, Quiet().DischargePressure);
}
