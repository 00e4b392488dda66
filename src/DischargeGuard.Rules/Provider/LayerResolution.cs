namespace DischargeGuard.Rules.Provider;

/// <summary>Which part of a request named an id: its site or its asset.</summary>
public enum LayerIdField
{
    /// <summary>The site id.</summary>
    Site,

    /// <summary>The asset tag.</summary>
    Asset,
}

/// <summary>A site id or asset tag that selects no layer: what it is, and the closest layer that was therefore not applied.</summary>
/// <param name="Field">Site or asset.</param>
/// <param name="Id">The id as given.</param>
/// <param name="NearestLayer">The nearest layer's name ("asset:C-204B") within <see cref="LayerIds.NearDistance"/>, not applied; null when none is that close.</param>
/// <param name="Message">The plain sentence, e.g. "no layer for asset C-204A: default and site rules only".</param>
public sealed record UnmatchedLayerId(LayerIdField Field, string Id, string? NearestLayer, string Message);

/// <summary>Why a request's ids were refused: a near-miss of a layer id, or an asset named with another site.</summary>
/// <param name="Field">Site or asset.</param>
/// <param name="Id">The id as given.</param>
/// <param name="Suggestion">The layer id the caller probably meant, when the refusal is a near miss.</param>
/// <param name="Message">The plain sentence (with "did you mean …" for a near miss).</param>
public sealed record LayerIdRefusal(LayerIdField Field, string Id, string? Suggestion, string Message);

/// <summary>
/// What a request's site id and asset tag resolved to (<see cref="RuleSetSnapshot.ResolveRequest"/>): the merged set,
/// the layers applied in a plain sentence and the ids that selected no layer; or the refusal.
/// </summary>
public sealed record LayerResolution
{
    /// <summary>The merged set; null when refused.</summary>
    public EffectiveRuleSet? Set { get; init; }

    /// <summary>Why the ids were refused; null when resolved.</summary>
    public LayerIdRefusal? Refusal { get; init; }

    /// <summary>Ids that selected no layer, site first.</summary>
    public IReadOnlyList<UnmatchedLayerId> Unmatched { get; init; } = [];

    /// <summary>
    /// The layers applied, plainly: "default ← site:marlow-fen ← asset:C-204B", followed for each unmatched id by its
    /// sentence ("; no layer for asset C-204A: default and site rules only (nearest layer asset:C-204B not applied)").
    /// </summary>
    public string Applied { get; init; } = string.Empty;
}
