using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>The R-RATIO report: the highest pressure ratio every violation-level temperature limit allows.</summary>
public sealed class LimitEnvelopeTests
{
    [Fact]
    public void Envelope_ByLimit_ListsEachTemperatureLimitAndItsRatioRoundTrips()
    {
        // The round trip below re-solves each limit's ratio with the ideal-gas solver, so the ideal gas decides here (its
        // discharge near 570 K is above GERG-2008's normal range, where `auto` takes Peng-Robinson).
        var request = new EvaluationRequest
        {
            Asset = "K-101A",
            Method = "ideal-gas",
            Gas = new GasInput { Preset = "dry-air" },
            Stages =
            [
                new StageInput
                {
                    Suction = new SuctionInput { Pressure = new QuantityInput("100 kPa(a)"), Temperature = new QuantityInput("30 °C") },
                    Discharge = new DischargeInput { Pressure = new QuantityInput("600 kPa(a)") },
                    Efficiency = new EfficiencyInput { Isentropic = 0.8 },
                    Equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "mineral-vdl", ValveMaterial = "peek", SealMaterial = "fkm" },
                },
            ],
        };
        var response = new EvaluationPipeline().Evaluate(request, TestRules.Snapshot, new EvaluationContext(Guid.CreateVersion7(), DateTimeOffset.UnixEpoch) { Detail = AnswerDetail.Full }).Response!;
        var stage = response.Stages[0];
        var byLimit = stage.Envelope!.ByLimit!;

        // R-API618-GEN (η = 1 on the internal ratio, 150 °C) and R-AIT (estimated, 150 °C) both limit this stage; the governing one is listed too.
        Assert.Contains(byLimit, l => l.RuleId == "R-API618-GEN" && l.Quantity == "isentropicInternal");
        Assert.Contains(byLimit, l => l.RuleId == stage.Envelope.GoverningRule);
        var air = GasCatalog.Default.Preset("dry-air");
        foreach (var l in byLimit.Where(l => l.Status == "found"))
        {
            // The internal ratio: suction and discharge moved by the rule file's 5 % valve-loss allowance (common practice).
            var (p1, p2) = l.Quantity == "isentropicInternal" ? (95.0, 100 * l.MaxPressureRatio!.Value * 1.05) : (100.0, 100 * l.MaxPressureRatio!.Value);
            var r = StageSolver.Solve(air, new StageConditions(Pressure.FromKilopascals(p1), Temperature.FromDegreesCelsius(30), Pressure.FromKilopascals(p2), StageEfficiency.Isentropic(0.8)));
            var t = l.Quantity is "isentropic" or "isentropicInternal" ? r.IsentropicDischargeTemperature : r.EstimatedDischargeTemperature;
            // The ratio is rounded to 4 decimals, which moves the temperature by well under 0.05 K here.
            AssertEx.Within(l.Limit.Value, t.DegreesCelsius, 0.05, l.RuleId);
        }
    }
}
