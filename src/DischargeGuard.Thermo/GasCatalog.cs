using System.Collections.Frozen;
using System.Globalization;
using System.Reflection;
using System.Text.Json;

namespace DischargeGuard.Thermo;

/// <summary>
/// The species and presets of the embedded gas data, and the factory for mixtures. Immutable and thread-safe;
/// <see cref="Default"/> is loaded once from the assembly's embedded resource.
/// </summary>
public sealed class GasCatalog
{
    /// <summary>Fractions must sum to 1 within this absolute tolerance.</summary>
    public const double SumTolerance = 1e-4;

    private const string ResourceName = "DischargeGuard.Thermo.gas-data.json";

    private static readonly Lazy<GasCatalog> DefaultCatalog = new(LoadEmbedded, LazyThreadSafetyMode.ExecutionAndPublication);

    private readonly FrozenDictionary<string, Species> _byKey;
    private readonly FrozenDictionary<string, GasPreset> _presets;

    // A preset's mixture is immutable and the same every time: built once per preset, not per request.
    private readonly System.Collections.Concurrent.ConcurrentDictionary<string, GasMixture> _presetMixtures = new(StringComparer.Ordinal);

    private GasCatalog(IReadOnlyList<Species> species, IReadOnlyList<GasPreset> presets, string about)
    {
        Species = species;
        Presets = presets;
        About = about;
        var keys = new Dictionary<string, Species>(StringComparer.OrdinalIgnoreCase);
        foreach (var s in species)
        {
            keys[s.Id] = s;
            foreach (var alias in s.Aliases)
            {
                keys.TryAdd(alias, s);
            }
        }

        _byKey = keys.ToFrozenDictionary(StringComparer.OrdinalIgnoreCase);
        _presets = presets.ToFrozenDictionary(p => p.Id, StringComparer.OrdinalIgnoreCase);
        SupportedSpeciesList = string.Join(", ", species.Select(s => s.Id));
    }

    /// <summary>The catalogue built from the embedded data file.</summary>
    public static GasCatalog Default => DefaultCatalog.Value;

    /// <summary>All species, in data-file order.</summary>
    public IReadOnlyList<Species> Species { get; }

    /// <summary>All presets.</summary>
    public IReadOnlyList<GasPreset> Presets { get; }

    /// <summary>The data file's description of its formulas and sources.</summary>
    public string About { get; }

    /// <summary>Comma-separated species ids, for error messages.</summary>
    public string SupportedSpeciesList { get; }

    /// <summary>Water, used for humidity and condensate.</summary>
    public Species Water => _byKey["H2O"];

    /// <summary>Finds a species by id or plain-name alias (case-insensitive).</summary>
    public bool TryGetSpecies(string idOrAlias, out Species species)
    {
        ArgumentNullException.ThrowIfNull(idOrAlias);
        return _byKey.TryGetValue(idOrAlias.Trim(), out species!);
    }

    /// <summary>Finds a preset by id (case-insensitive).</summary>
    public bool TryGetPreset(string id, out GasPreset preset)
    {
        ArgumentNullException.ThrowIfNull(id);
        return _presets.TryGetValue(id.Trim(), out preset!);
    }

    /// <summary>The mixture of a preset (one immutable instance per preset).</summary>
    /// <exception cref="ArgumentOutOfRangeException">The preset is unknown; the message lists the known ones.</exception>
    public GasMixture Preset(string id)
    {
        if (!TryGetPreset(id, out var preset))
        {
            throw new ArgumentOutOfRangeException(nameof(id), id, $"Unknown gas preset '{id}'. Known presets: {string.Join(", ", Presets.Select(p => p.Id))}.");
        }

        return _presetMixtures.GetOrAdd(preset.Id, static (_, state) => state.Catalog.CreateMixture(state.Preset.MoleFractions, CompositionBasis.Mole), (Catalog: this, Preset: preset));
    }

