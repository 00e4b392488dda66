using System.Globalization;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// Adds water vapour to a dry gas from a relative humidity or a dew point at suction (ideal-gas mixing: the water
/// mole fraction is its partial pressure over the total pressure). Saturation from <see cref="WaterSaturation"/>.
/// </summary>
public static class HumidGas
{
    /// <summary>The gas with water vapour at relative humidity <paramref name="relativeHumidity"/> (0–1) at the given state.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Humidity outside [0, 1], or a state where water cannot be carried.</exception>
    /// <exception cref="InvalidCompositionException">The gas already contains water.</exception>
    public static GasMixture FromRelativeHumidity(GasMixture dryGas, double relativeHumidity, Temperature temperature, Pressure absolutePressure)
    {
        ArgumentNullException.ThrowIfNull(dryGas);
        if (!(relativeHumidity >= 0 && relativeHumidity <= 1))
        {
            throw ThermoErrors.OutOfRange(nameof(relativeHumidity), relativeHumidity, "Relative humidity must lie in [0, 1] (a fraction, not percent).");
        }

        var t = temperature.Kelvins;
        if (!(t >= WaterSaturation.MinimumKelvin && t <= WaterSaturation.CriticalKelvin))
        {
            throw ThermoErrors.OutOfRange(nameof(temperature), t, string.Create(CultureInfo.InvariantCulture, $"Humidity needs a temperature in {WaterSaturation.MinimumKelvin}–{WaterSaturation.CriticalKelvin} K."));
        }

        var pw = relativeHumidity * WaterSaturation.SaturationPressurePascals(t);
        return WithWaterPartialPressure(dryGas, pw, absolutePressure, nameof(relativeHumidity));
    }

    /// <summary>The gas with water vapour whose dew (or frost) point at the gas pressure is <paramref name="dewPoint"/>.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Dew point above the gas temperature or outside the covered range.</exception>
    /// <exception cref="InvalidCompositionException">The gas already contains water.</exception>
    public static GasMixture FromDewPoint(GasMixture dryGas, Temperature dewPoint, Temperature temperature, Pressure absolutePressure)
    {
        ArgumentNullException.ThrowIfNull(dryGas);
        var td = dewPoint.Kelvins;
        if (td > temperature.Kelvins + 1e-9)
        {
            throw ThermoErrors.OutOfRange(nameof(dewPoint), td, "The dew point cannot be above the gas temperature (the gas would be supersaturated).");
        }

        if (!(td >= WaterSaturation.MinimumKelvin && td <= WaterSaturation.CriticalKelvin))
        {
            throw ThermoErrors.OutOfRange(nameof(dewPoint), td, string.Create(CultureInfo.InvariantCulture, $"The dew point must lie in {WaterSaturation.MinimumKelvin}–{WaterSaturation.CriticalKelvin} K."));
        }

        return WithWaterPartialPressure(dryGas, WaterSaturation.SaturationPressurePascals(td), absolutePressure, nameof(dewPoint));
    }

    /// <summary>
    /// The water dew point of <paramref name="gas"/> at total pressure <paramref name="absolutePressure"/>, or null when the
    /// gas holds no water.
    /// </summary>
    public static Temperature? DewPoint(GasMixture gas, Pressure absolutePressure)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var y = gas.MoleFractionOf("H2O");
        if (y <= 0)
        {
            return null;
        }

        var pw = y * absolutePressure.Pascals;
        var pMax = WaterSaturation.SaturationPressurePascals(WaterSaturation.CriticalKelvin);
        return WaterSaturation.SaturationTemperature(Pressure.FromPascals(Math.Min(pw, pMax)));
    }

    /// <summary>The gas without its water (the same instance when it holds none).</summary>
    /// <param name="gas">A gas, humid or dry.</param>
    /// <returns>The water-free gas, renormalised.</returns>
    public static GasMixture Dry(GasMixture gas)
    {
        ArgumentNullException.ThrowIfNull(gas);
        return gas.WaterMoleFraction > 0 ? gas.WithWaterFraction(GasCatalog.Default.Water, 0) : gas;
    }

    /// <summary>
    /// The relative humidity of a gas at (<paramref name="temperature"/>, <paramref name="absolutePressure"/>):
    /// y_w·P / p_sat(T), capped at 1 (a gas is never supersaturated); 0 for a dry gas or outside the saturation line's
    /// range (200–647.096 K).
    /// </summary>
    /// <param name="gas">The gas.</param>
    /// <param name="temperature">Its temperature.</param>
    /// <param name="absolutePressure">Its absolute pressure.</param>
    /// <returns>Relative humidity, 0–1.</returns>
    public static double RelativeHumidity(GasMixture gas, Temperature temperature, Pressure absolutePressure)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var t = temperature.Kelvins;
        if (gas.WaterMoleFraction <= 0 || t < WaterSaturation.MinimumKelvin || t > WaterSaturation.CriticalKelvin)
        {
            return 0;
        }

        return Math.Min(1, gas.WaterMoleFraction * absolutePressure.Pascals / WaterSaturation.SaturationPressurePascals(t));
    }

    private static GasMixture WithWaterPartialPressure(GasMixture dryGas, double pwPascals, Pressure absolutePressure, string parameterName)
    {
        var p = absolutePressure.Pascals;
        if (!(p > 0))
        {
            throw ThermoErrors.OutOfRange(nameof(absolutePressure), p, "The absolute pressure must be > 0.");
        }

        if (dryGas.MoleFractionOf("H2O") > 0)
        {
            throw new InvalidCompositionException("The gas already contains H2O; give either a composition with water or a humidity, not both.", "H2O");
        }

        var y = pwPascals / p;
        if (y >= 0.999)
        {
            throw ThermoErrors.OutOfRange(parameterName, y, "At this pressure and temperature the gas would be almost pure steam; humidity input is not meaningful here.");
        }

        return y <= 0 ? dryGas : dryGas.WithWaterFraction(GasCatalog.Default.Water, y);
    }
}
