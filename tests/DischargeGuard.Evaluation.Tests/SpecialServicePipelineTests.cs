using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Evaluation.Validation;
using static DischargeGuard.Evaluation.Tests.Scenario;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>
/// The special-service and machine-type rules end to end: classes detected from the request's composition, the new
/// equipment inputs (ring and discharge materials) and their refusal when malformed.
/// </summary>
public sealed class SpecialServicePipelineTests
{
    private static EvaluationRequest Request(IReadOnlyDictionary<string, double> composition, StageInput stage) => new()
    {
        Asset = "K-101A",
        Site = new SiteInput { Id = Site, BarometricPressure = Q("101.3 kPa") },
        Gas = new GasInput { Composition = composition },
        Stages = [stage],
    };

    private static StageInput Stage(string suction, string temperature, string discharge, EquipmentInput equipment) => new()
    {
        Suction = new SuctionInput { Pressure = Q(suction), Temperature = Q(temperature) },
        Discharge = new DischargeInput { Pressure = Q(discharge) },
        Efficiency = new EfficiencyInput { Isentropic = 0.80 },
        Equipment = equipment,
    };

    private static EquipmentInput Recip(string seal) => new() { CompressorType = "recip-lubricated", Lubricant = "pao-dab", ValveMaterial = "peek", SealMaterial = seal };

    private static IReadOnlyList<FindingDto> Findings(EvaluationResponse r) => r.Stages[0].Findings;

    [Fact]
    public void EpdmSeal_InNaturalGas_Fails()
    {
        // Was a pass before: EPDM swells in hydrocarbons (compatibility practice (c) — from memory — verify). The service
        // declares hydrocarbon for a gas that is at least half hydrocarbons by mole.
        var gas = new Dictionary<string, double> { ["CH4"] = 0.93, ["C2H6"] = 0.05, ["N2"] = 0.02 };
        var response = Evaluate(Request(gas, Stage("20 bara", "25 °C", "50 bara", Recip("epdm-peroxide"))));
        Assert.Equal("fail", response.Verdict);
        Assert.Contains(Findings(response), f => f.RuleId == "R-SEAL-EPDM-HYDROCARBON" && f.Severity == "violation" && f.Limit is null);
    }

    [Fact]
    public void FkmSeal_InAmmonia_Fails()
    {
        // Was a pass before: standard FKM is attacked by ammonia ((c) — from memory — verify). Ammonia's vapour pressure at
        // 20 °C is about 8.6 bar (from memory — verify), so 2 bara suction is gas.
        var response = Evaluate(Request(new Dictionary<string, double> { ["NH3"] = 1 }, Stage("2 bara", "20 °C", "6 bara", Recip("fkm"))));
        Assert.Equal("fail", response.Verdict);
        Assert.Contains("ammonia", response.Gas.ServiceClasses);
        Assert.Contains(Findings(response), f => f.RuleId == "R-SEAL-FKM-AMMONIA-AMINE" && f.Severity == "violation");
    }

    [Fact]
    public void Chlorine_InTheComposition_IsAcceptedAndDetected()
    {
        // Was 400 "Unknown species": Cl2 now has NASA TM-4513 data. Chlorine never passes on defaults (R-SPECIAL-CL2).
        var gas = new Dictionary<string, double> { ["Cl2"] = 0.98, ["N2"] = 0.02 };
        var response = Evaluate(Request(gas, Stage("1.2 bara", "20 °C", "3.5 bara", new EquipmentInput { CompressorType = "recip-nonlube", ValveMaterial = "titanium", RingMaterial = "ptfe-filled" })));
        Assert.Equal("fail", response.Verdict);
        Assert.Contains("chlorine", response.Gas.ServiceClasses);
        Assert.Contains(Findings(response), f => f.RuleId == "R-SPECIAL-CL2" && f.Severity == "violation");
        // Chlorine Institute Pamphlet 1 §8.3.2 ((a)): titanium in dry chlorine is prohibited.
        Assert.Contains(Findings(response), f => f.RuleId == "R-CL2-TITANIUM" && f.Severity == "violation");
    }

    [Fact]
    public void AcetyleneImpurity_InEthylene_IsDetected()
    {
        // 1 % C2H2 in ethylene at 20 bara: 20 kPa partial pressure, above the 10 kPa detection threshold (common practice,
        // no single source); the acetylene rules never pass on defaults.
        var gas = new Dictionary<string, double> { ["C2H4"] = 0.99, ["C2H2"] = 0.01 };
        var response = Evaluate(Request(gas, Stage("5 bara", "20 °C", "20 bara", Recip("hnbr"))));
        Assert.Contains("acetylene", response.Gas.ServiceClasses);
        Assert.Contains(Findings(response), f => f.RuleId == "R-SPECIAL-C2H2" && f.Severity == "violation");
    }

