using System.Globalization;
using DischargeGuard.Rules;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Evaluation.Contract;

/// <summary>What a rule applies to; a list is absent when it places no condition.</summary>
public sealed record AppliesToDto
{
    /// <summary>Compressor type ids (any of).</summary>
    public IReadOnlyList<string>? CompressorTypes { get; init; }

    /// <summary>Compressor type ids excluded.</summary>
    public IReadOnlyList<string>? NotCompressorTypes { get; init; }

    /// <summary>Service class ids (any of).</summary>
    public IReadOnlyList<string>? ServiceClasses { get; init; }

    /// <summary>Service class ids excluded.</summary>
    public IReadOnlyList<string>? NotServiceClasses { get; init; }

    /// <summary>Lubricant base stocks (any of).</summary>
    public IReadOnlyList<string>? BaseStocks { get; init; }

    /// <summary>Valve material ids (any of).</summary>
    public IReadOnlyList<string>? ValveMaterials { get; init; }

    /// <summary>Seal material ids (any of).</summary>
    public IReadOnlyList<string>? SealMaterials { get; init; }

    /// <summary>Stage positions (any of): only, first, intermediate, last.</summary>
    public IReadOnlyList<string>? StagePositions { get; init; }

    /// <summary>Applies only when the unloaded-running flag has this value.</summary>
    public bool? UnloadedRunning { get; init; }

    /// <summary>The same in a plain sentence ("compressor types recip-packaged-lubricated; service classes hydrocarbon").</summary>
    public required string Text { get; init; }
}

/// <summary>What one layer did to a rule, lowest layer first.</summary>
/// <param name="Layer">"default", "site:&lt;id&gt;" or "asset:&lt;tag&gt;".</param>
/// <param name="File">The layer's file, relative to the rules directory.</param>
/// <param name="Change">What it changed ("tightened the limit from 177 °C to 170 °C; widened the warning band from 12 K to 15 K").</param>
/// <param name="Limit">The limit after this layer, with its unit.</param>
/// <param name="WarningBand">The warning band after this layer, with its unit.</param>
/// <param name="Basis">The basis this layer gave (for the defining layer, the rule's own basis).</param>
/// <param name="Reason">The reason it gave.</param>
/// <param name="ApprovedBy">Who signed it off, when signed.</param>
/// <param name="ApprovedOn">When (yyyy-MM-dd), when signed.</param>
/// <param name="Reference">The sign-off's document reference.</param>
public sealed record RuleChangeDto(string Layer, string File, string Change, string Limit, string WarningBand, string? Basis, string? Reason, string? ApprovedBy, string? ApprovedOn, string? Reference);

/// <summary>A rule as it is in force for one site and asset.</summary>
public sealed record RuleInForceDto
{
    /// <summary>Rule id.</summary>
    public required string Id { get; init; }

    /// <summary>Title.</summary>
    public required string Title { get; init; }

    /// <summary>Quantities checked.</summary>
    public required IReadOnlyList<string> Quantities { get; init; }

    /// <summary>info, warning or violation.</summary>
    public required string Severity { get; init; }

    /// <summary>upper or lower.</summary>
    public required string Direction { get; init; }

    /// <summary>The limit in force as a number with its unit (°C, K, or 1 for a ratio), when it is a fixed value.</summary>
    public QuantityDto? Limit { get; init; }

    /// <summary>The limit in force in words with its units (also for catalogue, input and greater-of limits).</summary>
    public required string LimitText { get; init; }

    /// <summary>The warning band in force (K, or 1 for a ratio rule); absent when there is none.</summary>
    public QuantityDto? WarningBand { get; init; }

    /// <summary>What the rule applies to.</summary>
    public required AppliesToDto AppliesTo { get; init; }

    /// <summary>The basis of the limit in force: the basis of the layer that last changed it (never a lower layer's, whose numbers it replaced).</summary>
    public required string Basis { get; init; }

    /// <summary>The layer that set the limit in force.</summary>
    public required string LimitLayer { get; init; }

    /// <summary>Why the limit was loosened, when a layer loosened it.</summary>
    public string? Reason { get; init; }

    /// <summary>Who signed off the limit (special services), when signed.</summary>
    public string? ApprovedBy { get; init; }

