using System.Globalization;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// Recycle from the final discharge to the first stage's suction. The fresh gas and the recycled gas mix adiabatically at
/// the suction pressure: (1 − x)·h(T_fresh) + x·h(T_recycled) = h(T_mix), with the ideal-gas enthalpy h(T) of the feed's
/// composition (cp(T) from the NASA polynomials). The recycle valve is taken as isenthalpic with the ideal gas (no
/// Joule-Thomson cooling; for a real gas the throttled recycle arrives cooler, so this errs hot). Uncooled, the recycled
/// gas leaves at the train's final estimated discharge temperature, which itself rises with the mixed suction: the steady
/// state T_mix is solved by bisection, and where none exists (x·T2/T1 ≥ 1 for a constant cp) the suction would heat
/// without bound.
/// </summary>
internal static class Recycle
{
    private const double ToleranceKelvin = 1e-6;
    private const int MaxIterations = 200;

    /// <summary>The input with the first stage's suction at the mixed temperature and the train's flow raised by 1/(1 − x); and a note saying so.</summary>
    /// <param name="input">The scenario's bound input.</param>
    /// <param name="fraction">x, the recycled share of the first stage's suction mass flow, in [0, 1).</param>
    /// <param name="cooledTo">Recycled gas temperature after its cooler; null: uncooled.</param>
    /// <param name="path">The request path of the recycle, for errors.</param>
    public static (EvaluationInput Input, string Note) Apply(EvaluationInput input, double fraction, Temperature? cooledTo, string path)
    {
        var first = input.Stages[0];
        var freshKelvin = first.Train.SuctionTemperature!.Value.Kelvins;
        var gas = input.Feed;
        double mixedKelvin;
        if (cooledTo is { } t)
        {
            mixedKelvin = MixKelvin(gas, fraction, freshKelvin, t.Kelvins, path);
        }
        else
        {
            var trains = input.Stages.Select(s => s.Train).ToArray();
            double G(double tMix)
            {
                trains[0] = first.Train with { SuctionTemperature = Temperature.FromKelvins(tMix) };
                var solved = TrainSolver.Solve(input.Feed, trains, null);
                return MixKelvin(gas, fraction, freshKelvin, solved[^1].Stage.EstimatedDischargeTemperature.Kelvins, path) - tMix;
            }

            mixedKelvin = SteadyState(G, freshKelvin, gas.MaximumKelvin, fraction, path);
        }

        var stages = input.Stages.ToArray();
        stages[0] = first with { Train = first.Train with { SuctionTemperature = Temperature.FromKelvins(mixedKelvin) } };
        var flow = input.Flow is { } f ? MassFlow.FromKilogramsPerSecond(f.KilogramsPerSecond / (1 - fraction)) : (MassFlow?)null;
        var note = string.Create(CultureInfo.InvariantCulture,
            $"Recycle {fraction * 100:0.##} % of the first stage's suction flow, {(cooledTo is { } c ? $"cooled to {c.Kelvins:0.##} K" : "uncooled (at the final discharge temperature, solved for the steady state)")}: first-stage suction {freshKelvin:0.##} K → {mixedKelvin:0.##} K (enthalpies mixed at the suction pressure, ideal gas, no Joule-Thomson cooling through the recycle valve){(input.Flow is null ? "" : "; mass flow through the train raised by 1/(1 − x)")}.");
        return (input with { Stages = stages, Flow = flow }, note);
    }

    /// <summary>T_mix from (1 − x)·h(T_fresh) + x·h(T_recycled) = h(T_mix), Newton on h with cp(T); K.</summary>
    internal static double MixKelvin(GasMixture gas, double fraction, double freshKelvin, double recycledKelvin, string path)
    {
        if (!(recycledKelvin >= gas.MinimumKelvin && recycledKelvin <= gas.MaximumKelvin))
        {
            throw ContractPaths.Unprocessable(path + ".fraction", string.Create(CultureInfo.InvariantCulture,
                $"The recycled gas at {recycledKelvin:0.#} K is outside the gas data's range ({gas.MinimumKelvin:0}–{gas.MaximumKelvin:0} K)."));
        }

        var target = ((1 - fraction) * H(gas, freshKelvin)) + (fraction * H(gas, recycledKelvin));
        var t = ((1 - fraction) * freshKelvin) + (fraction * recycledKelvin);
        for (var i = 0; i < 50; i++)
        {
            var p = gas.PropertiesAt(Temperature.FromKelvins(t));
            var step = (p.SpecificEnthalpy.JoulesPerKilogram - target) / p.SpecificCp.JoulesPerKilogramKelvin;
            t -= step;
            if (Math.Abs(step) < 1e-9)
            {
                break;
            }
        }

        return t;
    }

    private static double H(GasMixture gas, double kelvin) => gas.PropertiesAt(Temperature.FromKelvins(kelvin)).SpecificEnthalpy.JoulesPerKilogram;

    // G(T_fresh) ≥ 0 (the recycle is no cooler than the fresh gas); the steady state is the first T where G turns negative.
    private static double SteadyState(Func<double, double> g, double freshKelvin, double maxKelvin, double fraction, string path)
    {
        var lo = freshKelvin;
        var hi = freshKelvin;
        double step = 10;
        var bracketed = false;
        try
        {
            if (g(lo) <= 0)
            {
                return lo;
            }

            while (hi + step < maxKelvin)
            {
                hi += step;
                if (g(hi) < 0)
                {
                    bracketed = true;
                    break;
                }

                lo = hi;
                step *= 2;
            }
        }
        catch (ThermoInputException)
        {
            // The train left the data's range before the recycle balanced: no steady state within it.
        }

        if (!bracketed)
        {
            throw ContractPaths.Unprocessable(path + ".fraction", string.Create(CultureInfo.InvariantCulture,
                $"Uncooled recycle of {fraction * 100:0.##} % has no steady state below {maxKelvin:0} K: the returned gas heats the suction faster than the mixing dilutes it, so the temperatures run away. Cool the recycle (recycle.cooledTo) or lower the fraction."));
        }

        for (var i = 0; i < MaxIterations && hi - lo > ToleranceKelvin; i++)
        {
            var mid = 0.5 * (lo + hi);
            if (g(mid) >= 0)
            {
                lo = mid;
            }
            else
            {
                hi = mid;
            }
        }

        return 0.5 * (lo + hi);
    }
}
