using System.Text.Json.Serialization;

namespace DischargeGuard.Thermo;

// The embedded data file's shape (format "dischargeguard-gas-data/1"). Only the loader sees it.
internal sealed record GasDataDocument(
    string Format,
    string About,
    IReadOnlyList<SpeciesEntry> Species,
    IReadOnlyList<PresetEntry> Presets);

internal sealed record SpeciesEntry(
    string Id,
    string Formula,
    string Name,
    IReadOnlyList<string> Aliases,
    double MolarMassGramsPerMole,
    string MolarMassSource,
    IReadOnlyList<RangeEntry> Ranges,
    string Selection,
    string Source);

internal sealed record RangeEntry(double TLowKelvin, double THighKelvin, IReadOnlyList<double> A);

internal sealed record PresetEntry(string Id, string Name, IReadOnlyDictionary<string, double> Composition, string Source);

[JsonSourceGenerationOptions(PropertyNamingPolicy = JsonKnownNamingPolicy.CamelCase, UnmappedMemberHandling = JsonUnmappedMemberHandling.Disallow)]
[JsonSerializable(typeof(GasDataDocument))]
internal sealed partial class GasDataJsonContext : JsonSerializerContext;
