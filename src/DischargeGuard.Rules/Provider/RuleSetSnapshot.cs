using System.Collections.Concurrent;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Model;

namespace DischargeGuard.Rules.Provider;

/// <summary>
/// An immutable, validated set of rule files: the default layer plus every site and asset layer. Every
/// (site, asset) merge was checked when the snapshot was built; <see cref="Resolve"/> returns cached merges.
/// </summary>
public sealed class RuleSetSnapshot
{
    private readonly ConcurrentDictionary<(string? Site, string? Asset), EffectiveRuleSet> _cache = new();

    private RuleSetSnapshot(RuleLayer defaults, IReadOnlyDictionary<string, RuleLayer> sites, IReadOnlyDictionary<string, RuleLayer> assets, DateTimeOffset loadedAt)
    {
        Default = defaults;
        Sites = sites;
        Assets = assets;
        LoadedAt = loadedAt;
        DefaultSet = LayerMerger.Merge([defaults]);
        _cache[(null, null)] = DefaultSet;
    }

    /// <summary>The default layer.</summary>
    public RuleLayer Default { get; }

    /// <summary>Site layers by site id.</summary>
    public IReadOnlyDictionary<string, RuleLayer> Sites { get; }

    /// <summary>Asset layers by asset tag.</summary>
    public IReadOnlyDictionary<string, RuleLayer> Assets { get; }

    /// <summary>When the snapshot was loaded.</summary>
    public DateTimeOffset LoadedAt { get; }

    /// <summary>The default layer alone, merged.</summary>
    public EffectiveRuleSet DefaultSet { get; }

    /// <summary>The digest of the default set (health checks and logs show it).</summary>
    public string Digest => DefaultSet.Digest;

    /// <summary>
    /// Builds a snapshot from parsed layers, checking every merge (each site over the default; each asset over
    /// its site when it names one, else over the default). Throws <see cref="RuleFileException"/> with every error.
    /// </summary>
    /// <param name="layers">All layers; exactly one default.</param>
    /// <param name="loadedAt">Load time.</param>
    /// <returns>The snapshot.</returns>
    public static RuleSetSnapshot Create(IReadOnlyList<RuleLayer> layers, DateTimeOffset loadedAt)
    {
        ArgumentNullException.ThrowIfNull(layers);
        var errors = new List<RuleFileError>();
        var defaults = layers.Where(l => l.Kind == LayerKind.Default).ToList();
        if (defaults.Count != 1)
        {
            throw new RuleFileException([new RuleFileError(RuleFileErrorKind.MissingKey, "default.yaml", 0, 0, "layer.kind",
                defaults.Count == 0 ? "There is no default layer (default.yaml)." : "There is more than one default layer.")]);
        }

        Dictionary<string, RuleLayer> Index(LayerKind kind)
        {
            var d = new Dictionary<string, RuleLayer>(StringComparer.Ordinal);
            foreach (var l in layers.Where(l => l.Kind == kind))
            {
                if (!d.TryAdd(l.Id, l))
                {
                    errors.Add(new RuleFileError(RuleFileErrorKind.DuplicateId, l.File, 1, 1, "layer.id", $"Layer id '{l.Id}' is also used by {d[l.Id].File}."));
                }
            }

            return d;
        }

        var sites = Index(LayerKind.Site);
        var assets = Index(LayerKind.Asset);
        // An asset may name a site that has no file of its own: it then merges over the default alone.
        if (errors.Count > 0)
        {
            throw new RuleFileException(errors);
        }

        var snapshot = new RuleSetSnapshot(defaults[0], sites, assets, loadedAt);
        foreach (var s in sites.Keys)
        {
            Collect(errors, () => snapshot.Resolve(s, null));
        }

        foreach (var a in assets.Values)
        {
            Collect(errors, () => snapshot.Resolve(a.Site, a.Id));
        }

        if (errors.Count > 0)
        {
            throw new RuleFileException(errors.Distinct().ToList());
        }

        return snapshot;
    }

    private static void Collect(List<RuleFileError> errors, Action action)
    {
        try
        {
            action();
        }
        catch (RuleFileException ex)
        {
            errors.AddRange(ex.Errors);
        }
    }

    /// <summary>
    /// The effective rule set for a site and asset: default ← site (if a file exists) ← asset (if a file exists).
    /// An unknown site or asset id has no overrides and resolves to the layers below it.
    /// </summary>
    /// <param name="siteId">Site id, or null.</param>
    /// <param name="assetId">Asset tag, or null.</param>
    /// <returns>The merged set with its digest and layer list.</returns>
    /// <exception cref="ArgumentOutOfRangeException">The asset layer names a different site.</exception>
    public EffectiveRuleSet Resolve(string? siteId, string? assetId)
    {
        if (assetId is not null && Assets.TryGetValue(assetId, out var asset) && asset.Site is not null && siteId is not null && asset.Site != siteId)
        {
            throw new ArgumentOutOfRangeException(nameof(assetId), assetId, $"Asset '{assetId}' belongs to site '{asset.Site}', not '{siteId}'.");
        }

        // Ids without a layer resolve like absent ones; keying the cache on known ids only keeps it bounded
        // whatever callers send.
        var siteKey = siteId is not null && Sites.ContainsKey(siteId) ? siteId : null;
        var assetKey = assetId is not null && Assets.ContainsKey(assetId) ? assetId : null;
        return _cache.GetOrAdd((siteKey, assetKey), key =>
        {
            var list = new List<RuleLayer> { Default };
            var site = key.Site;
            if (key.Asset is not null && Assets.TryGetValue(key.Asset, out var a) && site is null)
            {
                site = a.Site;
            }

            if (site is not null && Sites.TryGetValue(site, out var s))
            {
                list.Add(s);
            }

            if (key.Asset is not null && Assets.TryGetValue(key.Asset, out var a2))
            {
                list.Add(a2);
            }

            return list.Count == 1 ? DefaultSet : LayerMerger.Merge(list);
        });
    }
}
