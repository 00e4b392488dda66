using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>An ideal-gas species with its NASA 7-coefficient data, molar mass, valid range and source.</summary>
public sealed record Species
{
    internal Species(
        string id,
        string formula,
        string name,
        IReadOnlyList<string> aliases,
        double molarMassKilogramsPerMole,
        IReadOnlyList<Nasa7Range> ranges,
        string selection,
        string source)
    {
        Id = id;
        Formula = formula;
        Name = name;
        Aliases = aliases;
        MolarMassKilogramsPerMole = molarMassKilogramsPerMole;
        Ranges = ranges;
        Selection = selection;
        Source = source;
    }

    /// <summary>Stable id: the formula, with n-/i- prefixes for isomers (e.g. <c>n-C4H10</c>).</summary>
    public string Id { get; }

    /// <summary>Chemical formula.</summary>
    public string Formula { get; }

    /// <summary>Plain name (e.g. "methane").</summary>
    public string Name { get; }

    /// <summary>Accepted plain-name aliases, answered with <see cref="Id"/>.</summary>
    public IReadOnlyList<string> Aliases { get; }

    /// <summary>Molar mass in kg/mol.</summary>
    public double MolarMassKilogramsPerMole { get; }

    /// <summary>Molar mass as a quantity.</summary>
    public MolarMass MolarMass => MolarMass.FromKilogramsPerMole(MolarMassKilogramsPerMole);

    /// <summary>The polynomial ranges, contiguous and ascending.</summary>
    public IReadOnlyList<Nasa7Range> Ranges { get; }

    /// <summary>Lowest temperature of the data, K.</summary>
    public double MinimumKelvin => Ranges[0].LowKelvin;

    /// <summary>Highest temperature of the data, K.</summary>
    public double MaximumKelvin => Ranges[^1].HighKelvin;

    /// <summary>Why this fit was chosen among the published sets.</summary>
    public string Selection { get; }

    /// <summary>Citation of the published coefficients.</summary>
    public string Source { get; }

    internal Nasa7Range RangeAt(double tKelvin)
    {
        foreach (var range in Ranges)
        {
            if (tKelvin <= range.HighKelvin)
            {
                return range;
            }
        }

        return Ranges[^1];
    }

    /// <summary>cp in J/(mol·K) at <paramref name="tKelvin"/> (no range check).</summary>
    public double HeatCapacityJoulesPerMoleKelvin(double tKelvin) =>
        RangeAt(tKelvin).HeatCapacityOverR(tKelvin) * ThermoConstants.MolarGasConstantJoulesPerMoleKelvin;

    /// <summary>H in J/mol at <paramref name="tKelvin"/>, on the enthalpy-of-formation basis of the data (no range check).</summary>
    public double EnthalpyJoulesPerMole(double tKelvin) =>
        RangeAt(tKelvin).EnthalpyOverR(tKelvin) * ThermoConstants.MolarGasConstantJoulesPerMoleKelvin;

    /// <summary>S° in J/(mol·K) at <paramref name="tKelvin"/> and 1 bar (no range check).</summary>
    public double EntropyJoulesPerMoleKelvin(double tKelvin) =>
        RangeAt(tKelvin).EntropyOverR(tKelvin) * ThermoConstants.MolarGasConstantJoulesPerMoleKelvin;
}

/// <summary>A named gas composition shipped with the data, with its source.</summary>
/// <param name="Id">Preset id (e.g. <c>dry-air</c>).</param>
/// <param name="Name">Display name.</param>
/// <param name="MoleFractions">Composition by mole fraction, keyed by species id.</param>
/// <param name="Source">Where the composition comes from.</param>
public sealed record GasPreset(string Id, string Name, IReadOnlyDictionary<string, double> MoleFractions, string Source);

/// <summary>How a composition's fractions are expressed.</summary>
public enum CompositionBasis
{
    /// <summary>Mole (volume, for ideal gases) fractions.</summary>
    Mole,

    /// <summary>Mass fractions.</summary>
    Mass,
}
