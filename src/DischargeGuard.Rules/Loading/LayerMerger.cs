using DischargeGuard.Rules.Model;

namespace DischargeGuard.Rules.Loading;

/// <summary>
/// Merges layers, later wins: default ← site ← asset. A layer may add catalogue entries and rules with new ids,
/// tighten a rule, loosen it only with a reason, disable it only with a reason, and set the limit of a
/// special-service rule only with a sign-off. Anything else is an error naming the file, line and key.
/// </summary>
public static class LayerMerger
{
    private static readonly string[] BaseStocks = ["mineral", "pao", "diester", "polyolester", "pag", "silicone", "phosphate-ester", "other-synthetic"];

    /// <summary>Merges the layers; throws <see cref="RuleFileException"/> listing every error.</summary>
    /// <param name="layers">Default first, then site, then asset.</param>
    /// <returns>The effective rule set.</returns>
    public static EffectiveRuleSet Merge(IReadOnlyList<RuleLayer> layers)
    {
        ArgumentNullException.ThrowIfNull(layers);
        if (layers.Count == 0 || layers[0].Kind != LayerKind.Default)
        {
            throw new ArgumentOutOfRangeException(nameof(layers), "The first layer is the default layer.");
        }

        var errors = new List<RuleFileError>();
        var services = new List<ServiceClass>();
        var lubricants = new List<Lubricant>();
        var materials = new List<Material>();
        var types = new List<CompressorType>();
        var rules = new List<RuleDefinition>();
        var disabled = new List<DisabledRule>();
        var owner = new Dictionary<string, string>(StringComparer.Ordinal);

        foreach (var layer in layers)
        {
            if (layer != layers[0] && layer.Kind == LayerKind.Default)
            {
                throw new ArgumentOutOfRangeException(nameof(layers), "Only the first layer is a default layer.");
            }

            AddCatalogue(layer, "serviceClasses", layer.ServiceClasses, s => s.Id, services, owner, errors);
            AddCatalogue(layer, "lubricants", layer.Lubricants, s => s.Id, lubricants, owner, errors);
            AddCatalogue(layer, "materials", layer.Materials, s => s.Id, materials, owner, errors);
            AddCatalogue(layer, "compressorTypes", layer.CompressorTypes, s => s.Id, types, owner, errors);
            foreach (var r in layer.Rules)
            {
                if (rules.Any(x => x.Id == r.Id) || disabled.Any(d => d.RuleId == r.Id))
                {
                    Err(errors, RuleFileErrorKind.DuplicateId, layer, r.Location, "rules.id", $"Rule '{r.Id}' is already defined in a lower layer; change it under 'overrides' instead.");
                    continue;
                }

                var dimension = r.Quantities[0].Dimension();
                rules.Add(r with
                {
                    LimitLayer = layer.Name,
                    Chain = [new RuleChange(layer.Name, layer.File, "defined the rule", LimitText.Of(r), LimitText.BandOf(r.WarningBand, dimension), r.Basis, null, r.SignOff)],
                });
            }

            foreach (var o in layer.Overrides)
            {
                ApplyOverride(layer, o, rules, disabled, errors);
            }
        }

        CheckReferences(layers, rules, services, materials, types, errors);
        if (errors.Count > 0)
        {
            throw new RuleFileException(errors);
        }

        var infos = layers.Select(l => new LayerInfo(l.Name, l.File, l.Digest)).ToArray();
        return new EffectiveRuleSet(infos, services, lubricants, materials, types, rules, disabled, owner);
    }

    private static void AddCatalogue<T>(RuleLayer layer, string section, IReadOnlyList<T> items, Func<T, string> id, List<T> into, Dictionary<string, string> owner, List<RuleFileError> errors)
    {
        foreach (var item in items)
        {
            var key = section + "/" + id(item);
            if (owner.TryGetValue(key, out var first))
            {
                layer.IdLocations.TryGetValue(key, out var loc);
                Err(errors, RuleFileErrorKind.DuplicateId, layer, loc, section + ".id",
                    $"'{id(item)}' is already defined in layer '{first}'; an upper layer adds entries under new ids and does not redefine them.");
                continue;
            }

            owner[key] = layer.Name;
            into.Add(item);
        }
    }

