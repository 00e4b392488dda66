using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>How an envelope question was answered.</summary>
public enum EnvelopeStatus
{
    /// <summary>A value was found.</summary>
    Found,

    /// <summary>The limit is exceeded even at the most favourable end of the variable's range (no value exists).</summary>
    AlreadyExceeded,

    /// <summary>The limit cannot be reached inside the gas data's temperature range.</summary>
    NotReachableInRange,

    /// <summary>The chosen temperature does not depend on this variable (e.g. the isentropic temperature on efficiency).</summary>
    NotApplicable,
}

/// <summary>The answer to one envelope question.</summary>
/// <typeparam name="T">The variable's type.</typeparam>
/// <param name="Status">Whether a value exists.</param>
/// <param name="Value">The value when <see cref="Status"/> is <see cref="EnvelopeStatus.Found"/>.</param>
/// <param name="Note">A plain sentence explaining the status.</param>
public readonly record struct EnvelopeResult<T>(EnvelopeStatus Status, T? Value, string Note)
    where T : struct;

/// <summary>
/// Inverse problems of one stage, solved rather than scanned: the highest discharge pressure, the highest suction
/// temperature and the lowest efficiency at which a chosen discharge temperature reaches a limit, the stage's other inputs
/// (and, in a train, the other stages) held fixed. Pressure: closed form through one or two property inversions.
/// Suction temperature: an entropy inversion (isentropic) or a bracketed secant–bisection (Illinois) search on the stage
/// solve, tolerance 1e-9 K, 200 iterations at most.
/// </summary>
public static class EnvelopeSolver
{
    private const string FoundNote = "Solved for the point where the temperature reaches the limit.";
    private const string SuctionAtLimitNote = "The suction temperature is already at or above the limit, so any compression exceeds it.";
    private const string LimitAboveDataNote = "The limit lies above the gas data's temperature range, so it is not reached inside the range.";
    private const string ColdestExceedsNote = "Even at the lowest suction temperature the gas data cover, the temperature exceeds the limit.";
    private const string IdealExceedsNote = "Even an ideal (η = 1) stage exceeds the limit at this pressure ratio.";
    private const string IsentropicIndependentNote = "The isentropic temperature does not depend on the efficiency.";

