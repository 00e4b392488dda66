using System.Collections.Frozen;
using System.Text.Json;
using System.Text.Json.Serialization;

namespace DischargeGuard.Thermo.Core;

/// <summary>
/// The GERG-2008 coefficients (Kunz &amp; Wagner, J. Chem. Eng. Data 57 (2012) 3032–3091; ISO 20765-2), loaded once from
/// the embedded resource <c>gerg2008.json</c>, whose <c>about</c> names the source of every figure. Immutable.
/// </summary>
internal sealed class Gerg2008Data
{
    private const string ResourceName = "DischargeGuard.Thermo.gerg2008.json";

    private static readonly Lazy<Gerg2008Data> DefaultData = new(Load, LazyThreadSafetyMode.ExecutionAndPublication);

    private readonly FrozenDictionary<string, int> _index;

    private Gerg2008Data(GergDocument doc)
    {
        About = doc.About;
        GasConstant = doc.GasConstantJoulesPerMoleKelvin;
        IdealGasConstant = doc.IdealGasConstantJoulesPerMoleKelvin;
        ReferenceTemperatureKelvin = doc.ReferenceTemperatureKelvin;
        ReferencePressurePascals = doc.ReferencePressureKilopascals * 1000;
        Components = doc.Components;
        Departures = doc.Departures.ToFrozenDictionary(d => d.Id, StringComparer.Ordinal);
        _index = doc.Components.Select((c, i) => (c.Id, i)).ToFrozenDictionary(p => p.Id, p => p.i, StringComparer.Ordinal);
        var n = doc.Components.Count;
        Pairs = new GergPairEntry?[n, n];
        foreach (var p in doc.Pairs)
        {
            var i = IndexOf(p.Species1);
            var j = IndexOf(p.Species2);
            if (i < 0 || j < 0 || i >= j || Pairs[i, j] is not null)
            {
                throw new InvalidOperationException($"GERG-2008 pair {p.Species1}/{p.Species2}: unknown, out of the file's order or repeated.");
            }

            if (p.Departure is not null && !Departures.ContainsKey(p.Departure))
            {
                throw new InvalidOperationException($"GERG-2008 pair {p.Species1}/{p.Species2} names an unknown departure function '{p.Departure}'.");
            }

            Pairs[i, j] = p;
        }

        for (var i = 0; i < n; i++)
        {
            for (var j = i + 1; j < n; j++)
            {
                if (Pairs[i, j] is null)
                {
                    throw new InvalidOperationException($"GERG-2008 pair {Components[i].Id}/{Components[j].Id} is missing.");
                }
            }
        }
    }

    /// <summary>The data of the embedded file.</summary>
    public static Gerg2008Data Default => DefaultData.Value;

    /// <summary>The file's citation and description.</summary>
    public string About { get; }

    /// <summary>R of the equation, J/(mol·K) (8.314472).</summary>
    public double GasConstant { get; }

    /// <summary>R* of the ideal-gas part, J/(mol·K) (8.31451).</summary>
    public double IdealGasConstant { get; }

    /// <summary>T0 of the ideal-gas reference state, K.</summary>
    public double ReferenceTemperatureKelvin { get; }

    /// <summary>p0 of the ideal-gas reference state, Pa.</summary>
    public double ReferencePressurePascals { get; }

    /// <summary>The 21 components in the file's order.</summary>
    public IReadOnlyList<GergComponentEntry> Components { get; }

    /// <summary>The departure functions by id.</summary>
    public FrozenDictionary<string, GergDepartureEntry> Departures { get; }

    /// <summary>Reducing-function parameters of pair (i, j), i &lt; j in the file's order.</summary>
    public GergPairEntry?[,] Pairs { get; }

    /// <summary>The file index of a species id, or −1.</summary>
    public int IndexOf(string speciesId) => _index.TryGetValue(speciesId, out var i) ? i : -1;

    private static Gerg2008Data Load()
    {
        using var stream = typeof(Gerg2008Data).Assembly.GetManifestResourceStream(ResourceName)
            ?? throw new InvalidOperationException($"Embedded resource {ResourceName} is missing.");
        var doc = JsonSerializer.Deserialize(stream, GergJsonContext.Default.GergDocument)
            ?? throw new InvalidOperationException("The embedded GERG-2008 data is empty.");
        if (doc.Format != "dischargeguard-gerg2008/1")
        {
            throw new InvalidOperationException($"Unsupported GERG-2008 data format '{doc.Format}'.");
        }

        foreach (var c in doc.Components)
        {
            var r = c.Residual;
            if (r.N.Count == 0 || r.D.Count != r.N.Count || r.T.Count != r.N.Count || r.C.Count != r.N.Count
                || c.Ideal.N.Count != 7 || c.Ideal.ThetaKelvin.Count != 4 || !(c.CriticalTemperatureKelvin > 0) || !(c.CriticalDensityMolesPerLitre > 0))
            {
                throw new InvalidOperationException($"GERG-2008 component {c.Id}: inconsistent coefficient lists or critical constants.");
            }
        }

        foreach (var d in doc.Departures)
        {
            var k = d.N.Count;
            if (d.D.Count != k || d.T.Count != k || d.Eta.Count != k || d.Epsilon.Count != k || d.Beta.Count != k || d.Gamma.Count != k
                || d.PolynomialTerms < 0 || d.PolynomialTerms > k)
            {
                throw new InvalidOperationException($"GERG-2008 departure function {d.Id}: inconsistent coefficient lists.");
            }
        }

        return new Gerg2008Data(doc);
    }
}

// The embedded file's shape (format "dischargeguard-gerg2008/1").
internal sealed record GergDocument(
    string Format,
    string About,
    double GasConstantJoulesPerMoleKelvin,
    double IdealGasConstantJoulesPerMoleKelvin,
    double ReferenceTemperatureKelvin,
    double ReferencePressureKilopascals,
    IReadOnlyList<GergComponentEntry> Components,
    IReadOnlyList<GergDepartureEntry> Departures,
    IReadOnlyList<GergPairEntry> Pairs);

internal sealed record GergComponentEntry(
    string Id,
    string Name,
    double MolarMassGramsPerMole,
    double CriticalTemperatureKelvin,
    double CriticalDensityMolesPerLitre,
    GergIdealEntry Ideal,
    GergResidualEntry Residual);

internal sealed record GergIdealEntry(IReadOnlyList<double> N, IReadOnlyList<double> ThetaKelvin);

internal sealed record GergResidualEntry(IReadOnlyList<double> N, IReadOnlyList<int> D, IReadOnlyList<double> T, IReadOnlyList<int> C);

internal sealed record GergDepartureEntry(
    string Id,
    int PolynomialTerms,
    IReadOnlyList<double> N,
    IReadOnlyList<int> D,
    IReadOnlyList<double> T,
    IReadOnlyList<double> Eta,
    IReadOnlyList<double> Epsilon,
    IReadOnlyList<double> Beta,
    IReadOnlyList<double> Gamma);

internal sealed record GergPairEntry(
    string Species1,
    string Species2,
    double BetaV,
    double GammaV,
    double BetaT,
    double GammaT,
    string? Departure = null,
    double F = 0);

[JsonSourceGenerationOptions(PropertyNamingPolicy = JsonKnownNamingPolicy.CamelCase, UnmappedMemberHandling = JsonUnmappedMemberHandling.Disallow)]
[JsonSerializable(typeof(GergDocument))]
internal sealed partial class GergJsonContext : JsonSerializerContext;