    private static void ApplyOverride(RuleLayer layer, RuleOverride o, List<RuleDefinition> rules, List<DisabledRule> disabled, List<RuleFileError> errors)
    {
        var index = rules.FindIndex(r => r.Id == o.RuleId);
        if (index < 0)
        {
            var why = disabled.Any(d => d.RuleId == o.RuleId) ? "it was disabled by a lower layer" : "no lower layer defines it";
            Err(errors, RuleFileErrorKind.UnknownReference, layer, o.Location, "overrides.rule", $"Cannot override rule '{o.RuleId}': {why}.");
            return;
        }

        var rule = rules[index];
        if (rule.Prohibited)
        {
            Err(errors, RuleFileErrorKind.LayeringViolation, layer, o.Location, "overrides.rule",
                $"'{o.RuleId}' is a prohibited combination: no layer may override, loosen or disable it, whatever the sign-off. Change the equipment or the service instead.");
            return;
        }

        var raw = o.Raw;
        var hasLimit = raw?.Get("limit") is not null;
        var hasBand = raw?.Get("warningBand") is not null;
        if (!o.Disabled && !hasLimit && !hasBand)
        {
            Err(errors, RuleFileErrorKind.MissingKey, layer, o.Location, "overrides.limit", $"The override of '{o.RuleId}' changes nothing; give limit, warningBand, or disabled: true with a reason.");
            return;
        }

        if (o.Disabled)
        {
            if (hasLimit || hasBand)
            {
                Err(errors, RuleFileErrorKind.BadValue, layer, o.Location, "overrides.disabled", $"A disabled rule takes no limit or warningBand ('{o.RuleId}').");
                return;
            }

            if (o.Reason is null)
            {
                Err(errors, RuleFileErrorKind.LayeringViolation, layer, KeyLoc(layer, o, "disabled"), "overrides.reason", $"Disabling '{o.RuleId}' needs a reason.");
                return;
            }

            if (rule.RequiresSignedLimit && o.SignOff is null)
            {
                Err(errors, RuleFileErrorKind.LayeringViolation, layer, o.Location, "overrides.approvedBy", $"'{o.RuleId}' is a special-service rule; disabling it needs approvedBy and approvedOn as well as a reason.");
                return;
            }

            rules.RemoveAt(index);
            disabled.Add(new DisabledRule(o.RuleId, layer.Name, o.Reason)
            {
                Chain = [.. rule.Chain, new RuleChange(layer.Name, layer.File, "disabled the rule", "none (disabled)", "none", o.Basis, o.Reason, o.SignOff)],
            });
            return;
        }

        var ctx = new Context(layer.File);
        var dimension = rule.Quantities[0].Dimension();
        var newLimit = hasLimit ? RuleFileParser.ParseLimit(ctx, raw!, "overrides.limit", dimension) : rule.Limit;
        var newBand = hasBand ? RuleFileParser.ParseBand(ctx, raw!, "overrides.warningBand", dimension) : rule.WarningBand;
        if (ctx.Errors.Count > 0)
        {
            errors.AddRange(ctx.Errors);
            return;
        }

        if (hasLimit && rule.Limit is null && !rule.RequiresSignedLimit)
        {
            Err(errors, RuleFileErrorKind.BadValue, layer, KeyLoc(layer, o, "limit"), "overrides.limit",
                $"'{o.RuleId}' is a note or a set-point proposal and has no limit to override; add a rule under a new id instead.");
            return;
        }

        var updated = rule;
        var changes = new List<string>(2);
        var oldLimitText = LimitText.Of(rule);
        var newLimitText = LimitText.Of(newLimit, dimension, rule.RequiresSignedLimit);
        if (hasLimit && rule.RequiresSignedLimit && rule.Limit is null)
        {
            if (o.SignOff is null)
            {
                Err(errors, RuleFileErrorKind.LayeringViolation, layer, o.Location, "overrides.approvedBy",
                    $"'{o.RuleId}' has no default limit; a layer that sets one names the engineer who signed it off (approvedBy, approvedOn).");
                return;
            }

            updated = updated with { Limit = newLimit, LimitLayer = layer.Name, SignOff = o.SignOff, LoosenedReason = null };
            changes.Add($"set the signed limit {newLimitText}");
        }
        else if (hasLimit)
        {
            var cmp = Compare(rule.Direction, rule.Limit!, newLimit!);
            if (cmp > 0 && o.Reason is null)
            {
                var how = cmp == 2 ? "is not comparable with the one below it, so it may loosen it" : "loosens it";
                Err(errors, RuleFileErrorKind.LayeringViolation, layer, KeyLoc(layer, o, "limit"), "overrides.reason",
                    $"The new limit of '{o.RuleId}' {how}; loosening needs a reason (for example the manufacturer's data sheet that allows it).");
                return;
            }

            updated = updated with
            {
                Limit = newLimit,
                LimitLayer = layer.Name,
                LoosenedReason = cmp > 0 ? o.Reason : null,
                SignOff = o.SignOff ?? (rule.RequiresSignedLimit ? null : rule.SignOff),
            };
            changes.Add(cmp switch
            {
                < 0 => $"tightened the limit from {oldLimitText} to {newLimitText}",
                0 => $"restated the limit {newLimitText}",
                1 => $"loosened the limit from {oldLimitText} to {newLimitText}",
                _ => $"replaced the limit {oldLimitText} with {newLimitText} (not comparable, so taken as a loosening)",
            });
            if (rule.RequiresSignedLimit && o.SignOff is null)
            {
                Err(errors, RuleFileErrorKind.LayeringViolation, layer, o.Location, "overrides.approvedBy", $"'{o.RuleId}' is a special-service rule; a changed limit needs a new sign-off (approvedBy, approvedOn).");
                return;
            }
        }

        if (hasBand)
        {
            if (newBand < rule.WarningBand && o.Reason is null)
            {
                Err(errors, RuleFileErrorKind.LayeringViolation, layer, KeyLoc(layer, o, "warningBand"), "overrides.reason", $"Narrowing the warning band of '{o.RuleId}' loosens it; it needs a reason.");
                return;
            }

            updated = updated with { WarningBand = newBand };
            if (newBand < rule.WarningBand)
            {
                updated = updated with { LoosenedReason = o.Reason, LimitLayer = layer.Name };
            }

            var (from, to) = (LimitText.BandOf(rule.WarningBand, dimension), LimitText.BandOf(newBand, dimension));
            changes.Add(newBand > rule.WarningBand ? $"widened the warning band from {from} to {to}"
                : newBand < rule.WarningBand ? $"narrowed the warning band from {from} to {to}"
                : $"restated the warning band {to}");
        }

        // The basis shown with the rule is the basis of the limit in force: once a layer changes the limit or band, the
        // lower layer's basis (which names its own numbers) would contradict it, so it moves to the chain and the layer's
        // own basis (or reason, or sign-off) takes its place.
        var basis = o.Basis ?? o.Reason
            ?? (o.SignOff is { } so ? $"limit signed off by {so.ApprovedBy} on {so.ApprovedOn:yyyy-MM-dd}{(so.Reference is null ? string.Empty : " (" + so.Reference + ")")}" : null);
        updated = updated with
        {
            Basis = layer.Name + ": " + (basis ?? "the layer states no basis for this change; the bases of the layers below are in the rule's chain"),
            Chain = [.. rule.Chain, new RuleChange(layer.Name, layer.File, string.Join("; ", changes), LimitText.Of(updated), LimitText.BandOf(updated.WarningBand, dimension), o.Basis, o.Reason, o.SignOff)],
        };
        rules[index] = updated;
    }

