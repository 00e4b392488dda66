using DischargeGuard.Thermo.Core;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// The envelope questions of <see cref="EnvelopeSolver"/> for a real-gas model (Peng-Robinson or GERG-2008): the highest discharge pressure
/// and the highest suction temperature at which a chosen discharge temperature reaches a limit. The real-gas stage has no
/// closed-form inverse, so each is an Illinois (regula falsi) search on the stage solve (in ln P for pressure, in T for
/// suction temperature), bracketed first around the ideal-gas answer when the real gas is near it, and stopped at 1e-9 K
/// or 1e-7 relative width: typically under ten stage solves of 2–5 µs.
/// </summary>
public static class RealGasEnvelopeSolver
{
    private const int MaxHalvings = 60;
    private const double RelativeWidth = 1e-7;

    // The secant's stop: 1e-7 K in the stage temperature, well inside what the bracketed search's 1e-7 relative width in
    // ln P leaves (≈ 1e-4 K); a handful of steps, or the bracketed search takes over.
    private const double SecantToleranceKelvin = 1e-7;
    private const int SecantSteps = 6;

    private const string FoundNote = "Solved (a bracketed search on the real-gas stage) for the point where the temperature reaches the limit.";
    private const string ExceededNote = "The temperature already exceeds the limit at the lowest pressure ratio searched.";
    private const string NotReachedNote = "The limit is not reached below the real-gas model's pressure ceiling or before the gas leaves the vapour region.";
    private const string SuctionAtLimitNote = "The suction temperature is already at or above the limit, so any compression exceeds it.";
    private const string ColdestExceedsNote = "Even at the lowest suction temperature the gas data cover (in the vapour region), the temperature exceeds the limit.";

    /// <summary>The highest absolute discharge pressure at which <paramref name="quantity"/> reaches <paramref name="limit"/>.</summary>
    public static EnvelopeResult<Pressure> MaxDischargePressure(RealGasMixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit) =>
        MaxDischargePressureCore(gas, conditions, quantity, limit);

    /// <summary>As <see cref="MaxDischargePressure(RealGasMixture, in StageConditions, TemperatureQuantity, Temperature)"/>, with GERG-2008.</summary>
    public static EnvelopeResult<Pressure> MaxDischargePressure(Gerg2008Mixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit) =>
        MaxDischargePressureCore(gas, conditions, quantity, limit);

    /// <summary>The highest suction temperature at which <paramref name="quantity"/> reaches <paramref name="limit"/>.</summary>
    public static EnvelopeResult<Temperature> MaxSuctionTemperature(RealGasMixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit) =>
        MaxSuctionTemperatureCore(gas, conditions, quantity, limit);

    /// <summary>As <see cref="MaxSuctionTemperature(RealGasMixture, in StageConditions, TemperatureQuantity, Temperature)"/>, with GERG-2008.</summary>
    public static EnvelopeResult<Temperature> MaxSuctionTemperature(Gerg2008Mixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit) =>
        MaxSuctionTemperatureCore(gas, conditions, quantity, limit);

