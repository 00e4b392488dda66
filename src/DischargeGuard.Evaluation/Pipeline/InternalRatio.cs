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
            var t2s = realGas switch
            {
                { Used: true, Method: GasModels.Gerg2008, Gerg: { } g } => RealGasStageSolver.Solve(g, c).IsentropicDischargeTemperature,
                { Used: true, PengRobinson: { } pr } => RealGasStageSolver.Solve(pr, c).IsentropicDischargeTemperature,
                _ => StageSolver.Solve(s.Gas, c).IsentropicDischargeTemperature,
            };
            return facts with { IsentropicInternal = t2s };
        }
        catch (ThermoInputException)
        {
            // Outside the data on the internal pressures: the quantity stays absent and its rules are listed as not checked.
            return facts;
        }
    }

    private static StageDto WithInternalRatio(StageDto stage, StageFacts facts, IReadOnlyList<Finding> findings, ThermoEnvelopeCalculator envelope, OutputUnitSystem u)
    {
        if (facts.IsentropicInternal is not { } t || stage.DischargeTemperature is not { } temps)
        {
            return stage;
        }

        stage = stage with { DischargeTemperature = temps with { IsentropicInternal = u.Temperature(t) } };
        if (stage.Envelope is not { } e)
        {
            return stage;
        }

        // The by-limit list: each violation limit on the internal-ratio temperature, its flange pressure found on the
        // internal pressures.
        var added = new List<LimitEnvelopeDto>();
        foreach (var f in findings.Where(f => f.Quantity == Rules.Model.CheckedQuantity.IsentropicInternal && f.RuleSeverity == Rules.Model.Severity.Violation
            && f.Direction == Rules.Model.LimitDirection.Upper && f.Limit?.Temperature is not null))
        {
            var (p, _) = envelope.Compute(facts, f.Quantity, f.Limit!.Value);
            var found = p.Status == EnvelopeBoundStatus.Found && p.Value is not null;
            added.Add(new LimitEnvelopeDto(f.RuleId, "isentropicInternal", u.Reading(f.Limit.Value),
                found ? Math.Round(p.Value!.Value.Pascals / facts.SuctionPressure.Pascals, 4) : null,
                found ? u.PressureAbsolute(p.Value!.Value) : null,
                p.Status switch
                {
                    EnvelopeBoundStatus.Found => "found",
                    EnvelopeBoundStatus.AlreadyExceeded => "already-exceeded",
                    _ => "not-reachable-in-range",
                }));
        }

        return stage with { Envelope = e with { ByLimit = e.ByLimit.Concat(added).ToArray() } };
    }
}
