using DischargeGuard.Rules.Model;
using UnitsNet;

namespace DischargeGuard.Rules.Evaluation;

/// <summary>One earlier evaluation of a stage: its measured-minus-estimated deviation and the pressures it ran at.</summary>
/// <param name="Deviation">Measured minus estimated discharge temperature.</param>
/// <param name="SuctionPressure">Suction pressure, absolute.</param>
/// <param name="DischargePressure">Discharge pressure, absolute.</param>
public sealed record DeviationSample(TemperatureDelta Deviation, Pressure SuctionPressure, Pressure DischargePressure);

/// <summary>
/// The rise of a stage's measured-minus-estimated deviation over its recent evaluations at steady pressures: the slope
/// of the least-squares line through the deviations against their order, times the span (n − 1). A rise at constant
/// pressures and cooling points at valve or ring leakage; the fit keeps one noisy reading from raising or hiding it.
/// </summary>
public static class DeviationTrend
{
    /// <summary>What <see cref="Rise"/> needs that is missing, for the not-checked list.</summary>
    public static string MissingHistory(TrendSpec spec)
    {
        ArgumentNullException.ThrowIfNull(spec);
        return string.Create(System.Globalization.CultureInfo.InvariantCulture,
            $"history: at least {TrendSpec.MinimumEvaluations - 1} earlier evaluations of this asset with a measured discharge temperature at the same pressures (within {spec.SteadyPressureFraction * 100:0.#} %)");
    }

    /// <summary>
    /// The fitted rise in kelvin through the newest <see cref="TrendSpec.Evaluations"/> steady evaluations (the current
    /// one last), or <see langword="null"/> when the current measurement or enough steady history is missing.
    /// </summary>
    /// <param name="facts">The stage now, with its history.</param>
    /// <param name="spec">The rule's window.</param>
    /// <returns>Rise, K; positive when the deviation grows.</returns>
    public static double? Rise(StageFacts facts, TrendSpec spec)
    {
        ArgumentNullException.ThrowIfNull(facts);
        ArgumentNullException.ThrowIfNull(spec);
        if (facts.MeasuredDischarge is not { } measured)
        {
            return null;
        }

        var p1 = facts.SuctionPressure.Pascals;
        var p2 = facts.DischargePressure.Pascals;
        var window = new double[spec.Evaluations];
        var n = 0;

        // Newest first from the end of the history, so the window holds the most recent steady evaluations.
        window[n++] = measured.Kelvins - facts.Estimated.Kelvins;
        for (var i = facts.DeviationHistory.Count - 1; i >= 0 && n < spec.Evaluations; i--)
        {
            var h = facts.DeviationHistory[i];
            if (Math.Abs(h.SuctionPressure.Pascals - p1) <= spec.SteadyPressureFraction * p1
                && Math.Abs(h.DischargePressure.Pascals - p2) <= spec.SteadyPressureFraction * p2)
            {
                window[n++] = h.Deviation.Kelvins;
            }
        }

        if (n < TrendSpec.MinimumEvaluations)
        {
            return null;
        }

        // x = 0 for the oldest … n − 1 for the current one; window[0] is the current one.
        double sx = 0, sy = 0, sxx = 0, sxy = 0;
        for (var j = 0; j < n; j++)
        {
            double x = n - 1 - j, y = window[j];
            sx += x;
            sy += y;
            sxx += x * x;
            sxy += x * y;
        }

        var slope = ((n * sxy) - (sx * sy)) / ((n * sxx) - (sx * sx));
        return slope * (n - 1);
    }
}