    /// <summary>When (yyyy-MM-dd).</summary>
    public string? ApprovedOn { get; init; }

    /// <summary>The sign-off's document reference.</summary>
    public string? Reference { get; init; }

    /// <summary>Every layer that touched the rule, lowest first (default → site → asset), each with what it changed and its basis.</summary>
    public required IReadOnlyList<RuleChangeDto> Chain { get; init; }
}

/// <summary>A rule a layer disabled, with the chain that led there.</summary>
/// <param name="RuleId">The rule.</param>
/// <param name="Layer">The layer that disabled it.</param>
/// <param name="Reason">Why.</param>
/// <param name="Chain">Every layer that touched the rule, ending with the one that disabled it.</param>
public sealed record DisabledRuleDto(string RuleId, string Layer, string Reason, IReadOnlyList<RuleChangeDto> Chain);

/// <summary>The limits in force for a site and asset (<c>dischargeguard rules show --format json</c>; the same rules as <c>GET /v1/rules</c>).</summary>
/// <param name="Site">The site id asked for.</param>
/// <param name="Asset">The asset tag asked for.</param>
/// <param name="Digest">The merged rule set's digest.</param>
/// <param name="Layers">Layers applied, lowest first.</param>
/// <param name="Applied">Which layers applied, in a sentence.</param>
/// <param name="Unmatched">Ids with no layer, with the nearest layer not applied.</param>
/// <param name="Rules">Each rule in force.</param>
/// <param name="Disabled">Rules a layer disabled.</param>
/// <param name="Cautions">The cautions every answer carries.</param>
public sealed record LimitsInForceDto(string? Site, string? Asset, string Digest, IReadOnlyList<LayerDto> Layers, string Applied,
    IReadOnlyList<UnmatchedLayerDto> Unmatched, IReadOnlyList<RuleInForceDto> Rules, IReadOnlyList<DisabledRuleDto> Disabled, IReadOnlyList<string> Cautions);

/// <summary>Builds the limits-in-force view of a merged rule set; shared by the service and the gate CLI.</summary>
public static class RulesInForce
{
    /// <summary>Each rule in force, in rule-set order.</summary>
    /// <param name="set">The merged set.</param>
    /// <returns>The rules.</returns>
    public static IReadOnlyList<RuleInForceDto> Rules(EffectiveRuleSet set)
    {
        ArgumentNullException.ThrowIfNull(set);
        return set.Rules.Select(Of).ToArray();
    }

    /// <summary>Each disabled rule with its chain.</summary>
    /// <param name="set">The merged set.</param>
    /// <returns>The rules.</returns>
    public static IReadOnlyList<DisabledRuleDto> Disabled(EffectiveRuleSet set)
    {
        ArgumentNullException.ThrowIfNull(set);
        return set.Disabled.Select(d => new DisabledRuleDto(d.RuleId, d.Layer, d.Reason, d.Chain.Select(Change).ToArray())).ToArray();
    }

    /// <summary>The whole view for a resolved site and asset.</summary>
    /// <param name="resolution">A resolution that was not refused.</param>
    /// <param name="site">The site asked for.</param>
    /// <param name="asset">The asset asked for.</param>
    /// <param name="cautions">The cautions to carry.</param>
    /// <returns>The view.</returns>
    public static LimitsInForceDto Of(LayerResolution resolution, string? site, string? asset, IReadOnlyList<string> cautions)
    {
        ArgumentNullException.ThrowIfNull(resolution);
        var set = resolution.Set ?? throw new ArgumentException("The resolution was refused.", nameof(resolution));
        var ruleSet = RuleSetDto.Of(resolution);
        return new LimitsInForceDto(site, asset, set.Digest, ruleSet.Layers, resolution.Applied, ruleSet.Unmatched ?? [], Rules(set), Disabled(set), cautions);
    }