    [Fact]
    public void SourGas_WithNbrSeal_FailsAndNamesSourService()
    {
        // 1 % H2S at 30 bara: 30 kPa, far above NACE MR0175 / ISO 15156-2's 0.3 kPa (0.05 psia) — from memory — verify.
        var gas = new Dictionary<string, double> { ["CH4"] = 0.97, ["H2S"] = 0.01, ["CO2"] = 0.02 };
        var response = Evaluate(Request(gas, Stage("10 bara", "25 °C", "30 bara", Recip("nbr"))));
        Assert.Contains("sour-gas", response.Gas.ServiceClasses);
        Assert.Contains(Findings(response), f => f.RuleId == "R-SOUR-SEAL-MATERIAL" && f.Severity == "violation");
    }

    [Fact]
    public void Hydrogen_OnCarbonSteelDischarge_AboveNelsonThreshold_Fails()
    {
        // Pure H2, 10 → 40 bara from 40 °C, η 0.80: about 234 °C estimated (ideal gas, k about 1.40), above the simplified
        // API RP 941 carbon-steel threshold 204 °C (400 °F) — from memory — verify; H2 partial pressure 4 MPa > 0.345 MPa.
        var equipment = new EquipmentInput { CompressorType = "recip-nonlube", ValveMaterial = "metal-plate", SealMaterial = "fkm", RingMaterial = "peek-ring", DischargeMaterial = "carbon-steel" };
        var response = Evaluate(Request(new Dictionary<string, double> { ["H2"] = 1 }, Stage("10 bara", "40 °C", "40 bara", equipment)));
        var htha = Assert.Single(Findings(response), f => f.RuleId == "R-HTHA-CS");
        Assert.Equal("violation", htha.Severity);
        var stainless = Evaluate(Request(new Dictionary<string, double> { ["H2"] = 1 }, Stage("10 bara", "40 °C", "40 bara", equipment with { DischargeMaterial = "stainless" })));
        Assert.DoesNotContain(Findings(stainless), f => f.RuleId == "R-HTHA-CS");
    }

    [Fact]
    public void DryScrew_At236C_FailsItsOwnRule()
    {
        // Air 1 → 4 bara from 35 °C at the dry-screw default isentropic 0.65 ((b)/(c)): about 236 °C estimated;
        // dry-screw practice limit 230 °C ((c) low — from memory — verify).
        var stage = AirStage(suction: "100 kPa(a)", temperature: "35 °C", discharge: "400 kPa(a)") with
        {
            Efficiency = null,
            Equipment = new EquipmentInput { CompressorType = "screw-dry" },
        };
        var response = Evaluate(AirRequest(stage));
        var f = Assert.Single(Findings(response), f => f.RuleId == "R-SCREW-DRY");
        Assert.Equal("violation", f.Severity);
    }

    [Theory]
    [InlineData("mild-steel")]
    [InlineData("Carbon-Steel")]
    public void DischargeMaterial_WhenNotInTheList_IsRefusedAtItsPath(string material)
    {
        var request = AirRequest(AirStage() with { Equipment = new EquipmentInput { CompressorType = "recip-lubricated", DischargeMaterial = material } });
        var failures = new EvaluationRequestValidator().Validate(request).Errors;
        Assert.Contains(failures, f => string.Equals(f.PropertyName, "stages[0].equipment.dischargeMaterial", StringComparison.OrdinalIgnoreCase) && f.ErrorMessage.Contains("carbon-steel", StringComparison.Ordinal));
        var problem = Refuse(request);
        Assert.Equal(ProblemKind.InvalidRequest, problem.Kind);
        Assert.True(problem.Errors.ContainsKey("stages[0].equipment.dischargeMaterial"), string.Join("; ", problem.Errors.Keys));
    }

    [Fact]
    public void RingMaterial_WhenASealId_IsRefusedAndListsRingMaterials()
    {
        var request = AirRequest(AirStage() with { Equipment = new EquipmentInput { CompressorType = "recip-nonlube", RingMaterial = "fkm" } });
        var problem = Refuse(request);
        Assert.True(problem.Errors.TryGetValue("stages[0].equipment.ringMaterial", out var messages), string.Join("; ", problem.Errors.Keys));
        Assert.Contains(messages!, m => m.Contains("'ptfe-filled'", StringComparison.Ordinal));
    }
}
