using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Thermo;
using UnitsNet;
using RuleStageResult = DischargeGuard.Rules.Evaluation.StageResult;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>What a stage's answer carries only when asked: the envelope per limit (full answer) and the curve (<c>?curve=true</c>).</summary>
internal static class StageExtras
{
    /// <summary>
    /// For each violation-level upper temperature limit that applied, the highest discharge pressure before it is reached
    /// (the R-RATIO report), with the stage's own envelope calculator (calibration, internal ratio and oil balance
    /// included); the governing limit's solve is the rule engine's, not repeated.
    /// </summary>
    public static IReadOnlyList<LimitEnvelope> ByLimit(StageFacts facts, RuleStageResult ruled, IEnvelopeCalculator envelope)
    {
        var list = new List<LimitEnvelope>();
        foreach (var f in ruled.Findings)
        {
            if (f.RuleSeverity != Severity.Violation || f.Direction != LimitDirection.Upper || f.Limit is not { Temperature: not null } limit
                || f.Quantity is not (CheckedQuantity.Isentropic or CheckedQuantity.IsentropicInternal or CheckedQuantity.Estimated or CheckedQuantity.EstimatedUpperBound))
            {
                continue;
            }

            var p = ruled.Envelope is { } e && e.RuleId == f.RuleId && e.Quantity == f.Quantity
                ? e.MaxDischargePressure
                : envelope.Compute(facts, f.Quantity, limit).MaxDischargePressure;
            list.Add(new LimitEnvelope(f, p.Status == EnvelopeBoundStatus.Found ? p.Value : null, p.Status));
        }

        return list;
    }

    /// <summary>The discharge temperature against discharge pressure, from just above the suction pressure to 1.2 times the larger of the stage's and its envelope's discharge pressure.</summary>
    public static IReadOnlyList<CurvePoint> Curve(TrainStageResult s, StageEfficiency efficiency, RuleStageResult ruled, RealGasStage? realGas)
    {
        var p1 = s.Stage.SuctionPressure.Pascals;
        var pEnd = s.Stage.DischargePressure.Pascals;
        if (ruled.Envelope?.MaxDischargePressure.Value is { } pMax)
        {
            pEnd = Math.Max(pEnd, pMax.Pascals);
        }

        pEnd *= 1.2;
        var points = new List<CurvePoint>(EvaluationPipeline.CurvePoints);
        for (var k = 0; k < EvaluationPipeline.CurvePoints; k++)
        {
            var p2 = p1 * (1.001 + ((pEnd / p1) - 1.001) * k / (EvaluationPipeline.CurvePoints - 1));
            var c = new StageConditions(s.Stage.SuctionPressure, s.Stage.SuctionTemperature, Pressure.FromPascals(p2), efficiency);
            try
            {
                if (realGas?.SolveDeciding(c) is { } rg)
                {
                    points.Add(new CurvePoint(c.DischargePressure, rg.EstimatedDischargeTemperature, rg.EstimatedUpperBound, rg.IsentropicDischargeTemperature));
                    continue;
                }

                var r = StageSolver.Solve(s.Gas, c);
                points.Add(new CurvePoint(c.DischargePressure, r.EstimatedDischargeTemperature, r.EstimatedUpperBound, r.IsentropicDischargeTemperature));
            }
            catch (ThermoInputException)
            {
                // Past the gas data's range the curve simply ends.
                break;
            }
        }

        return points;
    }
}
