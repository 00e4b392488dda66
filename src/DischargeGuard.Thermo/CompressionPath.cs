using System.Globalization;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// Ideal-gas compression paths with temperature-dependent cp. Each solve is a safeguarded Newton iteration (Newton steps
/// kept inside a shrinking bracket, bisection when a step leaves it) with an explicit tolerance and iteration cap.
/// The <c>TrySolve…</c> methods never throw on non-convergence; the throwing wrappers check ranges and name the parameter.
/// </summary>
public static class CompressionPath
{
    /// <summary>Default convergence tolerance on temperature, K.</summary>
    public const double DefaultToleranceKelvin = 1e-9;

    /// <summary>Default iteration cap.</summary>
    public const int DefaultMaxIterations = 60;

    /// <summary>
    /// Isentropic discharge temperature: solves S°(T2s) − S°(T1) = R·ln(P2/P1) for T2s.
    /// </summary>
    /// <param name="gas">The mixture.</param>
    /// <param name="t1Kelvin">Suction temperature, K, inside the mixture's range.</param>
    /// <param name="pressureRatio">P2/P1 (absolute pressures), &gt; 0.</param>
    /// <param name="toleranceKelvin">Stop when the step is below this, K.</param>
    /// <param name="maxIterations">Iteration cap.</param>
    /// <param name="t2sKelvin">The solution, K; NaN when the method returns false.</param>
    /// <returns>False when no solution exists inside the data range or the cap was reached.</returns>
    public static bool TrySolveIsentropicTemperature(
        GasMixture gas, double t1Kelvin, double pressureRatio, double toleranceKelvin, int maxIterations, out double t2sKelvin)
    {
        ArgumentNullException.ThrowIfNull(gas);
        return TrySolveEntropyStep(gas, t1Kelvin, Math.Log(pressureRatio), toleranceKelvin, maxIterations, out t2sKelvin);
    }

    /// <summary>Isentropic discharge temperature (see <see cref="TrySolveIsentropicTemperature"/>), range-checked.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Out-of-range suction temperature, ratio ≤ 0, or no solution inside the data range.</exception>
    public static Temperature SolveIsentropicTemperature(GasMixture gas, Temperature suctionTemperature, double pressureRatio)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var t1 = suctionTemperature.Kelvins;
        gas.RequireInRange(t1, nameof(suctionTemperature));
        if (!(pressureRatio > 0) || !double.IsFinite(pressureRatio))
        {
            throw ThermoErrors.OutOfRange(nameof(pressureRatio), pressureRatio, "The pressure ratio must be a finite number > 0.");
        }

        if (!TrySolveIsentropicTemperature(gas, t1, pressureRatio, DefaultToleranceKelvin, DefaultMaxIterations, out var t2s))
        {
            throw OutsideRange(gas, nameof(pressureRatio));
        }

