using System.Globalization;
using DischargeGuard.Thermo.Core;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// The suction-temperature envelope of a humid stage with its relative humidity held fixed: a warmer suction carries
/// more water (y_w = RH·p_sat(T1)/P1), as air drawn in on a hotter day does. Holding the water mole fraction fixed
/// instead would supersaturate the gas at a colder suction and cap the search there.
/// </summary>
public static class HumidEnvelopeSolver
{
    private const int MaxIterations = 200;

    // The secant's stop: 1e-7 K in the discharge temperature (the bracketed search stops at a 1e-7 K wide bracket).
    private const double SecantToleranceKelvin = 1e-7;
    private const int SecantSteps = 8;

    /// <summary>
    /// The highest suction temperature at which <paramref name="quantity"/> reaches <paramref name="limit"/>, the
    /// relative humidity of <paramref name="gas"/> at the stage's suction held fixed.
    /// </summary>
    /// <param name="gas">The stage's humid gas at its suction.</param>
    /// <param name="conditions">The stage (its suction temperature sets the humidity held).</param>
    /// <param name="quantity">Which discharge temperature reaches the limit.</param>
    /// <param name="limit">The limit.</param>
    /// <param name="realGas">True to solve each trial with Peng-Robinson, false for the ideal gas.</param>
    /// <returns>The suction temperature, or why there is none.</returns>
    public static EnvelopeResult<Temperature> MaxSuctionTemperature(GasMixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit, bool realGas) =>
        MaxSuctionTemperature(gas, conditions, quantity, limit, realGas, fastPath: true);

    /// <summary>As the public overload; <paramref name="fastPath"/> false runs the bracketed search alone (tests compare the two).</summary>
    internal static EnvelopeResult<Temperature> MaxSuctionTemperature(GasMixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit, bool realGas, bool fastPath)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var rh = HumidGas.RelativeHumidity(gas, conditions.SuctionTemperature, conditions.SuctionPressure);
        var dry = HumidGas.Dry(gas);
        var c = conditions;
        var tLim = limit.Kelvins;
        double? At(double t1)
        {
            try
            {
                var trial = HumidGas.FromRelativeHumidity(dry, rh, Temperature.FromKelvins(t1), c.SuctionPressure);
                var sc = c with { SuctionTemperature = Temperature.FromKelvins(t1) };
                if (realGas)
                {
                    // Each trial is a new composition: built on the species list's cached constants, not cached itself.
                    var r = RealGasStageSolver.Solve(RealGasMixture.ForComposition(trial), sc);
                    return Pick(quantity, r.IsentropicDischargeTemperature, r.EstimatedDischargeTemperature, r.EstimatedUpperBound);
                }

                var i = StageSolver.Solve(trial, sc);
                return Pick(quantity, i.IsentropicDischargeTemperature, i.EstimatedDischargeTemperature, i.EstimatedUpperBound);
            }
            catch (ThermoInputException)
            {
                return null;
            }
        }

        if (conditions.SuctionTemperature.Kelvins >= tLim)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, "The suction temperature is already at or above the limit.");
        }

        var lo = Math.Max(WaterSaturation.MinimumKelvin, dry.MinimumKelvin);
        var hi = Math.Min(tLim, Math.Min(dry.MaximumKelvin, WaterSaturation.CriticalKelvin));

        // Fast path: secant from the stage's own suction temperature, its first step taking the discharge temperature as
        // proportional to the suction temperature (as it nearly is at a fixed ratio). The discharge temperature rises
        // with the suction temperature, so a root inside [lo, hi] is the one the bracketed search below would find;
        // where the secant gives up, that search runs as before.
        double? At2(double t1) => At(t1) - tLim;
        var t0 = conditions.SuctionTemperature.Kelvins;
        if (fastPath && t0 >= lo && t0 <= hi && At(t0) is { } tAtStart && tAtStart > 0
            && SecantRoot.TryFind(At2, t0, tAtStart - tLim, t0 * tLim / tAtStart, lo, hi, SecantToleranceKelvin, SecantSteps, out var root))
        {
            return new(EnvelopeStatus.Found, Temperature.FromKelvins(root), HeldNote(rh));
        }

        var fLo = At(lo) - tLim;
        for (var k = 0; fLo is null && k < 60 && lo < hi - 0.5; k++)
        {
            lo += 0.1 * (hi - lo);
            fLo = At(lo) - tLim;
        }

        if (fLo is not { } fl)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, "No suction temperature in the data's range gives a gas-phase answer at this humidity.");
        }

        if (fl >= 0)
        {
            return new(EnvelopeStatus.AlreadyExceeded, null, string.Create(CultureInfo.InvariantCulture,
                $"Already exceeded even at the lowest suction temperature ({lo - 273.15:0.#} °C) at this relative humidity ({rh:0.###})."));
        }

        // Illinois (regula falsi halving the stale end's value): f(lo) < 0; a trial above the limit or without an answer
        // (steam, liquid) is "high", and without a value there the next step bisects.
        var fHi = At(hi) - tLim;
        if (fHi is { } fh0 && fh0 < 0)
        {
            return new(EnvelopeStatus.NotReachableInRange, null, "The limit is not reached below the limit itself at this humidity.");
        }

        var side = 0;
        for (var i = 0; i < MaxIterations && hi - lo > 1e-7; i++)
        {
            var x = fHi is { } fh && fh - fl > 0 ? hi - (fh * (hi - lo) / (fh - fl)) : 0.5 * (lo + hi);
            if (!(x > lo && x < hi))
            {
                x = 0.5 * (lo + hi);
            }

            var fx = At(x) - tLim;
            if (fx is { } v && v < 0)
            {
                lo = x;
                fl = v;
                if (side == -1 && fHi is { } stale)
                {
                    fHi = stale / 2;
                }

                side = -1;
            }
            else
            {
                hi = x;
                fHi = fx;
                if (side == 1)
                {
                    fl /= 2;
                }

                side = 1;
            }

            if (fx is { } exact && Math.Abs(exact) <= 1e-9)
            {
                return new(EnvelopeStatus.Found, Temperature.FromKelvins(x), HeldNote(rh));
            }
        }

        return new(EnvelopeStatus.Found, Temperature.FromKelvins(0.5 * (lo + hi)), HeldNote(rh));
    }

    private static string HeldNote(double rh) => string.Create(CultureInfo.InvariantCulture, $"Relative humidity held at {rh:0.###} as the suction temperature moves.");

    private static double Pick(TemperatureQuantity quantity, Temperature isentropic, Temperature estimated, Temperature upper) => quantity switch
    {
        TemperatureQuantity.Isentropic => isentropic.Kelvins,
        TemperatureQuantity.Estimated => estimated.Kelvins,
        _ => upper.Kelvins,
    };
}
