using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>One bound of the train's envelope.</summary>
/// <param name="Value">The pressure at the bound (absolute), when one was found.</param>
/// <param name="Status">found, already-exceeded or not-reachable-in-range.</param>
/// <param name="Stage">The stage whose limit is reached there.</param>
/// <param name="RuleId">The rule whose limit is reached there.</param>
internal sealed record TrainBound(Pressure? Value, string Status, int? Stage, string? RuleId);

/// <summary>The train's envelope: the highest final discharge pressure and the lowest first-stage suction pressure before a governing limit anywhere in the train.</summary>
/// <param name="Split">stated or equal: how the interstage pressures were redistributed.</param>
/// <param name="MaxFinalDischarge">The highest final discharge pressure (first-stage suction held).</param>
/// <param name="MinSuction">The lowest first-stage suction pressure (final discharge held).</param>
internal sealed record TrainEnvelopeResult(string Split, TrainBound MaxFinalDischarge, TrainBound MinSuction);

/// <summary>
/// Moves the whole train: for a trial first-stage suction p_s and final discharge p_d the stage ratios are
/// r_i = R^(w_i), with w_i each stage's share of ln(overall ratio) as stated (or 1/N for equal ratios) and R solved so the
/// chain — each stage's suction the previous discharge less its cooler's pressure drop (a stage with its own suction keeps
/// its stated suction-to-previous-discharge ratio) — ends at p_d. The train is then evaluated as a whole (same model
/// policy, rules and efficiencies; suction and cooler temperatures held; measured values left out) and a bound is where
/// a violation-level limit on a predicted temperature or on the pressure ratio is first reached, found by bisection in
/// ln p to 1e-4 relative.
/// </summary>
internal static class TrainEnvelope
{
    private const double RelativeTolerance = 1e-4;
    private const double MaxOverallRatio = 1000;
    private const int MaxSteps = 60;

    /// <summary>The envelope of the base case; null when no stage has a governing limit the train's pressures move.</summary>
    public static TrainEnvelopeResult? Compute(EvaluationInput input, IReadOnlyList<StageOutcome> stages, string split, Func<EvaluationInput, EvaluationResult> evaluate)
    {
        if (!stages.Any(s => s.Governing is { } g && Movable(g.Quantity)))
        {
            return null;
        }

        var n = input.Stages.Count;
        var baseSuction = input.Stages[0].Train.SuctionPressure!.Value.Pascals;
        var baseDischarge = input.Stages[^1].Train.DischargePressure.Pascals;
        var weights = new double[n];
        var ratios = stages.Select(s => s.PressureRatio).ToArray();
        var total = ratios.Sum(r => Math.Log(r));
        for (var i = 0; i < n; i++)
        {
            weights[i] = split == "equal" || !(total > 0) ? 1.0 / n : Math.Log(ratios[i]) / total;
        }

        // Stages with their own suction keep their stated ratio of suction to the previous discharge.
        var ownLoss = new double[n];
        for (var i = 1; i < n; i++)
        {
            ownLoss[i] = input.Stages[i].Train.SuctionPressure is { } p1 && input.Stages[i].Train.Intercooler is null
                ? p1.Pascals / input.Stages[i - 1].Train.DischargePressure.Pascals
                : double.NaN;
        }

        (int Stage, string Rule)? Exceeded(double ps, double pd)
        {
            var chain = Chain(input, weights, ownLoss, ps, pd) ?? throw ContractPaths.Unprocessable("stages", "The interstage pressure drops leave no positive pressure.");
            var trial = input with { Stages = chain };
            var result = evaluate(trial);
            foreach (var s in result.Stages)
            {
                if (s.NotEvaluated is not null)
                {
                    throw ContractPaths.Unprocessable("stages", "A stage's suction turns liquid or two-phase.");
                }

                var beyond = s.Findings
                    .Where(f => f.RuleSeverity == Severity.Violation && f.Margin is { SiValue: < 0 } && Movable(f.Quantity))
                    .OrderBy(f => f.Margin!.Value.SiValue)
                    .FirstOrDefault();
                if (beyond is not null)
                {
                    return (s.Index, beyond.RuleId);
                }
            }

            return null;
        }

        var maxDischarge = Search(pd => Exceeded(baseSuction, pd), baseDischarge, up: true, baseSuction * 1.0001, baseSuction * MaxOverallRatio);
        var minSuction = Search(ps => Exceeded(ps, baseDischarge), baseSuction, up: false, baseDischarge / MaxOverallRatio, baseDischarge / 1.0001);
        return new TrainEnvelopeResult(split == "equal" ? "equal" : "stated", maxDischarge, minSuction);
    }