    /// <summary>The highest absolute discharge pressure at which <paramref name="quantity"/> reaches <paramref name="limit"/>.</summary>
    /// <remarks>The discharge pressure of <paramref name="conditions"/> is ignored.</remarks>
    public static EnvelopeResult<Pressure> MaxDischargePressure(GasMixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var t1 = conditions.SuctionTemperature.Kelvins;
        var tLim = limit.Kelvins;
        var p1 = conditions.SuctionPressure.Pascals;
        StageSolver.Validate(gas, p1, p1 * 2, t1, conditions.Efficiency);
        if (tLim <= t1)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, SuctionAtLimitNote);
        }

        if (tLim > gas.MaximumKelvin)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, LimitAboveDataNote);
        }

        var lnR = LogRatioAtLimit(gas, t1, tLim, quantity, conditions.Efficiency);
        return double.IsFinite(lnR)
            ? new(EnvelopeStatus.Found, Pressure.FromPascals(p1 * Math.Exp(lnR)), FoundNote)
            : new(EnvelopeStatus.NotReachableInRange, null, LimitAboveDataNote);
    }

    /// <summary>The highest suction temperature at which <paramref name="quantity"/> reaches <paramref name="limit"/>.</summary>
    /// <remarks>The suction temperature of <paramref name="conditions"/> is ignored.</remarks>
    public static EnvelopeResult<Temperature> MaxSuctionTemperature(GasMixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var p1 = conditions.SuctionPressure.Pascals;
        var p2 = conditions.DischargePressure.Pascals;
        var tLim = limit.Kelvins;
        StageSolver.Validate(gas, p1, p2, gas.MinimumKelvin, conditions.Efficiency);
        var ratio = p2 / p1;
        var tMin = gas.MinimumKelvin;
        if (tLim > gas.MaximumKelvin)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, LimitAboveDataNote);
        }

        if (tLim <= tMin)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, ColdestExceedsNote);
        }

        if (quantity == TemperatureQuantity.Isentropic)
        {
            var target = gas.EntropyOverR(tLim) - Math.Log(ratio);
            if (target < gas.EntropyOverR(tMin))
            {
                return new(EnvelopeStatus.AlreadyExceeded, null, ColdestExceedsNote);
            }

            return CompressionPath.TrySolveTemperatureForEntropy(gas, target, tLim / Math.Pow(ratio, 0.25), CompressionPath.DefaultToleranceKelvin, CompressionPath.DefaultMaxIterations, out var t1s)
                ? new(EnvelopeStatus.Found, Temperature.FromKelvins(t1s), FoundNote)
                : new(EnvelopeStatus.NotReachableInRange, null, LimitAboveDataNote);
        }

        var efficiency = conditions.Efficiency;
        double G(double t1) => StageTemperature(gas, t1, ratio, quantity, efficiency) - tLim;

        var gLow = G(tMin);
        if (double.IsNaN(gLow) || gLow >= 0)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, ColdestExceedsNote);
        }

        // Upper end: the limit itself as suction temperature always overshoots (r > 1); NaN means the discharge left the data.
        var hi = tLim;
        var gHigh = G(hi);
        while (double.IsNaN(gHigh))
        {
            hi = 0.5 * (hi + tMin);
            gHigh = G(hi);
        }

        if (gHigh < 0)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, LimitAboveDataNote);
        }

        return TryIllinois(G, tMin, gLow, hi, gHigh, 1e-9, 200, out var root)
            ? new(EnvelopeStatus.Found, Temperature.FromKelvins(root), FoundNote)
            : new(EnvelopeStatus.NotReachableInRange, null, LimitAboveDataNote);
    }

    /// <summary>
    /// The lowest (nominal) efficiency, of the kind the stage uses, at which <paramref name="quantity"/> stays at
    /// <paramref name="limit"/>; for <see cref="TemperatureQuantity.EstimatedUpperBound"/> it includes the uncertainty.
    /// </summary>
    public static EnvelopeResult<double> MinimumEfficiency(GasMixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var t1 = conditions.SuctionTemperature.Kelvins;
        var p1 = conditions.SuctionPressure.Pascals;
        var p2 = conditions.DischargePressure.Pascals;
        StageSolver.Validate(gas, p1, p2, t1, conditions.Efficiency);
        var tLim = limit.Kelvins;
        if (quantity == TemperatureQuantity.Isentropic)
        {
            return new(EnvelopeStatus.NotApplicable, null, IsentropicIndependentNote);
        }

        if (tLim <= t1)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, SuctionAtLimitNote);
        }

        if (tLim > gas.MaximumKelvin)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, LimitAboveDataNote);
        }

        var lnR = Math.Log(p2 / p1);
        var s1 = gas.EntropyOverR(t1);
        double eta;
        if (conditions.Efficiency.Kind == EfficiencyKind.Isentropic)
        {
            if (!CompressionPath.TrySolveIsentropicTemperature(gas, t1, p2 / p1, CompressionPath.DefaultToleranceKelvin, CompressionPath.DefaultMaxIterations, out var t2s))
            {
                return new(EnvelopeStatus.AlreadyExceeded, null, IdealExceedsNote);
            }

            var h1 = gas.EnthalpyOverR(t1);
            eta = (gas.EnthalpyOverR(t2s) - h1) / (gas.EnthalpyOverR(tLim) - h1);
        }
        else
        {
            eta = lnR / (gas.EntropyOverR(tLim) - s1);
        }

        if (quantity == TemperatureQuantity.EstimatedUpperBound)
        {
            eta += conditions.Efficiency.Uncertainty;
        }

        return eta > 1
            ? new(EnvelopeStatus.AlreadyExceeded, null, IdealExceedsNote)
            : new(EnvelopeStatus.Found, eta, FoundNote);
    }

    // ln(P2/P1) at which the chosen temperature equals tLim; NaN if no such ratio inside the data.
    private static double LogRatioAtLimit(GasMixture gas, double t1, double tLim, TemperatureQuantity quantity, StageEfficiency efficiency)
    {
        var s1 = gas.EntropyOverR(t1);
        var sLim = gas.EntropyOverR(tLim);
        if (quantity == TemperatureQuantity.Isentropic)
        {
            return sLim - s1;
        }

        var eta = quantity == TemperatureQuantity.EstimatedUpperBound ? efficiency.Low : efficiency.Value;
        if (efficiency.Kind == EfficiencyKind.Polytropic)
        {
            return eta * (sLim - s1);
        }

        var h1 = gas.EnthalpyOverR(t1);
        var h2s = h1 + (eta * (gas.EnthalpyOverR(tLim) - h1));
        return CompressionPath.TrySolveTemperatureForEnthalpy(gas, h2s, t1, t1 + (eta * (tLim - t1)), CompressionPath.DefaultToleranceKelvin, CompressionPath.DefaultMaxIterations, out var t2s)
            ? gas.EntropyOverR(t2s) - s1
            : double.NaN;
    }

    private static double StageTemperature(GasMixture gas, double t1, double ratio, TemperatureQuantity quantity, StageEfficiency efficiency)
    {
        if (!StageSolver.TrySolveCore(gas, t1, ratio, efficiency, out var n))
        {
            return double.NaN;
        }

        return quantity switch
        {
            TemperatureQuantity.Isentropic => n.T2s,
            TemperatureQuantity.Estimated => n.T2,
            _ => n.T2High,
        };
    }

    // Regula falsi with the Illinois modification: superlinear, never leaves the bracket.
    private static bool TryIllinois(Func<double, double> f, double a, double fa, double b, double fb, double tolerance, int maxIterations, out double root)
    {
        var side = 0;
        for (var i = 0; i < maxIterations; i++)
        {
            var c = ((a * fb) - (b * fa)) / (fb - fa);
            if (!(c > a && c < b))
            {
                c = 0.5 * (a + b);
            }

            var fc = f(c);
            if (double.IsNaN(fc))
            {
                root = double.NaN;
                return false;
            }

            if (Math.Abs(b - a) < tolerance || Math.Abs(fc) < tolerance)
            {
                root = c;
                return true;
            }

            if (fc * fb > 0)
            {
                b = c;
                fb = fc;
                if (side == -1)
                {
                    fa /= 2;
                }

                side = -1;
            }
            else
            {
                a = c;
                fa = fc;
                if (side == 1)
                {
                    fb /= 2;
                }

                side = 1;
            }
        }

        root = 0.5 * (a + b);
        return Math.Abs(b - a) < 1e3 * tolerance;
    }
}
