using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Model;

namespace DischargeGuard.Rules.Provider;

/// <summary>The verdict on a candidate rule file merged over the active layers.</summary>
/// <param name="Valid">Whether the candidate parses and every merge it takes part in (and every other merge of the set) is valid.</param>
/// <param name="Place">Where the candidate sits in a rules directory: <c>default.yaml</c>, <c>sites/&lt;id&gt;.yaml</c> or <c>assets/&lt;tag&gt;.yaml</c>; null when it could not be told.</param>
/// <param name="Layer">The parsed layer, when it parses.</param>
/// <param name="Merged">The candidate's own merge (default; site over default; asset over its site), when valid.</param>
/// <param name="Errors">Every error, each with file, line, column and key; empty when valid.</param>
public sealed record RuleCandidateCheck(bool Valid, string? Place, RuleLayer? Layer, EffectiveRuleSet? Merged, IReadOnlyList<RuleFileError> Errors);

/// <summary>
/// The one routine that turns rule files into a validated set: each file parsed for its place (its folder sets its
/// kind, its name its id), then every site merged over the default and every asset over its site. The directory loader
/// (<see cref="FileRuleSetProvider.LoadDirectory"/>), the service's candidate check (<c>POST /v1/rules/check</c>) and the
/// gate's <c>rules check</c> all call it, so the three can never give a candidate different verdicts.
/// </summary>
public static class RuleSetValidation
{
    /// <summary>The kind a place in a rules directory implies, or null for a place rule files do not live in.</summary>
    /// <param name="place">A path relative to the rules directory, '/'-separated.</param>
    /// <returns>The kind, or null.</returns>
    public static LayerKind? KindOfPlace(string place)
    {
        ArgumentNullException.ThrowIfNull(place);
        if (place == "default.yaml")
        {
            return LayerKind.Default;
        }

        var slash = place.IndexOf('/', StringComparison.Ordinal);
        if (slash < 0 || place.IndexOf('/', slash + 1) >= 0 || !place.EndsWith(".yaml", StringComparison.Ordinal))
        {
            return null;
        }

        return place[..slash] switch
        {
            "sites" => LayerKind.Site,
            "assets" => LayerKind.Asset,
            _ => null,
        };
    }

    /// <summary>
    /// Parses one rule file at its place in a rules directory: the folder must match the declared kind, and the file
    /// name must be a well-formed layer id equal to the layer's id. Throws <see cref="RuleFileException"/> with every error.
    /// </summary>
    /// <param name="place">Its path relative to the rules directory (<c>default.yaml</c>, <c>sites/x.yaml</c>, <c>assets/y.yaml</c>).</param>
    /// <param name="text">The file's text.</param>
    /// <returns>The layer.</returns>
    public static RuleLayer ParseFile(string place, string text)
    {
        ArgumentNullException.ThrowIfNull(place);
        ArgumentNullException.ThrowIfNull(text);
        var kind = KindOfPlace(place) ?? throw new RuleFileException([new RuleFileError(RuleFileErrorKind.BadValue, place, 0, 0, "",
            "A rule file lives at default.yaml, sites/<site-id>.yaml or assets/<asset-tag>.yaml in the rules directory.")]);
        var layer = RuleFileParser.Parse(place, text, kind);
        if (kind == LayerKind.Default)
        {
            return layer;
        }

        var expectedId = Path.GetFileNameWithoutExtension(place);
        if (!LayerIds.IsWellFormed(expectedId))
        {
            throw new RuleFileException([new RuleFileError(RuleFileErrorKind.BadValue, place, 0, 0, "layer.id",
                $"The file name '{expectedId}' is not a layer id: letters, digits, '-', '_' or '.', beginning and ending with a letter or digit (no trailing space or dot).")]);
        }

        if (layer.Id != expectedId)
        {
            throw new RuleFileException([new RuleFileError(RuleFileErrorKind.BadValue, place, 0, 0, "layer.id", $"The layer id '{layer.Id}' differs from the file name '{expectedId}'.")]);
        }

        return layer;
    }