    /// <summary>Quantities the train's pressures move: the predicted temperatures and the pressure ratio.</summary>
    internal static bool Movable(CheckedQuantity q) =>
        q is CheckedQuantity.Isentropic or CheckedQuantity.IsentropicInternal or CheckedQuantity.Estimated or CheckedQuantity.EstimatedUpperBound or CheckedQuantity.PressureRatio;

    // up: the limit is reached as p rises (final discharge); else as p falls (suction). The bound lies between the last
    // trial inside the limits and the first beyond them.
    private static TrainBound Search(Func<double, (int Stage, string Rule)?> exceeded, double start, bool up, double lowest, double highest)
    {
        (int Stage, string Rule)? hit;
        try
        {
            hit = exceeded(start);
        }
        catch (Exception ex) when (ex is ThermoInputException or RequestProblemException)
        {
            return new TrainBound(null, "not-reachable-in-range", null, null);
        }

        double inside, beyond;
        if (hit is null)
        {
            inside = start;
            var p = start;
            while (true)
            {
                p = up ? Math.Min(highest, p * 1.5) : Math.Max(lowest, p / 1.5);
                try
                {
                    hit = exceeded(p);
                }
                catch (Exception ex) when (ex is ThermoInputException or RequestProblemException)
                {
                    return new TrainBound(null, "not-reachable-in-range", null, null);
                }

                if (hit is not null)
                {
                    beyond = p;
                    break;
                }

                inside = p;
                if (p == highest || p == lowest)
                {
                    return new TrainBound(null, "not-reachable-in-range", null, null);
                }
            }
        }
        else
        {
            beyond = start;
            var p = start;
            while (true)
            {
                p = up ? Math.Max(lowest, p / 1.5) : Math.Min(highest, p * 1.5);
                (int Stage, string Rule)? h;
                try
                {
                    h = exceeded(p);
                }
                catch (Exception ex) when (ex is ThermoInputException or RequestProblemException)
                {
                    return new TrainBound(null, "already-exceeded", hit.Value.Stage, hit.Value.Rule);
                }

                if (h is null)
                {
                    inside = p;
                    break;
                }

                beyond = p;
                hit = h;
                if (p == highest || p == lowest)
                {
                    return new TrainBound(null, "already-exceeded", hit.Value.Stage, hit.Value.Rule);
                }
            }
        }

        for (var i = 0; i < MaxSteps && Math.Abs(Math.Log(beyond / inside)) > RelativeTolerance; i++)
        {
            var mid = Math.Sqrt(inside * beyond);
            (int Stage, string Rule)? h;
            try
            {
                h = exceeded(mid);
            }
            catch (Exception ex) when (ex is ThermoInputException or RequestProblemException)
            {
                h = hit;
            }

            if (h is null)
            {
                inside = mid;
            }
            else
            {
                beyond = mid;
                hit = h;
            }
        }

        return new TrainBound(Pressure.FromPascals(inside), "found", hit!.Value.Stage, hit.Value.Rule);
    }

    // The stages at first-stage suction ps and final discharge pd, the interstage pressures redistributed; null when the
    // drops leave no positive pressure.
    private static BoundStage[]? Chain(EvaluationInput input, double[] weights, double[] ownLoss, double ps, double pd)
    {
        double Final(double lnR, BoundStage[]? into)
        {
            var p1 = ps;
            double p2 = 0;
            for (var i = 0; i < weights.Length; i++)
            {
                var b = input.Stages[i];
                if (i > 0)
                {
                    p1 = b.Train.Intercooler is { } c ? c.PressureDrop.Downstream(p2)
                        : double.IsNaN(ownLoss[i]) ? p2
                        : p2 * ownLoss[i];
                    if (!(p1 > 0))
                    {
                        return double.NaN;
                    }
                }

                p2 = p1 * Math.Exp(lnR * weights[i]);
                if (into is not null)
                {
                    var train = b.Train with { DischargePressure = Pressure.FromPascals(p2) };
                    if (b.Train.SuctionPressure is not null)
                    {
                        train = train with { SuctionPressure = Pressure.FromPascals(p1) };
                    }

                    into[i] = b with { Train = train, MeasuredDischarge = null };
                }
            }

            return p2;
        }

        double lo = 0, hi = Math.Log(MaxOverallRatio * 10);
        if (!(Final(hi, null) >= pd))
        {
            return null;
        }

        for (var i = 0; i < 200 && hi - lo > 1e-12; i++)
        {
            var mid = 0.5 * (lo + hi);
            var f = Final(mid, null);
            if (double.IsNaN(f) || f < pd)
            {
                lo = mid;
            }
            else
            {
                hi = mid;
            }
        }

        var stages = new BoundStage[weights.Length];
        return double.IsNaN(Final(hi, stages)) ? null : stages;
    }
}
