using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>What a measured duty implies about a stage.</summary>
public enum CalibrationKind
{
    /// <summary>The measurement lies above the isentropic temperature: it implies an (adiabatic) efficiency.</summary>
    Efficiency,

    /// <summary>
    /// The measurement lies at or below the isentropic temperature: heat left the gas during compression (jacket cooling,
    /// injected oil), so only an apparent polytropic exponent, T2/T1 = r^((n−1)/n), describes it.
    /// </summary>
    ApparentExponent,
}

/// <summary>What one measured duty implies (ideal gas with cp(T)).</summary>
/// <param name="Kind">Efficiency above the isentropic temperature, apparent exponent at or below it.</param>
/// <param name="IsentropicEfficiency">Implied isentropic efficiency (h2s − h1)/(h2 − h1); NaN for an apparent exponent.</param>
/// <param name="PolytropicEfficiency">Implied polytropic efficiency (same path, cp(T)); NaN for an apparent exponent.</param>
/// <param name="ExponentRatio">(n − 1)/n = ln(T2/T1)/ln(r) at the measured duty, dimensionless.</param>
/// <param name="IsentropicAtMeasuredDuty">The η = 1 discharge temperature at the measured duty.</param>
public readonly record struct CalibrationFit(
    CalibrationKind Kind,
    double IsentropicEfficiency,
    double PolytropicEfficiency,
    double ExponentRatio,
    Temperature IsentropicAtMeasuredDuty)
{
    /// <summary>The apparent polytropic exponent n = 1/(1 − (n−1)/n), dimensionless.</summary>
    public double Exponent => 1 / (1 - ExponentRatio);

    /// <summary>
    /// The discharge temperature the apparent exponent gives at another duty: T2 = T1·r^((n−1)/n), the exponent fitted at
    /// the measured duty carried unchanged to the proposed ratio.
    /// </summary>
    /// <param name="suctionTemperature">Suction temperature at the proposed duty.</param>
    /// <param name="pressureRatio">Absolute pressure ratio at the proposed duty, &gt; 1.</param>
    public Temperature ApplyExponent(Temperature suctionTemperature, double pressureRatio) =>
        Temperature.FromKelvins(suctionTemperature.Kelvins * Math.Pow(pressureRatio, ExponentRatio));
}

/// <summary>
/// Back-calculates what a measured discharge temperature implies at the duty where it was measured: above the
/// isentropic temperature an isentropic efficiency (enthalpy ratio) and the polytropic efficiency of the same path; at
/// or below it only the apparent polytropic exponent. Ideal gas with cp(T) (NASA 7-coefficient fits). Pure, no I/O.
/// </summary>
public static class CalibrationFitter
{
    /// <summary>Fits a measured duty.</summary>
    /// <param name="gas">The gas.</param>
    /// <param name="suctionPressure">Absolute suction pressure at the measured duty.</param>
    /// <param name="suctionTemperature">Suction temperature at the measured duty.</param>
    /// <param name="dischargePressure">Absolute discharge pressure at the measured duty (above the suction pressure).</param>
    /// <param name="measuredDischarge">Measured discharge temperature, above the suction temperature and inside the gas data.</param>
    /// <exception cref="ThermoInputException">
    /// Pressures not increasing, temperatures outside the gas data, or a measured temperature at or below the suction
    /// temperature (member <c>MeasuredDischargeTemperature</c>).
    /// </exception>
    public static CalibrationFit Fit(GasMixture gas, Pressure suctionPressure, Temperature suctionTemperature, Pressure dischargePressure, Temperature measuredDischarge)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var ideal = StageSolver.Solve(gas, new StageConditions(suctionPressure, suctionTemperature, dischargePressure, StageEfficiency.Isentropic(1)));
        var t1 = suctionTemperature.Kelvins;
        var t2 = measuredDischarge.Kelvins;
        if (!(t2 > t1))
        {
            throw ThermoErrors.OutOfRange("MeasuredDischargeTemperature", t2, "The measured discharge temperature must be above the suction temperature of the measured duty.");
        }

        gas.RequireInRange(t2, "MeasuredDischargeTemperature");
        var ratio = dischargePressure.Pascals / suctionPressure.Pascals;
        var exponentRatio = Math.Log(t2 / t1) / Math.Log(ratio);
        var t2s = ideal.IsentropicDischargeTemperature;
        if (!(t2 > t2s.Kelvins))
        {
            return new CalibrationFit(CalibrationKind.ApparentExponent, double.NaN, double.NaN, exponentRatio, t2s);
        }

        var h1 = gas.PropertiesAt(suctionTemperature).SpecificEnthalpy.JoulesPerKilogram;
        var h2s = gas.PropertiesAt(t2s).SpecificEnthalpy.JoulesPerKilogram;
        var h2 = gas.PropertiesAt(measuredDischarge).SpecificEnthalpy.JoulesPerKilogram;
        var etaS = (h2s - h1) / (h2 - h1);
        var withEta = StageSolver.Solve(gas, new StageConditions(suctionPressure, suctionTemperature, dischargePressure, StageEfficiency.Isentropic(etaS)));
        return new CalibrationFit(CalibrationKind.Efficiency, etaS, withEta.PolytropicEfficiency, exponentRatio, t2s);
    }
}
