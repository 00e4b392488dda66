using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Testing;
using static DischargeGuard.Evaluation.Tests.Scenario;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>The design-standard check on the internal cylinder ratio (flange ratio with the valve-loss allowance).</summary>
public sealed class InternalRatioPipelineTests
{
    private static EvaluationRequest Argon(string type, string discharge) => new()
    {
        Asset = "K-102B",
        Site = new SiteInput { Id = Site, BarometricPressure = Q("98.6 kPa") },
        Gas = new GasInput { Composition = new Dictionary<string, double> { ["Ar"] = 1 } },
        Stages =
        [
            new StageInput
            {
                Suction = new SuctionInput { Pressure = Q("100 kPa(a)"), Temperature = Q("300 K") },
                Discharge = new DischargeInput { Pressure = Q(discharge) },
                Efficiency = new EfficiencyInput { Isentropic = 0.85 },
                Equipment = new EquipmentInput { CompressorType = type },
            },
        ],
    };

    [Fact]
    public void InternalIsentropic_OnArgon_MatchesTheHandCalculation_AndIsWhatTheProcessLimitChecks()
    {
        // Hand calculation (argon, k = 5/3 exactly; valve-loss allowance 5 % per valve from the rule file, common
        // practice): r_int = 3·1.05/0.95 = 3.31579, T2s,int = 300·3.31579^0.4 = 484.55 K; flange T2s = 300·3^0.4 = 465.55 K.
        var stage = Evaluate(Argon("recip-nonlube", "300 kPa(a)")).Stages[0];

        AssertEx.Within(465.55 - 273.15, stage.DischargeTemperature!.Isentropic.Value, 0.05);
        AssertEx.Within(484.55 - 273.15, stage.DischargeTemperature.IsentropicInternal!.Value, 0.05);
        var api = Assert.Single(stage.Findings, f => f.RuleId == "R-API618-GEN");
        Assert.Equal("isentropicInternal", api.Quantity);
        AssertEx.Within(484.55 - 273.15, api.Value!.Value, 0.05);
        Assert.Equal("violation", api.Severity); // 211.4 °C > 150 °C (API 618 5th ed., from memory — verify)
        // The envelope on the internal ratio: the flange pressure whose internal η = 1 temperature is 150 °C. Hand
        // calculation: r_int = (423.15/300)^2.5 = 2.3628, flange r = 2.3628·0.95/1.05 = 2.1378, so 213.78 kPa(a).
        Assert.Equal("R-API618-GEN", stage.Governing!.RuleId);
        AssertEx.Within(213.78, stage.Envelope!.MaxDischargePressure!.Value, 0.3);
    }

    [Fact]
    public void PackagedFieldUnit_IsNotCheckedAgainstTheProcessStandard()
    {
        var stage = Evaluate(Argon("recip-packaged-lubricated", "300 kPa(a)")).Stages[0];

        Assert.DoesNotContain(stage.Findings, f => f.RuleId is "R-API618-GEN" or "R-API618-H2");
    }
}