    private static RuleInForceDto Of(RuleDefinition r)
    {
        var dimension = r.Quantities[0].Dimension();
        var limit = LimitText.Value(r.Limit, dimension);
        var band = LimitText.Band(r.WarningBand, dimension);
        return new RuleInForceDto
        {
            Id = r.Id,
            Title = r.Title,
            Quantities = r.Quantities.Select(q => q.ToName()).ToArray(),
            Severity = r.Severity.ToString().ToLowerInvariant(),
            Direction = r.Direction == LimitDirection.Lower ? "lower" : "upper",
            Limit = limit is { } l ? new QuantityDto(l.Value, l.Unit) : null,
            LimitText = LimitText.Of(r),
            WarningBand = r.WarningBand > 0 ? new QuantityDto(band.Value, band.Unit) : null,
            AppliesTo = AppliesTo(r.AppliesTo),
            Basis = r.Basis,
            LimitLayer = r.LimitLayer,
            Reason = r.LoosenedReason,
            ApprovedBy = r.SignOff?.ApprovedBy,
            ApprovedOn = r.SignOff?.ApprovedOn.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture),
            Reference = r.SignOff?.Reference,
            Chain = r.Chain.Select(Change).ToArray(),
        };
    }

    private static RuleChangeDto Change(RuleChange c) => new(c.Layer, c.File, c.Change, c.Limit, c.WarningBand, c.Basis, c.Reason,
        c.SignOff?.ApprovedBy, c.SignOff?.ApprovedOn.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture), c.SignOff?.Reference);

    private static AppliesToDto AppliesTo(AppliesTo a)
    {
        static IReadOnlyList<string>? List(IReadOnlyList<string> l) => l.Count == 0 ? null : l;
        var positions = a.StagePositions.Select(p => p.ToString().ToLowerInvariant()).ToArray();
        var parts = new List<string>();
        void Add(string what, IReadOnlyList<string> ids)
        {
            if (ids.Count > 0)
            {
                parts.Add(what + " " + string.Join(", ", ids));
            }
        }

        Add("compressor types", a.CompressorTypes);
        Add("not compressor types", a.NotCompressorTypes);
        Add("service classes", a.ServiceClasses);
        Add("not service classes", a.NotServiceClasses);
        Add("base stocks", a.BaseStocks);
        Add("valve materials", a.ValveMaterials);
        Add("seal materials", a.SealMaterials);
        Add("stage positions", positions);
        if (a.UnloadedRunning is { } u)
        {
            parts.Add(u ? "when running unloaded" : "when not running unloaded");
        }

        Add("discharge materials", a.DischargeMaterials);
        if (a.PartialPressureAbovePascals.Count > 0)
        {
            parts.Add("partial pressure at discharge above " + string.Join(" or ", a.PartialPressureAbovePascals
                .OrderBy(kv => kv.Key, StringComparer.Ordinal)
                .Select(kv => string.Create(CultureInfo.InvariantCulture, $"{kv.Value / 1000:0.###} kPa {kv.Key}"))));
        }

        if (a.DischargePressureAbovePascals is { } pd)
        {
            parts.Add(string.Create(CultureInfo.InvariantCulture, $"discharge pressure above {pd / 1000:0.###} kPa"));
        }

        void Flag(bool? value, string yes, string no)
        {
            if (value is { } v)
            {
                parts.Add(v ? yes : no);
            }
        }

        Flag(a.ValveMaterialSourService, "valve material qualified for sour service", "valve material not qualified for sour service");
        Flag(a.SpringMaterialSourService, "valve spring material qualified for sour service", "valve spring material not qualified for sour service");
        Flag(a.SealMaterialSourService, "seal material suited to H2S", "seal material not suited to H2S");
        Flag(a.SealMaterialRgdRated, "seal material rated for rapid gas decompression", "seal material not rated for rapid gas decompression");

        return new AppliesToDto
        {
            CompressorTypes = List(a.CompressorTypes),
            NotCompressorTypes = List(a.NotCompressorTypes),
            ServiceClasses = List(a.ServiceClasses),
            NotServiceClasses = List(a.NotServiceClasses),
            BaseStocks = List(a.BaseStocks),
            ValveMaterials = List(a.ValveMaterials),
            SealMaterials = List(a.SealMaterials),
            StagePositions = positions.Length == 0 ? null : positions,
            UnloadedRunning = a.UnloadedRunning,
            Text = parts.Count == 0 ? "every stage" : string.Join("; ", parts),
        };
    }
}
