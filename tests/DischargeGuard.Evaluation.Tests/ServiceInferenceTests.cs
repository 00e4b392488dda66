using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>Air and hydrocarbon service follow from the composition, so their rules cannot be skipped by omission.</summary>
public sealed class ServiceInferenceTests
{
    [Theory]
    [InlineData("dry-air", "air")]
    [InlineData("methane", "hydrocarbon")]
    public void Pipeline_WithObviousComposition_DeclaresTheServiceClass(string preset, string expectedClass)
    {
        var response = Evaluate(new GasInput { Preset = preset });
        Assert.Contains(expectedClass, response.Gas.ServiceClasses);
    }

    [Fact]
    public void Pipeline_WithAirOnALubricatedRecip_ChecksTheAirFirePreventionRule()
    {
        // R-AIR-RECIP: oil-lubricated reciprocating air compressors, 177 °C (350 °F) — Bloch & Hoefner, Reciprocating
        // Compressors: Operation and Maintenance (1996), p. 382, via the shipped default rules.
        var response = Evaluate(new GasInput { Preset = "dry-air" });
        Assert.Contains(response.Stages[0].Findings, f => f.RuleId == "R-AIR-RECIP");
    }

    [Fact]
    public void Pipeline_WithNitrogen_DeclaresNeitherAirNorHydrocarbon()
    {
        var response = Evaluate(new GasInput { Preset = "nitrogen" });
        Assert.DoesNotContain("air", response.Gas.ServiceClasses);
        Assert.DoesNotContain("hydrocarbon", response.Gas.ServiceClasses);
    }

    private static EvaluationResponse Evaluate(GasInput gas)
    {
        var request = new EvaluationRequest
        {
            Asset = "K-101A",
            Gas = gas,
            Stages =
            [
                new StageInput
                {
                    Suction = new SuctionInput { Pressure = new QuantityInput("101.325 kPa(a)"), Temperature = new QuantityInput("30 °C") },
                    Discharge = new DischargeInput { Pressure = new QuantityInput("300 kPa(a)") },
                    Efficiency = new EfficiencyInput { Isentropic = 0.8 },
                    Equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "mineral-vdl" },
                },
            ],
        };
        var outcome = new EvaluationPipeline().Evaluate(request, TestRules.Snapshot, new EvaluationContext(Guid.CreateVersion7(), DateTimeOffset.UnixEpoch) { Detail = AnswerDetail.Full });
        Assert.Null(outcome.Problem);
        return outcome.Response!;
    }
}
