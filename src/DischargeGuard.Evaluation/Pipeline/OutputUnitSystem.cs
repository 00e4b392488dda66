using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// The units answers are written in. Metric: °C, kPa (absolute), K (differences), kJ/kg, kW, kg/h, g/mol.
/// Imperial: °F, psia, Δ°F, Btu/lb, hp, lb/h, lb/lbmol. Values are rounded to a precision finer than any input
/// warrants (0.001 of the unit) so the JSON stays readable without hiding differences.
/// </summary>
public sealed class OutputUnitSystem
{
    private const double WattsPerHorsepower = 745.69987158227022;
    private const double KilogramsPerPound = 0.45359237;

    private OutputUnitSystem(bool imperial) => Imperial = imperial;

    /// <summary>SI-based engineering units.</summary>
    public static OutputUnitSystem Metric { get; } = new(false);

    /// <summary>US customary units.</summary>
    public static OutputUnitSystem ImperialUnits { get; } = new(true);

    /// <summary>Whether this is the imperial system.</summary>
    public bool Imperial { get; }

    /// <summary>The contract name: metric or imperial.</summary>
    public string Name => Imperial ? "imperial" : "metric";

    /// <summary>The system named by <paramref name="name"/> (metric when null).</summary>
    public static OutputUnitSystem Named(string? name) => name == "imperial" ? ImperialUnits : Metric;

    /// <summary>An absolute temperature.</summary>
    public QuantityDto Temperature(Temperature t) => Imperial
        ? new(Round(t.DegreesFahrenheit), "°F")
        : new(Round(t.DegreesCelsius), "°C");

    /// <summary>An absolute temperature given in kelvin.</summary>
    public QuantityDto TemperatureKelvin(double kelvin) => Imperial
        ? new(Round((kelvin * 1.8) - 459.67), "°F")
        : new(Round(kelvin - 273.15), "°C");

    /// <summary>A temperature difference given in kelvin.</summary>
    public QuantityDto DifferenceKelvin(double kelvin) => Imperial
        ? new(Round(kelvin * 1.8), "Δ°F")
        : new(Round(kelvin), "K");

    /// <summary>An absolute pressure.</summary>
    public QuantityDto PressureAbsolute(Pressure p) => Imperial
        ? new(Round(p.PoundsForcePerSquareInch), "psia")
        : new(Round(p.Kilopascals), "kPa");

    /// <summary>A specific energy.</summary>
    public QuantityDto SpecificEnergy(SpecificEnergy e) => Imperial
        ? new(Round(e.JoulesPerKilogram / 2326.0), "Btu/lb")
        : new(Round(e.JoulesPerKilogram / 1000.0), "kJ/kg");

    /// <summary>A power.</summary>
    public QuantityDto Power(Power p) => Imperial
        ? new(Round((double)p.Watts / WattsPerHorsepower), "hp")
        : new(Round((double)p.Watts / 1000.0), "kW");

    /// <summary>A mass flow.</summary>
    public QuantityDto MassFlow(MassFlow m) => Imperial
        ? new(Round(m.KilogramsPerSecond * 3600 / KilogramsPerPound), "lb/h")
        : new(Round(m.KilogramsPerSecond * 3600), "kg/h");

    /// <summary>A molar mass (g/mol and lb/lbmol are numerically equal).</summary>
    public QuantityDto MolarMass(MolarMass m) => new(Math.Round(m.GramsPerMole, 4), Imperial ? "lb/lbmol" : "g/mol");

    /// <summary>A rule reading (temperature, difference or ratio).</summary>
    public QuantityDto Reading(Reading r) => r.Dimension switch
    {
        QuantityDimension.Temperature => TemperatureKelvin(r.SiValue),
        QuantityDimension.TemperatureDifference => DifferenceKelvin(r.SiValue),
        _ => new(Math.Round(r.SiValue, 4), "1"),
    };

    private static double Round(double value) => Math.Round(value, 3);
}
