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

        // Two layers whose ids differ only in case or separators could not be told apart by a request that near-misses
        // one of them, and an asset layer naming a near miss of a site layer would silently merge over the default alone.
        foreach (var group in new[] { sites, assets })
        {
            foreach (var l in group.Values.OrderBy(l => l.File, StringComparer.Ordinal))
            {
                if (LayerIds.NearMissOf(l.Id, group.Keys) is { } other && string.CompareOrdinal(other, l.Id) < 0)
                {
                    errors.Add(At(RuleFileErrorKind.DuplicateId, l, "layer/id", "layer.id",
                        $"Layer id '{l.Id}' differs from '{other}' ({group[other].File}) only in case or separators; one layer per machine or site, under one spelling."));
                }
            }
        }

        foreach (var a in assets.Values.Where(a => a.Site is not null && !sites.ContainsKey(a.Site)))
        {
            if (LayerIds.NearMissOf(a.Site!, sites.Keys) is { } site)
            {
                errors.Add(At(RuleFileErrorKind.UnknownReference, a, "layer/site", "layer.site",
                    $"No site layer is named '{a.Site}', but site layer '{site}' differs from it only in case or separators: did you mean {site}?"));
            }
        }

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

    private static RuleFileError At(RuleFileErrorKind kind, RuleLayer layer, string location, string key, string message)
    {
        layer.IdLocations.TryGetValue(location, out var at);
        return new RuleFileError(kind, layer.File, at?.Line ?? 1, at?.Column ?? 1, key, message);
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
    /// Resolves a request's site id and asset tag as <see cref="Resolve"/> does, but refuses an id that differs from a
    /// layer's id only in case or separators (a near miss: "did you mean C-204B") and an asset named with another site,
    /// and says plainly which layers applied and which ids selected none (with the nearest layer that was not applied).
    /// Every caller that evaluates a request (the service, its batch, the gate CLI) goes through this.
    /// </summary>
    /// <param name="siteId">Site id, or null.</param>
    /// <param name="assetId">Asset tag, or null.</param>
    /// <returns>The resolution or its refusal; never throws for any ids.</returns>
    public LayerResolution ResolveRequest(string? siteId, string? assetId)
    {
        if (siteId is not null && !Sites.ContainsKey(siteId) && LayerIds.NearMissOf(siteId, Sites.Keys) is { } site)
        {
            return new LayerResolution { Refusal = NearMiss(LayerIdField.Site, siteId, site) };
        }

        if (assetId is not null && !Assets.ContainsKey(assetId) && LayerIds.NearMissOf(assetId, Assets.Keys) is { } asset)
        {
            return new LayerResolution { Refusal = NearMiss(LayerIdField.Asset, assetId, asset) };
        }

        if (assetId is not null && Assets.TryGetValue(assetId, out var assetLayer) && assetLayer.Site is not null && siteId is not null && assetLayer.Site != siteId)
        {
            return new LayerResolution
            {
                Refusal = new LayerIdRefusal(LayerIdField.Site, siteId, assetLayer.Site,
                    $"Asset '{assetId}' belongs to site '{assetLayer.Site}', not '{siteId}' (its layer names its site); give site '{assetLayer.Site}' or check the asset tag."),
            };
        }

        var set = Resolve(siteId, assetId);
        var unmatched = new List<UnmatchedLayerId>(2);
        var hasSite = set.Layers.Any(l => l.Name.StartsWith("site:", StringComparison.Ordinal));
        var hasAsset = set.Layers.Any(l => l.Name.StartsWith("asset:", StringComparison.Ordinal));
        if (siteId is not null && !Sites.ContainsKey(siteId))
        {
            unmatched.Add(Unmatched(LayerIdField.Site, siteId, LayerIds.NearestOf(siteId, Sites.Keys), hasAsset ? "default and asset rules only" : "default rules only"));
        }

        if (assetId is not null && !Assets.ContainsKey(assetId))
        {
            unmatched.Add(Unmatched(LayerIdField.Asset, assetId, LayerIds.NearestOf(assetId, Assets.Keys), hasSite ? "default and site rules only" : "default rules only"));
        }

        var applied = "layers applied: " + string.Join(" ← ", set.Layers.Select(l => l.Name));
        if (unmatched.Count > 0)
        {
            applied += "; " + string.Join("; ", unmatched.Select(u => u.Message));
        }

        return new LayerResolution { Set = set, Unmatched = unmatched, Applied = applied };
    }

    private static LayerIdRefusal NearMiss(LayerIdField field, string id, string layerId)
    {
        var what = field == LayerIdField.Site ? "site" : "asset";
        return new LayerIdRefusal(field, id, layerId,
            $"No {what} layer is named '{id}', but {what} layer '{layerId}' differs from it only in case or separators: did you mean {layerId}? "
            + $"A near miss would silently drop that layer's limits, so it is refused; give the id exactly as its layer names it.");
    }

    private static UnmatchedLayerId Unmatched(LayerIdField field, string id, string? nearest, string rulesOnly)
    {
        var what = field == LayerIdField.Site ? "site" : "asset";
        var nearestName = nearest is null ? null : what + ":" + nearest;
        var message = $"no layer for {what} {id}: {rulesOnly}" + (nearestName is null ? string.Empty : $" (nearest layer {nearestName} not applied: a different {what})");
        return new UnmatchedLayerId(field, id, nearestName, message);
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
