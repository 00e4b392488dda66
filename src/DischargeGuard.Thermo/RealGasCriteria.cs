using System.Globalization;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// Whether a stage needs the real-gas model rather than the ideal gas. The thresholds are the "switch-to-real-gas
/// trigger" of the project's domain survey (docs: domain limits, section e), marked there (b): common practice, no
/// single source. Z comes from the Peng-Robinson vapour root; reduced T and P use Kay's-rule pseudo-critical constants.
/// </summary>
public static class RealGasCriteria
{
    /// <summary>Z below this at suction or discharge calls for real gas (common practice, no single source).</summary>
    public const double CompressibilityLowerBound = 0.97;

    /// <summary>Z above this at suction or discharge calls for real gas (common practice, no single source).</summary>
    public const double CompressibilityUpperBound = 1.03;

    /// <summary>Reduced pressure above this, together with reduced temperature below <see cref="ReducedTemperatureThreshold"/>, calls for real gas (common practice, no single source).</summary>
    public const double ReducedPressureThreshold = 0.1;

    /// <summary>See <see cref="ReducedPressureThreshold"/> (common practice, no single source).</summary>
    public const double ReducedTemperatureThreshold = 1.5;

    /// <summary>A state within this many kelvin of the pseudo-critical temperature or the water dew point calls for real gas (common practice, no single source).</summary>
    public const double ApproachKelvin = 20.0;

    /// <summary>Assesses a stage from its suction and (estimated) discharge states.</summary>
    /// <param name="gas">The mixture.</param>
    /// <param name="suctionTemperature">T1.</param>
    /// <param name="suctionPressure">Absolute P1.</param>
    /// <param name="dischargeTemperature">T2 (e.g. the ideal-gas estimate).</param>
    /// <param name="dischargePressure">Absolute P2.</param>
    /// <exception cref="ArgumentOutOfRangeException">A pressure ≤ 0 or above <see cref="RealGasMixture.MaximumPressurePascals"/>.</exception>
    public static RealGasAssessment Assess(RealGasMixture gas, Temperature suctionTemperature, Pressure suctionPressure, Temperature dischargeTemperature, Pressure dischargePressure)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var t1 = suctionTemperature.Kelvins;
        var p1 = suctionPressure.Pascals;
        var t2 = dischargeTemperature.Kelvins;
        var p2 = dischargePressure.Pascals;
        RealGasMixture.RequirePressure(p1, nameof(suctionPressure));
        RealGasMixture.RequirePressure(p2, nameof(dischargePressure));
        var reasons = new List<string>();
        var z1 = Check(gas, "suction", t1, p1, reasons, out var tr1, out var pr1);
        var z2 = Check(gas, "discharge", t2, p2, reasons, out var tr2, out var pr2);
        return new RealGasAssessment(reasons.Count > 0, reasons, z1, z2, tr1, pr1, tr2, pr2);
    }

    /// <summary>Assesses a stage from its conditions, with the ideal-gas estimated discharge temperature as T2.</summary>
    /// <exception cref="ArgumentOutOfRangeException">As <see cref="StageSolver.Solve"/>.</exception>
    public static RealGasAssessment Assess(RealGasMixture gas, in StageConditions conditions)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var ideal = StageSolver.Solve(gas.IdealGas, conditions);
        return Assess(gas, conditions.SuctionTemperature, conditions.SuctionPressure, ideal.EstimatedDischargeTemperature, conditions.DischargePressure);
    }

    private static double Check(RealGasMixture gas, string where, double t, double p, List<string> reasons, out double tr, out double pr)
    {
        var z = gas.CompressibilityAt(t, p);
        tr = t / gas.PseudoCriticalTemperatureKelvin;
        pr = p / gas.PseudoCriticalPressurePascals;
        var inv = CultureInfo.InvariantCulture;
        if (z < CompressibilityLowerBound || z > CompressibilityUpperBound)
        {
            reasons.Add(string.Create(inv, $"Z at {where} is {z:0.####}, outside {CompressibilityLowerBound}–{CompressibilityUpperBound}."));
        }

        if (pr > ReducedPressureThreshold && tr < ReducedTemperatureThreshold)
        {
            reasons.Add(string.Create(inv, $"At {where} the reduced pressure is {pr:0.###} (> {ReducedPressureThreshold}) with reduced temperature {tr:0.###} (< {ReducedTemperatureThreshold})."));
        }

        if (Math.Abs(t - gas.PseudoCriticalTemperatureKelvin) < ApproachKelvin)
        {
            reasons.Add(string.Create(inv, $"At {where} the temperature {t:0.#} K is within {ApproachKelvin} K of the pseudo-critical temperature {gas.PseudoCriticalTemperatureKelvin:0.#} K."));
        }

        if (HumidGas.DewPoint(gas.IdealGas, Pressure.FromPascals(p)) is { } dew && t - dew.Kelvins < ApproachKelvin)
        {
            reasons.Add(string.Create(inv, $"At {where} the temperature {t:0.#} K is within {ApproachKelvin} K of the water dew point {dew.Kelvins:0.#} K."));
        }

        return z;
    }
}

/// <summary>The outcome of <see cref="RealGasCriteria.Assess(RealGasMixture, Temperature, Pressure, Temperature, Pressure)"/>.</summary>
/// <param name="RealGasRecommended">True when any criterion is met.</param>
/// <param name="Reasons">One sentence per criterion met (empty when none).</param>
/// <param name="ZSuction">Peng-Robinson Z at suction, dimensionless.</param>
/// <param name="ZDischarge">Peng-Robinson Z at discharge, dimensionless.</param>
/// <param name="SuctionReducedTemperature">T1/T_pc (Kay's rule), dimensionless.</param>
/// <param name="SuctionReducedPressure">P1/P_pc (Kay's rule), dimensionless.</param>
/// <param name="DischargeReducedTemperature">T2/T_pc, dimensionless.</param>
/// <param name="DischargeReducedPressure">P2/P_pc, dimensionless.</param>
public sealed record RealGasAssessment(
    bool RealGasRecommended,
    IReadOnlyList<string> Reasons,
    double ZSuction,
    double ZDischarge,
    double SuctionReducedTemperature,
    double SuctionReducedPressure,
    double DischargeReducedTemperature,
    double DischargeReducedPressure);
