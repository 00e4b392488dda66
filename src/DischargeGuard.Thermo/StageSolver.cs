using System.Globalization;
using UnitsNet;
using UnitsNet.Units;

namespace DischargeGuard.Thermo;

/// <summary>
/// Solves one compression stage of an ideal-gas mixture with temperature-dependent cp: the isentropic discharge
/// temperature, the estimated actual one from the efficiency (isentropic: h2 = h1 + (h2s − h1)/ηs; polytropic:
/// S°(T2) − S°(T1) = (R/ηp)·ln r), the uncertainty band, the constant-k estimate beside it, k, work and power.
/// Allocates nothing.
/// </summary>
public static class StageSolver
{
    /// <summary>Solves the stage.</summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// Non-positive pressures, discharge ≤ suction pressure, an efficiency outside (0, 1], a suction temperature outside the
    /// mixture's data range, or a discharge temperature that would leave it. The exception names the parameter.
    /// </exception>
    public static StageResult Solve(GasMixture gas, in StageConditions conditions)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var p1 = conditions.SuctionPressure.Pascals;
        var p2 = conditions.DischargePressure.Pascals;
        var t1 = conditions.SuctionTemperature.Kelvins;
        Validate(gas, p1, p2, t1, conditions.Efficiency);
        if (!TrySolveCore(gas, t1, p2 / p1, conditions.Efficiency, out var n))
        {
            throw CompressionPath.OutsideRange(gas, nameof(StageConditions.DischargePressure));
        }

        return new StageResult(n, p1, p2, t1, conditions.Efficiency.Kind, gas.SpecificGasConstantJoulesPerKilogramKelvin, conditions.MassFlow?.KilogramsPerSecond);
    }

    internal static void Validate(GasMixture gas, double p1Pascals, double p2Pascals, double t1Kelvin, StageEfficiency efficiency)
    {
        if (!(p1Pascals > 0) || !double.IsFinite(p1Pascals))
        {
            throw ThermoErrors.OutOfRange(nameof(StageConditions.SuctionPressure), p1Pascals, "The absolute suction pressure must be a finite number > 0 Pa.");
        }

        if (!(p2Pascals > p1Pascals) || !double.IsFinite(p2Pascals))
        {
            throw ThermoErrors.OutOfRange(
                nameof(StageConditions.DischargePressure),
                p2Pascals,
                string.Create(CultureInfo.InvariantCulture, $"The absolute discharge pressure must be greater than the suction pressure ({p1Pascals:0.###} Pa) and finite."));
        }

        if (!(efficiency.Value > 0 && efficiency.Value <= 1))
        {
            throw ThermoErrors.OutOfRange(nameof(StageConditions.Efficiency), efficiency.Value, "The efficiency must lie in (0, 1].");
        }

        gas.RequireInRange(t1Kelvin, nameof(StageConditions.SuctionTemperature));
    }

    // The stage in raw doubles (kelvin, H/R in K); shared by the solver and the envelope.
    internal static bool TrySolveCore(GasMixture gas, double t1, double ratio, StageEfficiency efficiency, out StageNumbers n)
    {
        const double tol = CompressionPath.DefaultToleranceKelvin;
        const int cap = CompressionPath.DefaultMaxIterations;
        n = default;
        var s1 = gas.EntropyOverR(t1, out var cpR1);
        var h1 = gas.EnthalpyOverR(t1);
        var lnR = Math.Log(ratio);
        var t2sK = t1 * Math.Exp(lnR / cpR1);

        // One cheap refinement of the constant-cp guess with cp at the mid temperature saves a Newton iteration.
        var t2sGuess = t1 * Math.Exp(lnR / gas.HeatCapacityOverR(0.5 * (t1 + t2sK)));
        if (!CompressionPath.TrySolveTemperatureForEntropy(gas, s1 + lnR, t2sGuess, tol, cap, out var t2s))
        {
            return false;
        }

        var h2s = gas.EnthalpyOverR(t2s);
        double t2, t2Low, t2High, etaS, etaP, t2K;
        if (efficiency.Kind == EfficiencyKind.Isentropic)
        {
            var eta = efficiency.Value;
            if (!SolveFromIsentropic(gas, t1, h1, h2s, eta, t2K: t1 + ((t2s - t1) / eta), out t2))
            {
                return false;
            }

            t2High = t2;
            t2Low = t2;
            if (efficiency.Uncertainty > 0
                && (!SolveFromIsentropic(gas, t1, h1, h2s, efficiency.Low, t1 + ((t2s - t1) / efficiency.Low), out t2High)
                    || !SolveFromIsentropic(gas, t1, h1, h2s, efficiency.High, t1 + ((t2s - t1) / efficiency.High), out t2Low)))
            {
                return false;
            }

            etaS = eta;
            var ds = gas.EntropyOverR(t2) - s1;
            etaP = ds > 0 ? lnR / ds : 1.0;
            t2K = t1 + ((t2sK - t1) / eta);
        }
        else
        {
            var eta = efficiency.Value;
            if (!CompressionPath.TrySolveTemperatureForEntropy(gas, s1 + (lnR / eta), t1 * Math.Exp(lnR / (cpR1 * eta)), tol, cap, out t2))
            {
                return false;
            }

            t2High = t2;
            t2Low = t2;
            if (efficiency.Uncertainty > 0
                && (!CompressionPath.TrySolveTemperatureForEntropy(gas, s1 + (lnR / efficiency.Low), t2, tol, cap, out t2High)
                    || !CompressionPath.TrySolveTemperatureForEntropy(gas, s1 + (lnR / efficiency.High), t2, tol, cap, out t2Low)))
            {
                return false;
            }

            etaP = eta;
            var dh = gas.EnthalpyOverR(t2) - h1;
            etaS = dh > 0 ? (h2s - h1) / dh : 1.0;
            t2K = t1 * Math.Exp(lnR / (cpR1 * eta));
        }

        var h2 = gas.EnthalpyOverR(t2, out var cpR2);
        n = new StageNumbers(
            t2s,
            t2,
            t2Low,
            t2High,
            etaS,
            etaP,
            cpR1 / (cpR1 - 1),
            cpR2 / (cpR2 - 1),
            h1,
            h2s,
            h2,
            t2sK,
            t2K);
        return true;
    }

    private static bool SolveFromIsentropic(GasMixture gas, double t1, double h1, double h2s, double eta, double t2K, out double t2)
    {
        var h2 = h1 + ((h2s - h1) / eta);

        // Refine the linear guess with cp at the mid temperature before Newton.
        var guess = t1 + ((h2 - h1) / gas.HeatCapacityOverR(0.5 * (t1 + t2K)));
        return CompressionPath.TrySolveTemperatureForEnthalpy(gas, h2, t1, guess, CompressionPath.DefaultToleranceKelvin, CompressionPath.DefaultMaxIterations, out t2);
    }

    internal readonly record struct StageNumbers(
        double T2s,
        double T2,
        double T2Low,
        double T2High,
        double IsentropicEfficiency,
        double PolytropicEfficiency,
        double KSuction,
        double KDischarge,
        double H1OverR,
        double H2sOverR,
        double H2OverR,
        double T2sConstantK,
        double T2ConstantK);
}
