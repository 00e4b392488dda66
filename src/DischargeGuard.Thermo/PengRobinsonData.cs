using System.Collections.Frozen;
using System.Reflection;
using System.Text.Json;
using System.Text.Json.Serialization;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>Critical constants of one species for the Peng-Robinson equation, with their source.</summary>
/// <param name="SpeciesId">The species id, as in the gas catalogue.</param>
/// <param name="CriticalTemperatureKelvin">Tc, K.</param>
/// <param name="CriticalPressurePascals">Pc, Pa.</param>
/// <param name="AcentricFactor">ω, dimensionless.</param>
/// <param name="QuantumGas">True for H2, He and Ne: the Boston–Mathias (1980) α(T) is used above Tc.</param>
/// <param name="Source">Citation of the figures.</param>
public sealed record CriticalConstants(string SpeciesId, double CriticalTemperatureKelvin, double CriticalPressurePascals, double AcentricFactor, bool QuantumGas, string Source)
{
    /// <summary>Tc as a quantity.</summary>
    public Temperature CriticalTemperature => Temperature.FromKelvins(CriticalTemperatureKelvin);

    /// <summary>Pc as a quantity.</summary>
    public Pressure CriticalPressure => Pressure.FromPascals(CriticalPressurePascals);
}

/// <summary>A binary interaction parameter k_ij of the Peng-Robinson equation, with its source.</summary>
/// <param name="Species1">First species id.</param>
/// <param name="Species2">Second species id.</param>
/// <param name="Kij">k_ij = k_ji, dimensionless.</param>
/// <param name="Comment">Pair, fitted range and page as given by the source.</param>
/// <param name="Source">Citation of the value.</param>
public sealed record BinaryInteraction(string Species1, string Species2, double Kij, string Comment, string Source);

/// <summary>Two species of a mixture (ids), e.g. a pair whose k_ij was not found and was taken as 0.</summary>
/// <param name="Species1">First species id (the one with the larger mole fraction).</param>
/// <param name="Species2">Second species id.</param>
public readonly record struct SpeciesPair(string Species1, string Species2)
{
    /// <summary>"A–B".</summary>
    public override string ToString() => Species1 + "–" + Species2;
}

/// <summary>
/// The embedded Peng-Robinson data: critical constants per species and published k_ij pairs. Loaded once from the
/// assembly's embedded resource <c>pr-data.json</c>; immutable and thread-safe.
/// </summary>
public sealed class PengRobinsonData
{
    private const string ResourceName = "DischargeGuard.Thermo.pr-data.json";

    private static readonly Lazy<PengRobinsonData> DefaultData = new(LoadEmbedded, LazyThreadSafetyMode.ExecutionAndPublication);

    private readonly FrozenDictionary<string, CriticalConstants> _constants;
    private readonly FrozenDictionary<(string, string), BinaryInteraction> _pairs;

    private PengRobinsonData(IReadOnlyList<CriticalConstants> species, IReadOnlyList<BinaryInteraction> pairs, string about)
    {
        Species = species;
        Pairs = pairs;
        About = about;
        _constants = species.ToFrozenDictionary(s => s.SpeciesId, StringComparer.Ordinal);
        var map = new Dictionary<(string, string), BinaryInteraction>();
        foreach (var p in pairs)
        {
            if (!map.TryAdd((p.Species1, p.Species2), p) || !map.TryAdd((p.Species2, p.Species1), p))
            {
                throw new InvalidOperationException($"The k_ij pair {p.Species1}/{p.Species2} appears twice.");
            }
        }

        _pairs = map.ToFrozenDictionary();
    }

    /// <summary>The data built from the embedded file.</summary>
    public static PengRobinsonData Default => DefaultData.Value;

    /// <summary>All species' critical constants, in data-file order.</summary>
    public IReadOnlyList<CriticalConstants> Species { get; }

    /// <summary>All published k_ij pairs.</summary>
    public IReadOnlyList<BinaryInteraction> Pairs { get; }

    /// <summary>The data file's description of its contents and sources.</summary>
    public string About { get; }

    /// <summary>The constants of a species id, if present.</summary>
    public bool TryGetConstants(string speciesId, out CriticalConstants constants)
    {
        ArgumentNullException.ThrowIfNull(speciesId);
        return _constants.TryGetValue(speciesId, out constants!);
    }

    /// <summary>The published k_ij of a pair (either order), if present.</summary>
    public bool TryGetInteraction(string speciesId1, string speciesId2, out BinaryInteraction interaction)
    {
        ArgumentNullException.ThrowIfNull(speciesId1);
        ArgumentNullException.ThrowIfNull(speciesId2);
        return _pairs.TryGetValue((speciesId1, speciesId2), out interaction!);
    }

    private static PengRobinsonData LoadEmbedded()
    {
        using var stream = typeof(PengRobinsonData).Assembly.GetManifestResourceStream(ResourceName)
            ?? throw new InvalidOperationException($"Embedded resource {ResourceName} is missing from {typeof(PengRobinsonData).Assembly.GetName().Name}.");
        var doc = JsonSerializer.Deserialize(stream, PrDataJsonContext.Default.PrDataDocument)
            ?? throw new InvalidOperationException("The embedded Peng-Robinson data is empty.");
        if (doc.Format != "dischargeguard-pr-data/1")
        {
            throw new InvalidOperationException($"Unsupported Peng-Robinson data format '{doc.Format}'.");
        }

        var species = doc.Species.Select(s =>
        {
            if (!(s.TcKelvin > 0) || !(s.PcPascals > 0) || !double.IsFinite(s.AcentricFactor))
            {
                throw new InvalidOperationException($"Species {s.Id}: Tc and Pc must be > 0 and ω finite.");
            }

            return new CriticalConstants(s.Id, s.TcKelvin, s.PcPascals, s.AcentricFactor, s.QuantumGas, s.Source);
        }).ToList();
        var pairs = doc.Pairs.Select(p => new BinaryInteraction(p.Species1, p.Species2, p.Kij, p.Comment, p.Source)).ToList();
        return new PengRobinsonData(species, pairs, doc.About);
    }
}

// The embedded file's shape (format "dischargeguard-pr-data/1"). Only the loader sees it.
internal sealed record PrDataDocument(string Format, string About, IReadOnlyList<PrSpeciesEntry> Species, IReadOnlyList<PrPairEntry> Pairs);

internal sealed record PrSpeciesEntry(string Id, double TcKelvin, double PcPascals, double AcentricFactor, bool QuantumGas, string Source);

internal sealed record PrPairEntry(string Species1, string Species2, double Kij, string Comment, string Source);

[JsonSourceGenerationOptions(PropertyNamingPolicy = JsonKnownNamingPolicy.CamelCase, UnmappedMemberHandling = JsonUnmappedMemberHandling.Disallow)]
[JsonSerializable(typeof(PrDataDocument))]
internal sealed partial class PrDataJsonContext : JsonSerializerContext;