        return Temperature.FromKelvins(t2s);
    }

    /// <summary>
    /// Ideal-gas polytropic path with constant polytropic efficiency ηp: S°(T2) − S°(T1) = (R/ηp)·ln(P2/P1).
    /// </summary>
    public static bool TrySolvePolytropicTemperature(
        GasMixture gas, double t1Kelvin, double pressureRatio, double polytropicEfficiency, double toleranceKelvin, int maxIterations, out double t2Kelvin)
    {
        ArgumentNullException.ThrowIfNull(gas);
        return TrySolveEntropyStep(gas, t1Kelvin, Math.Log(pressureRatio) / polytropicEfficiency, toleranceKelvin, maxIterations, out t2Kelvin);
    }

    /// <summary>
    /// Actual discharge temperature from an isentropic efficiency ηs: H(T2) = H(T1) + (H(T2s) − H(T1))/ηs.
    /// </summary>
    public static bool TrySolveActualTemperature(
        GasMixture gas, double t1Kelvin, double t2sKelvin, double isentropicEfficiency, double toleranceKelvin, int maxIterations, out double t2Kelvin)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var h1 = gas.EnthalpyOverR(t1Kelvin);
        var h2 = h1 + ((gas.EnthalpyOverR(t2sKelvin) - h1) / isentropicEfficiency);
        var guess = t1Kelvin + ((t2sKelvin - t1Kelvin) / isentropicEfficiency);
        return TrySolveTemperatureForEnthalpy(gas, h2, t1Kelvin, guess, toleranceKelvin, maxIterations, out t2Kelvin);
    }

    /// <summary>Temperature at which H/R equals <paramref name="enthalpyOverRKelvin"/>, searched above <paramref name="lowerKelvin"/>.</summary>
    /// <remarks>
    /// Newton on H with cp as the derivative, kept inside a bracket that starts as [max(lower, data minimum), data maximum].
    /// Stops when the step is below <paramref name="toleranceKelvin"/> or when the step's square over 2T is (the quadratic
    /// convergence estimate of the error left after it).
    /// </remarks>
    public static bool TrySolveTemperatureForEnthalpy(
        GasMixture gas, double enthalpyOverRKelvin, double lowerKelvin, double guessKelvin, double toleranceKelvin, int maxIterations, out double tKelvin)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var lo = Math.Max(lowerKelvin, gas.MinimumKelvin);
        var hi = gas.MaximumKelvin;
        var t = guessKelvin > lo && guessKelvin < hi ? guessKelvin : 0.5 * (lo + hi);
        var boundsChecked = false;
        for (var i = 0; i < maxIterations; i++)
        {
            var f = gas.EnthalpyOverR(t, out var cpR) - enthalpyOverRKelvin;
            var step = f / cpR;
            var next = t - step;
            if (Converged(step, t, toleranceKelvin) && next >= lo && next <= hi)
            {
                tKelvin = next;
                return true;
            }

            if (f > 0)
            {
                hi = t;
            }
            else
            {
                lo = t;
            }

            if (!(next > lo && next < hi))
            {
                if (!boundsChecked)
                {
                    // Only now pay for the end-point check: is the root inside the data at all?
                    boundsChecked = true;
                    if (gas.EnthalpyOverR(Math.Max(lowerKelvin, gas.MinimumKelvin)) > enthalpyOverRKelvin || gas.EnthalpyOverR(gas.MaximumKelvin) < enthalpyOverRKelvin)
                    {
                        break;
                    }
                }

                next = 0.5 * (lo + hi);
            }

            t = next;
        }

        tKelvin = double.NaN;
        return false;
    }

    /// <summary>Temperature at which S°/R equals <paramref name="entropyOverR"/>, inside the mixture's range.</summary>
    /// <remarks>Newton on S° with cp/T as the derivative, bracketed and stopped as <see cref="TrySolveTemperatureForEnthalpy"/>.</remarks>
    public static bool TrySolveTemperatureForEntropy(
        GasMixture gas, double entropyOverR, double guessKelvin, double toleranceKelvin, int maxIterations, out double tKelvin)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var lo = gas.MinimumKelvin;
        var hi = gas.MaximumKelvin;
        var t = guessKelvin > lo && guessKelvin < hi ? guessKelvin : 0.5 * (lo + hi);
        var boundsChecked = false;
        for (var i = 0; i < maxIterations; i++)
        {
            var f = gas.EntropyOverR(t, out var cpR) - entropyOverR;
            var step = f * t / cpR;
            var next = t - step;
            if (Converged(step, t, toleranceKelvin) && next >= lo && next <= hi)
            {
                tKelvin = next;
                return true;
            }

            if (f > 0)
            {
                hi = t;
            }
            else
            {
                lo = t;
            }

            if (!(next > lo && next < hi))
            {
                if (!boundsChecked)
                {
                    boundsChecked = true;
                    if (gas.EntropyOverR(gas.MinimumKelvin) > entropyOverR || gas.EntropyOverR(gas.MaximumKelvin) < entropyOverR)
                    {
                        break;
                    }
                }

                next = 0.5 * (lo + hi);
            }

            t = next;
        }

        tKelvin = double.NaN;
        return false;
    }

    // Newton's error after a step of size h is about h²·|f''|/(2|f'|); for S° and H of gases |f''/f'| ≤ ~1/T.
    private static bool Converged(double step, double t, double tolerance) =>
        Math.Abs(step) <= tolerance || step * step <= 2 * t * tolerance;

    // Solves S°/R(T2) − S°/R(T1) = deltaSOverR for T2 ≥ T1, starting from the constant-cp estimate.
    private static bool TrySolveEntropyStep(GasMixture gas, double t1Kelvin, double deltaSOverR, double toleranceKelvin, int maxIterations, out double t2Kelvin)
    {
        t2Kelvin = double.NaN;
        if (!gas.InRange(t1Kelvin) || !double.IsFinite(deltaSOverR) || deltaSOverR < 0)
        {
            return false;
        }

        var target = gas.EntropyOverR(t1Kelvin) + deltaSOverR;
        var guess = t1Kelvin * Math.Exp(deltaSOverR / gas.HeatCapacityOverR(t1Kelvin));
        return TrySolveTemperatureForEntropy(gas, target, guess, toleranceKelvin, maxIterations, out t2Kelvin);
    }

    internal static ThermoInputException OutsideRange(GasMixture gas, string parameterName) =>
        ThermoErrors.OutOfRange(parameterName, null, string.Create(CultureInfo.InvariantCulture, $"The discharge temperature would lie outside the gas data's valid range {gas.MinimumKelvin:0.##}–{gas.MaximumKelvin:0.##} K."));
}
