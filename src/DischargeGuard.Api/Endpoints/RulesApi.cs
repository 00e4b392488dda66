using System.Text;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Provider;
using DischargeGuard.Rules.Units;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Mvc;
using UnitsNet;

namespace DischargeGuard.Api.Endpoints;

/// <summary>The active rules: effective layers and catalogues, and a dry check of a candidate file.</summary>
public static partial class RulesApi
{
    /// <summary>Largest candidate rule file accepted by the check, bytes.</summary>
    public const int MaxRuleFileBytes = 512 * 1024;

    /// <summary>Maps <c>/v1/rules</c>.</summary>
    public static RouteGroupBuilder MapRules(this IEndpointRouteBuilder routes)
    {
        var group = routes.MapGroup("/v1/rules").WithTags("Rules").RequireKey();
        group.MapGet("/", GetRules)
            .WithName("GetRules")
            .WithSummary("The effective rule set for a site and asset: layers applied, catalogues, and each rule's limit in force with the layer, basis, reason and sign-off that set it and the chain of layers that touched it.")
            .WithDescription("A site or asset id that differs from a layer's only in case or separators is refused (400, keyed by the query name, with \"did you mean\"); an id with no layer answers the layers below it and says so in `applied` and `unmatched`.");
        group.MapPost("/check", CheckRuleFile)
            .WithName("CheckRuleFile")
            .WithSummary("Validate a candidate rule file (YAML in the body); nothing is activated.")
            .Accepts<string>("application/yaml", "text/yaml", "text/plain")
            .RequireRoles(Policies.Admin);
        group.MapPost("/reload", ReloadRules)
            .WithName("ReloadRules")
            .WithSummary("Re-read the rule directory now. On success the new digest is active; on a broken set (422) the last good set stays in force.")
            .RequireRoles(Policies.Admin)
            .ProducesProblem(StatusCodes.Status422UnprocessableEntity);
        return group;
    }

    [LoggerMessage(EventId = 30, Level = LogLevel.Information, Message = "Rules reloaded on request of {Caller}: digest {RuleDigest}")]
    private static partial void LogReloaded(ILogger logger, string ruleDigest, string caller);

    [LoggerMessage(EventId = 31, Level = LogLevel.Warning, Message = "Rule reload requested by {Caller} refused with {ErrorCount} errors; {RuleDigest} stays in force")]
    private static partial void LogReloadRefused(ILogger logger, int errorCount, string ruleDigest, string caller);

    internal static Results<Ok<RulesDocument>, ValidationProblem> GetRules([FromQuery] string? site, [FromQuery] string? asset, IRuleSetProvider provider)
    {
        var snapshot = provider.Current;
        // The same resolution as an evaluation: a near miss of a layer id, or an asset with another site, is refused, never
        // answered with a set that silently lacks the layer.
        var resolution = snapshot.ResolveRequest(NullIfEmpty(site), NullIfEmpty(asset));
        if (resolution.Refusal is { } refused)
        {
            return Problems.Validation(new Dictionary<string, string[]> { [refused.Field == LayerIdField.Site ? "site" : "asset"] = [refused.Message] });
        }

        return TypedResults.Ok(RulesDocument.From(resolution, snapshot, provider.LastError));
    }

    private static string? NullIfEmpty(string? value) => string.IsNullOrEmpty(value) ? null : value;

    internal static async Task<Results<Ok<RuleReloadResult>, ProblemHttpResult>> ReloadRules(
        HttpContext http, IRuleSetProvider provider, ILoggerFactory loggers, CancellationToken cancellationToken)
    {
        var result = await provider.ReloadAsync(cancellationToken).ConfigureAwait(false);
        var caller = EvaluationsApi.CallerOf(http);
        var logger = loggers.CreateLogger("DischargeGuard.Rules");
        if (result.Succeeded)
        {
            LogReloaded(logger, result.Digest, caller);
            return TypedResults.Ok(new RuleReloadResult(result.Digest, provider.Current.LoadedAt));
        }

        LogReloadRefused(logger, result.Errors.Count, result.Digest, caller);
        return Problems.AsResult(Problems.RuleSetInvalid(result.Digest, result.Errors.Select(RuleErrorDto.From).ToArray()));
    }