    /// <summary>-1 tighter, 0 same, 1 looser, 2 not comparable (treated as possibly looser).</summary>
    internal static int Compare(LimitDirection direction, RuleLimit old, RuleLimit @new)
    {
        int sign;
        if (old.Source != @new.Source)
        {
            return 2;
        }

        if (old.Source == LimitSource.GreaterOfFixedAndFractionOfPredicted)
        {
            var a = @new.AtLeastKelvin.CompareTo(old.AtLeastKelvin);
            var b = @new.FractionOfPredicted.CompareTo(old.FractionOfPredicted);
            if (a == 0 && b == 0)
            {
                return 0;
            }

            if (a <= 0 && b <= 0)
            {
                return -1;
            }

            return a >= 0 && b >= 0 ? 1 : 2;
        }

        sign = Math.Sign(@new.Offset - old.Offset);
        if (direction == LimitDirection.Lower)
        {
            sign = -sign;
        }

        return sign;
    }

    private static void CheckReferences(IReadOnlyList<RuleLayer> layers, List<RuleDefinition> rules, List<ServiceClass> services,
        List<Material> materials, List<CompressorType> types, List<RuleFileError> errors)
    {
        var typeIds = types.Select(t => t.Id).ToHashSet(StringComparer.Ordinal);
        var serviceIds = services.Select(t => t.Id).ToHashSet(StringComparer.Ordinal);
        var valveIds = materials.Where(m => m.Use == MaterialUse.Valve).Select(t => t.Id).ToHashSet(StringComparer.Ordinal);
        var sealIds = materials.Where(m => m.Use == MaterialUse.Seal).Select(t => t.Id).ToHashSet(StringComparer.Ordinal);
        foreach (var r in rules)
        {
            var layer = layers.FirstOrDefault(l => l.File == r.Location?.File) ?? layers[0];
            void Check(IEnumerable<string> ids, HashSet<string> known, string key, string what)
            {
                foreach (var id in ids.Where(i => !known.Contains(i)))
                {
                    Err(errors, RuleFileErrorKind.UnknownReference, layer, r.Location, $"rules[{r.Id}].appliesTo.{key}", $"Unknown {what} '{id}'; known: {string.Join(", ", known.Order(StringComparer.Ordinal))}.");
                }
            }

            Check(r.AppliesTo.CompressorTypes.Concat(r.AppliesTo.NotCompressorTypes), typeIds, "compressorTypes", "compressor type");
            Check(r.AppliesTo.ServiceClasses.Concat(r.AppliesTo.NotServiceClasses), serviceIds, "serviceClasses", "service class");
            Check(r.AppliesTo.ValveMaterials, valveIds, "valveMaterials", "valve material");
            Check(r.AppliesTo.SealMaterials, sealIds, "sealMaterials", "seal material");
            Check(r.AppliesTo.BaseStocks, BaseStocks.ToHashSet(StringComparer.Ordinal), "baseStocks", "base stock");
        }
    }

    private static SourceLocation KeyLoc(RuleLayer layer, RuleOverride o, string key) =>
        o.Raw?.Key(key) is { } k ? new SourceLocation(layer.File, k.Start.Line, k.Start.Column) : o.Location;

    private static void Err(List<RuleFileError> errors, RuleFileErrorKind kind, RuleLayer layer, SourceLocation? loc, string key, string message) =>
        errors.Add(new RuleFileError(kind, layer.File, loc?.Line ?? 0, loc?.Column ?? 0, key, message));
}
