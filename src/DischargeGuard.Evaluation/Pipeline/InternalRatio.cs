using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

// The design standard's predicted temperature on the internal cylinder ratio: the flange pressures moved by the
// compressor type's valve-loss allowance, suction p1·(1 − a) inside the cylinder and discharge p2·(1 + a).
public sealed partial class EvaluationPipeline
{
    /// <summary>The stage's valve-loss allowance per valve (a fraction), or NaN when its compressor type has none.</summary>
    private static double ValveLossOf(StageInput input, EffectiveRuleSet rules) =>
        input.Equipment?.CompressorType is { } id && rules.CompressorTypes.TryGetValue(id, out var type) && type.ValveLoss is { } loss
            ? loss.PerValveFraction
            : double.NaN;

    /// <summary>Adds the η = 1 temperature on the internal ratio (with the model that decides the stage) to the facts.</summary>
    private static StageFacts WithInternalRatio(StageFacts facts, TrainStageResult s, double valveLossPerValve, RealGasStage realGas, StageConditions conditions)
    {
        if (!double.IsFinite(valveLossPerValve))
        {
            return facts;
        }

        var c = conditions with
        {
            SuctionPressure = Pressure.FromPascals(conditions.SuctionPressure.Pascals * (1 - valveLossPerValve)),
            DischargePressure = Pressure.FromPascals(conditions.DischargePressure.Pascals * (1 + valveLossPerValve)),
            Efficiency = StageEfficiency.Isentropic(1),
            MassFlow = null,
        };
        try
        {
            var t2s = realGas is { Used: true, Mixture: { } mixture }
                ? RealGasStageSolver.Solve(mixture, c).IsentropicDischargeTemperature
                : StageSolver.Solve(s.Gas, c).IsentropicDischargeTemperature;
            return facts with { IsentropicInternal = t2s };
        }
        catch (ThermoInputException)
        {
            // Outside the data on the internal pressures: the quantity stays absent and its rules are listed as not checked.
            return facts;
        }
    }

    private static StageDto WithInternalRatio(StageDto stage, StageFacts facts, OutputUnitSystem u) =>
        facts.IsentropicInternal is { } t && stage.DischargeTemperature is { } temps
            ? stage with { DischargeTemperature = temps with { IsentropicInternal = u.Temperature(t) } }
            : stage;
}