    internal static async Task<Results<Ok<RuleCheckResult>, ValidationProblem>> CheckRuleFile(
        HttpRequest request, [FromQuery] string? name, IRuleSetProvider provider, TimeProvider time, CancellationToken cancellationToken)
    {
        // A place in the rules directory (sites/marlow-fen.yaml), or a bare file name whose own kind and id give the place.
        var fileName = string.IsNullOrWhiteSpace(name) ? null : name;
        if (fileName is not null && (fileName.Contains('/', StringComparison.Ordinal)
                ? RuleSetValidation.KindOfPlace(fileName) is null
                : fileName.Contains('\\', StringComparison.Ordinal) || fileName is "." or ".." || !fileName.EndsWith(".yaml", StringComparison.Ordinal)))
        {
            return Problems.Validation(new Dictionary<string, string[]>
            {
                ["name"] = ["Give the candidate's place in the rules directory (default.yaml, sites/<site-id>.yaml, assets/<asset-tag>.yaml) or a bare file name ending .yaml."],
            });
        }
        using var reader = new StreamReader(request.Body, new UTF8Encoding(false, true));
        var buffer = new char[MaxRuleFileBytes + 1];
        int length;
        try
        {
            length = await reader.ReadBlockAsync(buffer.AsMemory(), cancellationToken).ConfigureAwait(false);
        }
        catch (DecoderFallbackException)
        {
            throw new BadHttpRequestException("A rule file is UTF-8 text; the body holds bytes that are not valid UTF-8.", StatusCodes.Status400BadRequest);
        }

        if (length > MaxRuleFileBytes)
        {
            throw new BadHttpRequestException("Rule file too large.", StatusCodes.Status413PayloadTooLarge);
        }

        // Merged over the active layers by the same routine as the directory loader and the gate's rules check.
        var check = RuleSetValidation.CheckCandidate(provider.Current, fileName, new string(buffer, 0, length), time.GetUtcNow());
        return TypedResults.Ok(new RuleCheckResult(check.Valid, check.Layer?.Name, check.Layer?.Digest, check.Errors.Select(RuleErrorDto.From).ToArray())
        {
            Place = check.Place,
            MergedDigest = check.Merged?.Digest,
            MergedLayers = check.Merged?.Layers.Select(l => l.Name).ToArray(),
        });
    }
}

/// <summary>The rule set in force after a successful reload.</summary>
public sealed record RuleReloadResult(string Digest, DateTimeOffset LoadedAt);

/// <summary>
/// The effective rule set as <c>GET /v1/rules</c> returns it: layers with digests, catalogues, and each rule's limit and
/// warning band in force with what it applies to, the layer that set it with its basis, reason and sign-off, and the chain
/// of layers that touched it.
/// </summary>
public sealed record RulesDocument(
    string Digest,
    IReadOnlyList<RuleLayerDto> Layers,
    DateTimeOffset LoadedAt,
    IReadOnlyList<RuleErrorDto> LastReloadErrors,
    CataloguesDto Catalogues,
    IReadOnlyList<RuleInForceDto> Rules,
    IReadOnlyList<DisabledRuleDto> Disabled)
{
    internal static RulesDocument From(LayerResolution resolution, RuleSetSnapshot snapshot, ReloadResult? lastError) => From(resolution.Set!, snapshot, lastError) with
    {
        Applied = resolution.Applied,
        Unmatched = resolution.Unmatched.Select(u => new Evaluation.Contract.UnmatchedLayerDto(u.Field == LayerIdField.Site ? "site" : "asset", u.Id, u.NearestLayer, u.Message)).ToArray(),
    };

    /// <summary>The layers applied in a plain sentence, as an evaluation's <c>ruleSet.applied</c> says it.</summary>
    public string Applied { get; init; } = string.Empty;

    /// <summary>The site or asset asked for that has no layer, with the nearest layer not applied.</summary>
    public IReadOnlyList<Evaluation.Contract.UnmatchedLayerDto> Unmatched { get; init; } = [];

    private static RulesDocument From(EffectiveRuleSet set, RuleSetSnapshot snapshot, ReloadResult? lastError) => new(
        set.Digest,
        set.Layers.Select(l => new RuleLayerDto(l.Name, l.File, l.Digest)).ToArray(),
        snapshot.LoadedAt,
        lastError?.Errors.Select(RuleErrorDto.From).ToArray() ?? [],
        new CataloguesDto(
            set.Lubricants.Values.OrderBy(l => l.Id, StringComparer.Ordinal).Select(l => new LubricantDto(l.Id, l.Title, l.BaseStock, l.Class, Celsius(l.FlashPoint), Celsius(l.AutoignitionTemperature), Celsius(l.RatedMaxDischarge), l.Basis)).ToArray(),
            Materials(set, MaterialUse.Valve),
            Materials(set, MaterialUse.Seal),
            set.CompressorTypes.Values.OrderBy(c => c.Id, StringComparer.Ordinal).Select(c => new CompressorTypeDto(c.Id, c.Title, c.Family, c.Lubricated, c.EfficiencyKind == EfficiencyKind.Polytropic ? "polytropic" : "isentropic", c.DefaultEfficiency, c.EfficiencyBasis, c.PredictionIsUpperBound)).ToArray(),
            set.ServiceClasses.Values.OrderBy(s => s.Id, StringComparer.Ordinal).Select(s => new ServiceClassDto(s.Id, s.Title, s.Detection.ToString())).ToArray())
        {
            RingMaterials = Materials(set, MaterialUse.Ring),
            SpringMaterials = Materials(set, MaterialUse.Spring),
            DischargeMaterials = DischargeGuard.Rules.Model.DischargeMaterials.All,
        },
        RulesInForce.Rules(set),
        RulesInForce.Disabled(set));

    private static MaterialDto[] Materials(EffectiveRuleSet set, MaterialUse use) =>
        set.Materials.Values.Where(m => m.Use == use).OrderBy(m => m.Id, StringComparer.Ordinal)
            .Select(m => new MaterialDto(m.Id, m.Title, Celsius(m.ContinuousLimit), m.Basis)).ToArray();

    private static Evaluation.Contract.QuantityDto? Celsius(Temperature? t) => t is { } v ? new(Math.Round(v.DegreesCelsius, 3), "°C") : null;
}