    /// <summary>
    /// Parses every file and merges every site and asset (see <see cref="RuleSetSnapshot.Create"/>). Files that could
    /// not be read arrive as errors and are reported with the rest. Throws <see cref="RuleFileException"/> with every error.
    /// </summary>
    /// <param name="files">Each file's place and text, or the error that kept it from being read.</param>
    /// <param name="loadedAt">Load time stamp.</param>
    /// <returns>The snapshot.</returns>
    public static RuleSetSnapshot Build(IEnumerable<(string Place, string? Text, RuleFileError? Unreadable)> files, DateTimeOffset loadedAt)
    {
        ArgumentNullException.ThrowIfNull(files);
        var layers = new List<RuleLayer>();
        var errors = new List<RuleFileError>();
        foreach (var (place, text, unreadable) in files)
        {
            if (unreadable is not null)
            {
                errors.Add(unreadable);
                continue;
            }

            try
            {
                layers.Add(ParseFile(place, text!));
            }
            catch (RuleFileException ex)
            {
                errors.AddRange(ex.Errors);
            }
        }

        return errors.Count > 0 ? throw new RuleFileException(errors) : RuleSetSnapshot.Create(layers, loadedAt);
    }

    /// <summary>
    /// Checks a candidate file as if it were written at its place over the active set: it replaces the layer at that
    /// place (or joins the set), and the whole set is built again exactly as the directory loader builds it. A candidate
    /// named without a folder takes the place its own kind and id give it.
    /// </summary>
    /// <param name="active">The layers in force.</param>
    /// <param name="name">The candidate's place (<c>sites/marlow-fen.yaml</c>), or a bare file name, or null.</param>
    /// <param name="text">The candidate's text.</param>
    /// <param name="loadedAt">Time stamp for the trial set.</param>
    /// <returns>The verdict with every located error.</returns>
    public static RuleCandidateCheck CheckCandidate(RuleSetSnapshot active, string? name, string text, DateTimeOffset loadedAt)
    {
        ArgumentNullException.ThrowIfNull(active);
        ArgumentNullException.ThrowIfNull(text);
        var place = name is not null && name.Contains('/', StringComparison.Ordinal) ? name : null;
        if (place is null)
        {
            // No folder: the file's own declaration says where it would go, and errors name the file as given.
            var bare = string.IsNullOrEmpty(name) ? "candidate.yaml" : name;
            RuleLayer declared;
            try
            {
                declared = RuleFileParser.Parse(bare, text);
            }
            catch (RuleFileException ex)
            {
                return new RuleCandidateCheck(false, null, null, null, ex.Errors);
            }

            place = declared.Kind switch
            {
                LayerKind.Default => "default.yaml",
                LayerKind.Site => "sites/" + declared.Id + ".yaml",
                _ => "assets/" + declared.Id + ".yaml",
            };
        }

        RuleLayer layer;
        try
        {
            layer = ParseFile(place, text);
        }
        catch (RuleFileException ex)
        {
            return new RuleCandidateCheck(false, place, null, null, ex.Errors);
        }

        var others = new[] { active.Default }.Concat(active.Sites.Values).Concat(active.Assets.Values)
            .Where(l => !(l.Kind == layer.Kind && (l.Kind == LayerKind.Default || l.Id == layer.Id)))
            .ToList();
        try
        {
            var trial = RuleSetSnapshot.Create([.. others, layer], loadedAt);
            var merged = layer.Kind switch
            {
                LayerKind.Default => trial.DefaultSet,
                LayerKind.Site => trial.Resolve(layer.Id, null),
                _ => trial.Resolve(layer.Site, layer.Id),
            };
            return new RuleCandidateCheck(true, place, layer, merged, []);
        }
        catch (RuleFileException ex)
        {
            return new RuleCandidateCheck(false, place, layer, null, ex.Errors);
        }
    }
}
