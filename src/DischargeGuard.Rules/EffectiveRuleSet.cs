using System.Collections.Frozen;
using DischargeGuard.Rules.Model;

namespace DischargeGuard.Rules;

/// <summary>One layer that contributed to an effective rule set.</summary>
/// <param name="Name">"default", "site:&lt;id&gt;" or "asset:&lt;tag&gt;".</param>
/// <param name="File">The file, relative to the rules directory.</param>
/// <param name="Digest">SHA-256 of the layer's canonical form.</param>
public sealed record LayerInfo(string Name, string File, string Digest);

/// <summary>
/// The merged rules and catalogues for one (site, asset) pair, immutable. Built by
/// <see cref="Loading.LayerMerger"/>; evaluated by <see cref="Evaluation.RuleEngine"/>.
/// </summary>
public sealed class EffectiveRuleSet
{
    internal EffectiveRuleSet(
        IReadOnlyList<LayerInfo> layers,
        IReadOnlyList<ServiceClass> serviceClasses,
        IReadOnlyList<Lubricant> lubricants,
        IReadOnlyList<Material> materials,
        IReadOnlyList<CompressorType> compressorTypes,
        IReadOnlyList<RuleDefinition> rules,
        IReadOnlyList<DisabledRule> disabled,
        IReadOnlyDictionary<string, string> catalogueLayers)
    {
        CatalogueLayers = catalogueLayers.ToFrozenDictionary(StringComparer.Ordinal);
        CatalogueLayersByPair = catalogueLayers.ToFrozenDictionary(kv => (kv.Key[..kv.Key.IndexOf('/', StringComparison.Ordinal)], kv.Key[(kv.Key.IndexOf('/', StringComparison.Ordinal) + 1)..]), kv => kv.Value);
        var order = layers.Select((l, i) => (l.Name, i)).ToDictionary(x => x.Name, x => x.i, StringComparer.Ordinal);
        LayerOrder = order.ToFrozenDictionary(StringComparer.Ordinal);
        Layers = layers;
        ServiceClasses = serviceClasses.ToFrozenDictionary(s => s.Id, StringComparer.Ordinal);
        Lubricants = lubricants.ToFrozenDictionary(s => s.Id, StringComparer.Ordinal);
        Materials = materials.ToFrozenDictionary(s => s.Id, StringComparer.Ordinal);
        CompressorTypes = compressorTypes.ToFrozenDictionary(s => s.Id, StringComparer.Ordinal);
        Rules = rules;
        Disabled = disabled;
        RulesById = rules.ToFrozenDictionary(r => r.Id, StringComparer.Ordinal);
        DetectedServiceClasses = serviceClasses.Where(s => s.Detection != ServiceDetection.Declared).ToArray();
        Digest = Loading.CanonicalForm.Digest(Loading.CanonicalForm.OfMerged(this));
    }

    /// <summary>SHA-256 (lower-case hex) over the canonical form of the merged content.</summary>
    public string Digest { get; }

    /// <summary>The layers merged, lowest first, each with its digest.</summary>
    public IReadOnlyList<LayerInfo> Layers { get; }

    /// <summary>Service classes by id.</summary>
    public IReadOnlyDictionary<string, ServiceClass> ServiceClasses { get; }

    /// <summary>Lubricants by id.</summary>
    public IReadOnlyDictionary<string, Lubricant> Lubricants { get; }

    /// <summary>Valve and seal materials by id.</summary>
    public IReadOnlyDictionary<string, Material> Materials { get; }

    /// <summary>Compressor types by id (with their default efficiency and its basis).</summary>
    public IReadOnlyDictionary<string, CompressorType> CompressorTypes { get; }

    /// <summary>Effective rules, in file order (default first, then rules added by upper layers).</summary>
    public IReadOnlyList<RuleDefinition> Rules { get; }

    /// <summary>Effective rules by id.</summary>
    public IReadOnlyDictionary<string, RuleDefinition> RulesById { get; }

    /// <summary>Rules a layer disabled, with the layer and reason.</summary>
    public IReadOnlyList<DisabledRule> Disabled { get; }

    internal IReadOnlyList<ServiceClass> DetectedServiceClasses { get; }

    /// <summary>The layer that defined each catalogue entry, keyed "section/id" (e.g. "lubricants/mineral-vdl").</summary>
    public IReadOnlyDictionary<string, string> CatalogueLayers { get; }

    internal IReadOnlyDictionary<string, int> LayerOrder { get; }

    // Keyed by (section, id) so the evaluator looks entries up without building key strings.
    internal FrozenDictionary<(string Section, string Id), string> CatalogueLayersByPair { get; }

    /// <summary>The later (higher-precedence) of two layer names.</summary>
    internal string Later(string a, string? b) =>
        b is null || !LayerOrder.TryGetValue(b, out var ib) || (LayerOrder.TryGetValue(a, out var ia) && ia >= ib) ? a : b;
}