    /// <summary>
    /// A mixture from fractions keyed by species id or alias. Fractions must each lie in [0, 1] and sum to 1 within
    /// <see cref="SumTolerance"/>; they are then normalised exactly. Zero fractions are dropped.
    /// </summary>
    /// <exception cref="InvalidCompositionException">Unknown species, a fraction outside [0, 1], a repeated species or a bad sum.</exception>
    public GasMixture CreateMixture(IEnumerable<KeyValuePair<string, double>> fractions, CompositionBasis basis)
    {
        ArgumentNullException.ThrowIfNull(fractions);
        var species = new List<Species>();
        var values = new List<double>();
        double sum = 0;
        foreach (var (key, value) in fractions)
        {
            if (!TryGetSpecies(key, out var s))
            {
                throw new InvalidCompositionException(
                    $"Unknown species '{key}'. Supported species: {SupportedSpeciesList} (plain names such as 'methane' are accepted too).",
                    key);
            }

            if (!double.IsFinite(value) || value < 0 || value > 1)
            {
                throw new InvalidCompositionException(
                    $"The fraction of '{key}' is {value.ToString("R", CultureInfo.InvariantCulture)}; each fraction must lie in [0, 1].",
                    key);
            }

            if (species.Contains(s))
            {
                throw new InvalidCompositionException($"Species '{s.Id}' appears more than once (as '{key}').", key);
            }

            sum += value;
            if (value > 0)
            {
                species.Add(s);
                values.Add(value);
            }
        }

        if (species.Count == 0 || Math.Abs(sum - 1.0) > SumTolerance)
        {
            throw new InvalidCompositionException(
                $"The {(basis == CompositionBasis.Mole ? "mole" : "mass")} fractions sum to {sum.ToString("0.######", CultureInfo.InvariantCulture)}; they must sum to 1 within {SumTolerance.ToString(CultureInfo.InvariantCulture)}.",
                null,
                sum);
        }

        var moles = new double[species.Count];
        for (var i = 0; i < moles.Length; i++)
        {
            moles[i] = basis == CompositionBasis.Mole ? values[i] : values[i] / species[i].MolarMassKilogramsPerMole;
        }

        return GasMixture.FromAmounts(species.ToArray(), moles);
    }

    private static GasCatalog LoadEmbedded()
    {
        using var stream = typeof(GasCatalog).Assembly.GetManifestResourceStream(ResourceName)
            ?? throw new InvalidOperationException($"Embedded resource {ResourceName} is missing from {typeof(GasCatalog).Assembly.GetName().Name}.");
        var doc = JsonSerializer.Deserialize(stream, GasDataJsonContext.Default.GasDataDocument)
            ?? throw new InvalidOperationException("The embedded gas data is empty.");
        return FromDocument(doc);
    }

    internal static GasCatalog FromDocument(GasDataDocument doc)
    {
        if (doc.Format != "dischargeguard-gas-data/1")
        {
            throw new InvalidOperationException($"Unsupported gas data format '{doc.Format}'.");
        }

        var species = new List<Species>();
        foreach (var e in doc.Species)
        {
            var ranges = new List<Nasa7Range>();
            foreach (var r in e.Ranges)
            {
                if (r.A.Count != 7 || r.THighKelvin <= r.TLowKelvin)
                {
                    throw new InvalidOperationException($"Species {e.Id}: each range needs 7 coefficients and tHigh > tLow.");
                }

                if (ranges.Count > 0 && Math.Abs(ranges[^1].HighKelvin - r.TLowKelvin) > 1e-9)
                {
                    throw new InvalidOperationException($"Species {e.Id}: ranges must be contiguous.");
                }

                ranges.Add(new Nasa7Range(r.TLowKelvin, r.THighKelvin, r.A[0], r.A[1], r.A[2], r.A[3], r.A[4], r.A[5], r.A[6]));
            }

            species.Add(new Species(e.Id, e.Formula, e.Name, e.Aliases, e.MolarMassGramsPerMole / 1000.0, ranges, e.Selection, e.Source));
        }

        var presets = doc.Presets.Select(p => new GasPreset(p.Id, p.Name, p.Composition.ToFrozenDictionary(), p.Source)).ToList();
        return new GasCatalog(species, presets, doc.About);
    }
}

/// <summary>A composition that cannot be used: unknown species, bad fraction or bad sum.</summary>
public sealed class InvalidCompositionException : ArgumentException
{
    /// <summary>Creates the exception.</summary>
    public InvalidCompositionException(string message, string? speciesKey = null, double? sum = null)
        : base(message, "composition")
    {
        SpeciesKey = speciesKey;
        Sum = sum;
    }

    /// <summary>Creates the exception.</summary>
    public InvalidCompositionException()
        : base("Invalid composition.", "composition")
    {
    }

    /// <summary>Creates the exception.</summary>
    public InvalidCompositionException(string message, Exception innerException)
        : base(message, "composition", innerException)
    {
    }

    /// <summary>The offending key as given, when one key is at fault.</summary>
    public string? SpeciesKey { get; }

    /// <summary>The sum of the fractions, when the sum is at fault.</summary>
    public double? Sum { get; }
}
