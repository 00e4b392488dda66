using System.Globalization;
using DischargeGuard.Thermo.Core;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// The GERG-2008 equation of state (O. Kunz and W. Wagner, J. Chem. Eng. Data 57 (2012) 3032–3091; ISO 20765-2): its
/// 21 components, its range of validity and the citation of the embedded coefficients.
/// </summary>
/// <remarks>
/// Ranges as published (Kunz &amp; Wagner, section 7.2): the normal range 90–450 K up to 35 MPa, where the equation
/// reproduces gas-phase densities of natural gases within about 0.1 %; the extended range 60–700 K up to 70 MPa. The
/// calculators here refuse states outside the extended range.
/// </remarks>
public static class Gerg2008
{
    /// <summary>Lowest temperature of the extended range, K.</summary>
    public const double MinimumKelvin = 60;

    /// <summary>Highest temperature of the extended range, K.</summary>
    public const double MaximumKelvin = 700;

    /// <summary>Highest pressure of the extended range, Pa (70 MPa).</summary>
    public const double MaximumPressurePascals = 70e6;

    /// <summary>Lowest temperature of the normal range, K.</summary>
    public const double NormalMinimumKelvin = 90;

    /// <summary>Highest temperature of the normal range, K.</summary>
    public const double NormalMaximumKelvin = 450;

    /// <summary>Highest pressure of the normal range, Pa (35 MPa).</summary>
    public const double NormalMaximumPressurePascals = 35e6;

    /// <summary>Default relative tolerance of the density solver.</summary>
    public const double DefaultDensityTolerance = 1e-12;

    /// <summary>Default iteration cap of the density solver.</summary>
    public const int DefaultDensityIterations = 60;

    /// <summary>The 21 components as species ids of the gas catalogue, in the equation's order.</summary>
    public static IReadOnlyList<string> ComponentIds { get; } = [.. Gerg2008Data.Default.Components.Select(c => c.Id)];

    /// <summary>Citation and description of the embedded coefficients (the data file's <c>about</c>).</summary>
    public static string About => Gerg2008Data.Default.About;

    /// <summary>True when <paramref name="speciesId"/> (a catalogue id such as "CH4" or "n-C7H16") is a GERG-2008 component.</summary>
    public static bool IsComponent(string speciesId)
    {
        ArgumentNullException.ThrowIfNull(speciesId);
        return Gerg2008Data.Default.IndexOf(speciesId) >= 0;
    }

    /// <summary>True when every species of <paramref name="gas"/> is a GERG-2008 component.</summary>
    public static bool AreAllComponents(GasMixture gas)
    {
        ArgumentNullException.ThrowIfNull(gas);
        return gas.Components.All(c => IsComponent(c.Species.Id));
    }

    /// <summary>True when (T, p) lies in the normal range (90–450 K, 0 &lt; p ≤ 35 MPa).</summary>
    public static bool IsInNormalRange(Temperature temperature, Pressure pressure) =>
        IsInNormalRange(temperature.Kelvins, pressure.Pascals);

    /// <summary>True when (T, p) lies in the extended range (60–700 K, 0 &lt; p ≤ 70 MPa).</summary>
    public static bool IsInExtendedRange(Temperature temperature, Pressure pressure) =>
        IsInExtendedRange(temperature.Kelvins, pressure.Pascals);

    internal static bool IsInNormalRange(double tKelvin, double pPascals) =>
        tKelvin >= NormalMinimumKelvin && tKelvin <= NormalMaximumKelvin && pPascals > 0 && pPascals <= NormalMaximumPressurePascals;

    internal static bool IsInExtendedRange(double tKelvin, double pPascals) =>
        tKelvin >= MinimumKelvin && tKelvin <= MaximumKelvin && pPascals > 0 && pPascals <= MaximumPressurePascals;

    internal static void RequireTemperature(double tKelvin, string member)
    {
        if (!(tKelvin >= MinimumKelvin && tKelvin <= MaximumKelvin))
        {
            throw ThermoErrors.OutOfRange(
                member,
                tKelvin,
                string.Create(CultureInfo.InvariantCulture, $"Temperature {tKelvin:0.###} K is outside the GERG-2008 range {MinimumKelvin:0}–{MaximumKelvin:0} K."));
        }
    }

    internal static void RequirePressure(double pPascals, string member)
    {
        if (!(pPascals > 0 && pPascals <= MaximumPressurePascals))
        {
            throw ThermoErrors.OutOfRange(
                member,
                pPascals,
                string.Create(CultureInfo.InvariantCulture, $"The absolute pressure must lie in (0, {MaximumPressurePascals / 1e6:0} MPa] for GERG-2008; got {pPascals:0.###} Pa."));
        }
    }
}
