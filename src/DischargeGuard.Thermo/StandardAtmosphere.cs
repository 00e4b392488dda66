using System.Globalization;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// Barometric pressure from elevation in the ISO 2533 standard atmosphere (troposphere, up to 11 000 m):
/// p = 101.325 kPa · (1 − 2.25577·10⁻⁵ · h/m)^5.25588.
/// </summary>
public static class StandardAtmosphere
{
    /// <summary>Lowest elevation accepted, m.</summary>
    public const double MinimumElevationMeters = -500.0;

    /// <summary>Highest elevation accepted (top of the ISO 2533 troposphere), m.</summary>
    public const double MaximumElevationMeters = 11_000.0;

    /// <summary>Barometric pressure at <paramref name="elevation"/> above mean sea level.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Outside −500 m to 11 000 m.</exception>
    public static Pressure PressureAt(Length elevation)
    {
        var h = elevation.Meters;
        if (!(h >= MinimumElevationMeters && h <= MaximumElevationMeters))
        {
            throw ThermoErrors.OutOfRange(
                nameof(elevation),
                h,
                string.Create(CultureInfo.InvariantCulture, $"Elevation must lie in {MinimumElevationMeters} m to {MaximumElevationMeters} m (ISO 2533 troposphere)."));
        }

        return Pressure.FromPascals(ThermoConstants.StandardAtmospherePascals * Math.Pow(1 - (2.25577e-5 * h), 5.25588));
    }
}

/// <summary>Reference conditions of a standard volume flow.</summary>
/// <param name="Id">Stable id.</param>
/// <param name="Temperature">Reference temperature.</param>
/// <param name="Pressure">Reference absolute pressure.</param>
/// <param name="Basis">Where the definition comes from.</param>
public sealed record StandardReference(string Id, Temperature Temperature, Pressure Pressure, string Basis)
{
    /// <summary>0 °C and 101.325 kPa ("normal" conditions, DIN 1343).</summary>
    public static StandardReference Normal { get; } = new("normal", Temperature.FromDegreesCelsius(0), Pressure.FromKilopascals(101.325), "DIN 1343: 0 °C, 101.325 kPa");

    /// <summary>15 °C and 101.325 kPa (ISO 13443 standard reference conditions for natural gas).</summary>
    public static StandardReference Iso13443 { get; } = new("iso-13443", Temperature.FromDegreesCelsius(15), Pressure.FromKilopascals(101.325), "ISO 13443: 15 °C, 101.325 kPa");

    /// <summary>60 °F and 14.696 psia (US gas-industry standard conditions).</summary>
    public static StandardReference Us60F { get; } = new("us-60f", Temperature.FromDegreesFahrenheit(60), Pressure.FromPoundsForcePerSquareInch(14.696), "60 °F, 14.696 psia (US customary standard conditions)");

    /// <summary>All built-in references.</summary>
    public static IReadOnlyList<StandardReference> All { get; } = [Normal, Iso13443, Us60F];

    /// <summary>Mass flow of an ideal gas given as a volume flow at these reference conditions: ṁ = Q·p·M/(R·T).</summary>
    public MassFlow ToMassFlow(VolumeFlow standardVolumeFlow, GasMixture gas)
    {
        ArgumentNullException.ThrowIfNull(gas);
        var q = standardVolumeFlow.CubicMetersPerSecond;
        if (!(q > 0) || !double.IsFinite(q))
        {
            throw ThermoErrors.OutOfRange(nameof(standardVolumeFlow), q, "The standard volume flow must be a finite number > 0.");
        }

        var molesPerSecond = q * Pressure.Pascals / (ThermoConstants.MolarGasConstantJoulesPerMoleKelvin * Temperature.Kelvins);
        return MassFlow.FromKilogramsPerSecond(molesPerSecond * gas.MolarMassKilogramsPerMole);
    }
}