/// <summary>A layer.</summary>
public sealed record RuleLayerDto(string Name, string File, string Digest);

/// <summary>A rule-file error with its location.</summary>
public sealed record RuleErrorDto(string Kind, string File, long Line, long Column, string Key, string Message)
{
    internal static RuleErrorDto From(RuleFileError e) => new(e.Kind.ToString(), e.File, e.Line, e.Column, e.Key, e.Message);
}

/// <summary>The catalogues of the effective set.</summary>
public sealed record CataloguesDto(
    IReadOnlyList<LubricantDto> Lubricants,
    IReadOnlyList<MaterialDto> ValveMaterials,
    IReadOnlyList<MaterialDto> SealMaterials,
    IReadOnlyList<CompressorTypeDto> CompressorTypes,
    IReadOnlyList<ServiceClassDto> ServiceClasses)
{
    /// <summary>Piston ring, rider band and packing materials (non-lubricated cylinders), for <c>equipment.ringMaterial</c>.</summary>
    public IReadOnlyList<MaterialDto> RingMaterials { get; init; } = [];

    /// <summary>Valve spring materials, for <c>equipment.springMaterial</c>.</summary>
    public IReadOnlyList<MaterialDto> SpringMaterials { get; init; } = [];

    /// <summary>The accepted discharge-side pressure-part materials, for <c>equipment.dischargeMaterial</c>.</summary>
    public IReadOnlyList<string> DischargeMaterials { get; init; } = [];
}

/// <summary>A lubricant.</summary>
public sealed record LubricantDto(string Id, string Title, string BaseStock, string? Class, Evaluation.Contract.QuantityDto? FlashPoint,
    Evaluation.Contract.QuantityDto? AutoignitionTemperature, Evaluation.Contract.QuantityDto? RatedMaxDischarge, string Basis);

/// <summary>A valve or seal material.</summary>
public sealed record MaterialDto(string Id, string Title, Evaluation.Contract.QuantityDto? ContinuousLimit, string Basis);

/// <summary>A compressor type and its default efficiency.</summary>
public sealed record CompressorTypeDto(string Id, string Title, string Family, bool Lubricated, string EfficiencyKind, double? DefaultEfficiency, string EfficiencyBasis, bool PredictionIsUpperBound);

/// <summary>A service class.</summary>
public sealed record ServiceClassDto(string Id, string Title, string Detection);


/// <summary>The result of checking a candidate rule file merged over the active layers.</summary>
/// <param name="Valid">Whether the candidate parses and every merge of the set with it in place is valid.</param>
/// <param name="Layer">The candidate layer's name (default, site:&lt;id&gt;, asset:&lt;tag&gt;), when it parses.</param>
/// <param name="Digest">The candidate layer's own digest, when it parses.</param>
/// <param name="Errors">Every error with file, line, column and key.</param>
public sealed record RuleCheckResult(bool Valid, string? Layer, string? Digest, IReadOnlyList<RuleErrorDto> Errors)
{
    /// <summary>The place the candidate was checked at (default.yaml, sites/&lt;id&gt;.yaml, assets/&lt;tag&gt;.yaml).</summary>
    public string? Place { get; init; }

    /// <summary>The digest of the candidate's own merge (an evaluation naming its site or asset would carry it), when valid.</summary>
    public string? MergedDigest { get; init; }

    /// <summary>The layers of that merge, lowest first, when valid.</summary>
    public IReadOnlyList<string>? MergedLayers { get; init; }
}