    // fastPath false runs the bracketed search alone (tests compare the two).
    internal static EnvelopeResult<Pressure> MaxDischargePressureCore(IRealGasModel gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit, bool fastPath = true)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var p1 = conditions.SuctionPressure.Pascals;
        var tLim = limit.Kelvins;
        if (conditions.SuctionTemperature.Kelvins >= tLim)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, SuctionAtLimitNote);
        }

        var c = conditions;
        double? At(double p2) => TemperatureAt(gas, c with { DischargePressure = Pressure.FromPascals(p2) }, quantity);
        var lo = p1 * 1.0001;

        // Bracket near the ideal-gas answer first (the real gas moves it by a few per cent at most where a stage is
        // near-ideal), so the search needs a handful of stage solves instead of sixty. The stage temperature rises with
        // the discharge pressure, so a bracket there also settles that the lowest ratio is below the limit.
        var idealBound = EnvelopeSolver.MaxDischargePressure(gas.IdealGas, conditions, quantity, limit);
        if (fastPath && idealBound.Status == EnvelopeStatus.Found && idealBound.Value is { } start
            && start.Pascals * 1.05 <= gas.MaximumPressurePascals && start.Pascals * 0.95 > lo
            && At(start.Pascals) is { } tStart)
        {
            // Fast path: secant in ln P from the ideal-gas answer, its first step along the ideal gas's slope, inside the
            // same ±5 % window; where it gives up the bracketed search below runs as before.
            var x0 = Math.Log(start.Pascals);
            var slope = IdealSlopePerLogPressure(gas.IdealGas, conditions, quantity, start.Pascals);
            if (slope > 0
                && SecantRoot.TryFind(x => At(Math.Exp(x)) - tLim, x0, tStart - tLim, x0 - ((tStart - tLim) / slope), Math.Log(start.Pascals * 0.95), Math.Log(start.Pascals * 1.05), SecantToleranceKelvin, SecantSteps, out var root))
            {
                return new(EnvelopeStatus.Found, Pressure.FromPascals(Math.Exp(root)), FoundNote);
            }
        }

        if (idealBound.Status == EnvelopeStatus.Found && idealBound.Value is { } guess
            && guess.Pascals * 1.05 <= gas.MaximumPressurePascals && guess.Pascals * 0.95 > lo
            && At(guess.Pascals * 0.95) is { } tBelow && tBelow < tLim
            && At(guess.Pascals * 1.05) is { } tAbove && tAbove >= tLim)
        {
            // The values at the bracket's ends are handed on, not solved again.
            var bracketed = Solve(x => At(Math.Exp(x)) - tLim, Math.Log(guess.Pascals * 0.95), Math.Log(guess.Pascals * 1.05), tBelow - tLim, tAbove - tLim);
            return new(EnvelopeStatus.Found, Pressure.FromPascals(Math.Exp(bracketed)), FoundNote);
        }

        if (At(lo) is not { } tLo)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, NotReachedNote);
        }

        if (tLo >= tLim)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, ExceededNote);
        }

        // The highest pressure the model answers at (its ceiling, or below it where the state leaves the vapour region).
        var hi = gas.MaximumPressurePascals;
        var tHi = At(hi);
        for (var k = 0; tHi is null && k < 40 && hi > lo * 1.01; k++)
        {
            hi = Math.Sqrt(hi * lo);
            tHi = At(hi);
        }

        if (tHi is not { } th || th < tLim)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, NotReachedNote);
        }

        var p = Solve(x => At(Math.Exp(x)) - tLim, Math.Log(lo), Math.Log(hi), tLo - tLim, th - tLim);
        return new(EnvelopeStatus.Found, Pressure.FromPascals(Math.Exp(p)), FoundNote);
    }

    private static EnvelopeResult<Temperature> MaxSuctionTemperatureCore(IRealGasModel gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var tLim = limit.Kelvins;
        var c = conditions;
        double? At(double t1) => TemperatureAt(gas, c with { SuctionTemperature = Temperature.FromKelvins(t1) }, quantity);

        // Above: the limit itself (a discharge temperature is above its suction temperature); below: the coldest vapour suction.
        var hi = Math.Min(tLim, gas.MaximumKelvin);
        var lo = Math.Max(gas.MinimumKelvin, 1.0);
        if (conditions.SuctionTemperature.Kelvins >= tLim)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, SuctionAtLimitNote);
        }

        var tLo = At(lo);
        for (var k = 0; tLo is null && k < 60 && lo < hi - 0.5; k++)
        {
            lo += 0.1 * (hi - lo);
            tLo = At(lo);
        }

        if (tLo is null)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, NotReachedNote);
        }

        if (tLo >= tLim)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, ColdestExceedsNote);
        }

        var idealT1 = EnvelopeSolver.MaxSuctionTemperature(gas.IdealGas, conditions, quantity, limit);
        double? fLo = tLo - tLim;
        double? fHi = null;
        if (idealT1.Status == EnvelopeStatus.Found && idealT1.Value is { } g
            && g.Kelvins - 5 > lo && g.Kelvins + 5 < hi
            && At(g.Kelvins - 5) is { } below && below < tLim && At(g.Kelvins + 5) is { } above && above >= tLim)
        {
            lo = g.Kelvins - 5;
            hi = g.Kelvins + 5;
            fLo = below - tLim;
            fHi = above - tLim;
        }

        var t1 = Solve(x => At(x) - tLim, lo, hi, fLo, fHi ?? At(hi) - tLim);
        return new(EnvelopeStatus.Found, Temperature.FromKelvins(t1), FoundNote);
    }

    // Illinois (regula falsi with halving of the stale end's value) on f with f(lo) < 0 ≤ f(hi); a point where the model
    // gives no answer counts as above the limit (it lies beyond the vapour region). Stops at 1e-7 relative width or 1e-9 K.
    // The values at the ends are the caller's (it has solved them already).
    private static double Solve(Func<double, double?> f, double lo, double hi, double? valueAtLo, double? valueAtHi)
    {
        var fLo = valueAtLo ?? -1;
        var fHi = valueAtHi ?? 1;
        var side = 0;
        for (var i = 0; i < MaxHalvings; i++)
        {
            var x = fHi - fLo > 0 ? hi - (fHi * (hi - lo) / (fHi - fLo)) : 0.5 * (lo + hi);
            if (!(x > lo && x < hi))
            {
                x = 0.5 * (lo + hi);
            }

            var fx = f(x);
            if (fx is { } v && Math.Abs(v) <= 1e-9)
            {
                return x;
            }

            if (fx is { } below && below < 0)
            {
                lo = x;
                fLo = below;
                if (side == -1)
                {
                    fHi *= 0.5;
                }

                side = -1;
            }
            else
            {
                hi = x;
                fHi = fx ?? Math.Max(fHi, 1e-6);
                if (side == 1)
                {
                    fLo *= 0.5;
                }

                side = 1;
            }

            if (hi - lo <= RelativeWidth * Math.Abs(hi))
            {
                break;
            }
        }

        return 0.5 * (lo + hi);
    }

    // d(T)/d(ln P2) of the ideal-gas stage at p2 (a forward difference over 0.1 %), K; NaN where it has no answer.
    private static double IdealSlopePerLogPressure(GasMixture ideal, in StageConditions conditions, TemperatureQuantity quantity, double p2Pascals)
    {
        var p1 = conditions.SuctionPressure.Pascals;
        var t1 = conditions.SuctionTemperature.Kelvins;
        if (!StageSolver.TrySolveCore(ideal, t1, p2Pascals / p1, conditions.Efficiency, out var a)
            || !StageSolver.TrySolveCore(ideal, t1, p2Pascals * 1.001 / p1, conditions.Efficiency, out var b))
        {
            return double.NaN;
        }

        return (Pick(b, quantity) - Pick(a, quantity)) / Math.Log(1.001);
    }

    private static double Pick(in StageSolver.StageNumbers n, TemperatureQuantity quantity) => quantity switch
    {
        TemperatureQuantity.Isentropic => n.T2s,
        TemperatureQuantity.Estimated => n.T2,
        _ => n.T2High,
    };

    // The stage's temperature, or null where the model gives none (liquid or two-phase, outside its range).
    private static double? TemperatureAt(IRealGasModel gas, in StageConditions conditions, TemperatureQuantity quantity)
    {
        try
        {
            return RealGasStageSolver.TrySolveCore(gas, conditions, CompressionPath.DefaultToleranceKelvin, CompressionPath.DefaultMaxIterations, out var r)
                ? r.TemperatureOf(quantity).Kelvins
                : null;
        }
        catch (ArgumentOutOfRangeException)
        {
            return null;
        }
    }
}
