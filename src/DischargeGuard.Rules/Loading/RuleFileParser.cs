using System.Globalization;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Units;
using UnitsNet;
using YamlDotNet.Core;
using YamlDotNet.RepresentationModel;

namespace DischargeGuard.Rules.Loading;

/// <summary>
/// Reads one rule file (YAML) into a <see cref="RuleLayer"/>, strictly: unknown keys, wrong types, missing
/// units and duplicate ids are errors naming file, line, column and key. Pure: takes text, not a path.
/// </summary>
public static class RuleFileParser
{
    private static readonly string[] TopKeys = ["schemaVersion", "layer", "serviceClasses", "lubricants", "materials", "compressorTypes", "rules", "overrides"];
    private static readonly string[] LayerKeys = ["kind", "id", "site", "title", "description", "owner"];
    private static readonly string[] ServiceKeys = ["id", "title", "detection", "species", "threshold", "below", "basis"];
    private static readonly string[] LubricantKeys = ["id", "title", "baseStock", "class", "flashPoint", "autoignitionTemperature", "ratedMaxDischarge", "basis"];
    private static readonly string[] MaterialKeys = ["id", "title", "use", "continuousLimit", "oxygenCompatible", "sourService", "rgdRated", "basis"];
    private static readonly string[] TypeKeys = ["id", "title", "family", "lubricated", "efficiency", "predictionIsUpperBound", "valveLoss", "oilInjection"];
    private static readonly string[] ValveLossKeys = ["perValve", "basis"];
    private static readonly string[] OilInjectionKeys = ["oilToGasMassRatio", "inletTemperature", "basis"];
    private static readonly string[] EfficiencyKeys = ["kind", "value", "basis"];
    private static readonly string[] RuleKeys = ["id", "title", "appliesTo", "quantity", "direction", "limit", "warningBand", "severity", "basis", "message", "requiresSignedLimit", "prohibited", "setPoints", "trend"];
    private static readonly string[] AppliesKeys = ["compressorTypes", "notCompressorTypes", "serviceClasses", "notServiceClasses", "baseStocks", "valveMaterials", "sealMaterials", "stagePositions", "unloadedRunning",
        "lubricated", "cooled", "valveMaterialOxygenCompatible", "sealMaterialOxygenCompatible", "oxygenPartialPressureAbove", "decidedBy", "suctionPhases", "dischargePhases",
        "valveMaterialSourService", "springMaterialSourService", "sealMaterialSourService", "sealMaterialRgdRated", "dischargeMaterials", "partialPressureAbove", "dischargePressureAbove"];
    private static readonly string[] CatalogueLimitKeys = ["from", "deratingForPressure", "margin", "plus"];
    private static readonly string[] GreaterOfKeys = ["atLeast", "fractionOfPredicted"];
    private static readonly string[] SetPointKeys = ["alarm", "trip", "minimumStep"];
    private static readonly string[] StepKeys = ["fraction", "atMost"];
    private static readonly string[] TrendKeys = ["evaluations", "steadyPressureWithin"];
    private static readonly string[] OverrideKeys = ["rule", "limit", "warningBand", "disabled", "reason", "basis", "approvedBy", "approvedOn", "reference"];

    /// <summary>The deepest nesting of mappings and sequences a rule file may have (the shipped files use 5).</summary>
    public const int MaxNestingDepth = 32;

    /// <summary>The only format version this loader reads.</summary>
    public const int SchemaVersion = 1;

    /// <summary>Parses a rule file; throws <see cref="RuleFileException"/> with every error found.</summary>
    /// <param name="fileName">Name used in errors (relative to the rules directory).</param>
    /// <param name="yaml">The file's text.</param>
    /// <param name="expectedKind">The layer kind the file's place implies, or null to accept the declared kind.</param>
    /// <returns>The layer, with its digest.</returns>
    public static RuleLayer Parse(string fileName, string yaml, LayerKind? expectedKind = null)
    {
        ArgumentNullException.ThrowIfNull(fileName);
        ArgumentNullException.ThrowIfNull(yaml);
        var ctx = new Context(fileName);
        var layer = ParseCore(ctx, yaml, expectedKind);
        if (ctx.Errors.Count > 0 || layer is null)
        {
            throw new RuleFileException(ctx.Errors);
        }

        return layer with { Digest = CanonicalForm.Digest(CanonicalForm.OfLayer(layer)) };
    }

    // The start of the first mapping or sequence deeper than MaxNestingDepth, from the parser's events (no tree is built);
    // null when none is. A syntax error is thrown as the YAML reader throws it, for the caller's handlers.
    private static Mark? TooDeep(string yaml)
    {
        var parser = new YamlDotNet.Core.Parser(new StringReader(yaml));
        var depth = 0;
        while (parser.MoveNext())
        {
            switch (parser.Current)
            {
                case YamlDotNet.Core.Events.MappingStart or YamlDotNet.Core.Events.SequenceStart:
                    if (++depth > MaxNestingDepth)
                    {
                        return parser.Current.Start;
                    }

                    break;
                case YamlDotNet.Core.Events.MappingEnd or YamlDotNet.Core.Events.SequenceEnd:
                    depth--;
                    break;
            }
        }

        return null;
    }

    private static RuleLayer? ParseCore(Context ctx, string yaml, LayerKind? expectedKind)
    {
        var stream = new YamlStream();
        var parser = new YamlDotNet.Core.Parser(new StringReader(yaml));
        try
        {
            // The tree below is built by recursion, one frame per level: 40 000 nested '[' overflowed the stack, which
            // no handler can catch. The event stream is read flat, so its depth is counted first.
            if (TooDeep(yaml) is { } deep)
            {
                ctx.Errors.Add(new RuleFileError(RuleFileErrorKind.Syntax, ctx.File, deep.Line, deep.Column, "",
                    string.Create(CultureInfo.InvariantCulture, $"The YAML nests deeper than {MaxNestingDepth} levels here; a rule file needs far fewer. Nothing of the file was read.")));
                return null;
            }

            stream.Load(parser);
        }
        catch (YamlException ex)
        {
            var msg = ex.InnerException is ArgumentException ? "Duplicate key: " + ex.Message : ex.Message;
            ctx.Errors.Add(new RuleFileError(RuleFileErrorKind.Syntax, ctx.File, ex.Start.Line, ex.Start.Column, "", msg));
            return null;
        }
        catch (Exception ex) when (ex is InvalidOperationException or ArgumentException)
        {
            // The YAML reader gives up on some malformed input without a YamlException (an InvalidOperationException in
            // broken flow collections, an ArgumentException for an event it did not expect after an empty key); the
            // error is placed after the last part it read.
            var at = parser.Current?.End;
            ctx.Errors.Add(new RuleFileError(RuleFileErrorKind.Syntax, ctx.File, at?.Line ?? 1, at?.Column ?? 1, "",
                "The YAML is malformed after this point (an unclosed bracket, quote or flow collection?); it could not be read further."));
            return null;
        }

        if (stream.Documents.Count != 1 || stream.Documents[0].RootNode is not YamlMappingNode root)
        {
            ctx.Errors.Add(new RuleFileError(RuleFileErrorKind.WrongType, ctx.File, 1, 1, "", "A rule file is one YAML document whose top level is a mapping."));
            return null;
        }

        var top = ctx.Map(root, "", TopKeys);
        var version = ctx.Int(top, "schemaVersion", "schemaVersion", required: true);
        if (version is not null and not SchemaVersion)
        {
            ctx.Add(RuleFileErrorKind.BadValue, top.Get("schemaVersion")!, "schemaVersion", string.Create(CultureInfo.InvariantCulture, $"Only schemaVersion {SchemaVersion} is understood."));
        }

        var layerNode = ctx.Mapping(top, "layer", "layer", required: true);
        LayerKind kind = LayerKind.Default;
        string id = "default";
        string? site = null, title = null;
        if (layerNode is not null)
        {
            var l = ctx.Map(layerNode, "layer", LayerKeys);
            var kindText = ctx.Enum(l, "kind", "layer.kind", ["default", "site", "asset"], required: true);
            kind = kindText switch { "site" => LayerKind.Site, "asset" => LayerKind.Asset, _ => LayerKind.Default };
            id = ctx.Text(l, "id", "layer.id", required: true) ?? "default";
            site = ctx.Text(l, "site", "layer.site");
            foreach (var (key, value) in new[] { ("id", (string?)id), ("site", site) })
            {
                if (value is not null && l.Get(key) is { } node)
                {
                    ctx.IdLocations["layer/" + key] = ctx.Loc(node);
                    if (!IsValidId(value))
                    {
                        ctx.Add(RuleFileErrorKind.BadValue, node, "layer." + key,
                            $"'{value}' is not a layer id: 1 to 64 letters, digits, '-', '_' or '.', beginning and ending with a letter or digit (no trailing space, dot or line break).");
                    }
                    else if ((key == "site" || kind == LayerKind.Site) && !value.All(c => char.IsAsciiLetterLower(c) || char.IsAsciiDigit(c) || c == '-'))
                    {
                        // Requests name sites in this form only, so a site layer spelt otherwise could never be selected.
                        ctx.Add(RuleFileErrorKind.BadValue, node, "layer." + key,
                            $"'{value}' is not a site id: lower-case letters, digits and hyphens (e.g. \"kestrel-ridge\"), as requests name sites.");
                    }
                }
            }

            title = ctx.Text(l, "title", "layer.title");
            ctx.Text(l, "description", "layer.description");
            ctx.Text(l, "owner", "layer.owner");
            if (expectedKind is { } ek && kindText is not null && ek != kind)
            {
                ctx.Add(RuleFileErrorKind.BadValue, l.Get("kind")!, "layer.kind", $"This file's place implies a {ek.ToString().ToLowerInvariant()} layer, but it declares '{kindText}'.");
            }

            if (kind == LayerKind.Default && id != "default" && l.Get("id") is { } idNode)
            {
                ctx.Add(RuleFileErrorKind.BadValue, idNode, "layer.id", "The default layer's id is 'default'.");
            }

            if (site is not null && kind != LayerKind.Asset)
            {
                ctx.Add(RuleFileErrorKind.UnknownKey, l.Key("site")!, "layer.site", "Only an asset layer names its site.");
            }
        }

        var ids = new Dictionary<string, string>(StringComparer.Ordinal);
        var services = ctx.List(top, "serviceClasses", n => ParseService(ctx, n.Node, n.Path, ids));
        var lubricants = ctx.List(top, "lubricants", n => ParseLubricant(ctx, n.Node, n.Path, ids));
        var materials = ctx.List(top, "materials", n => ParseMaterial(ctx, n.Node, n.Path, ids));
        var types = ctx.List(top, "compressorTypes", n => ParseType(ctx, n.Node, n.Path, ids));
        var ruleIds = new Dictionary<string, string>(StringComparer.Ordinal);
        var rules = ctx.List(top, "rules", n => ParseRule(ctx, n.Node, n.Path, ruleIds));
        var overrides = ctx.List(top, "overrides", n => ParseOverride(ctx, n.Node, n.Path));
        if (kind == LayerKind.Default && top.Get("overrides") is { } ov)
        {
            ctx.Add(RuleFileErrorKind.BadValue, ov, "overrides", "The default layer defines rules; only site and asset layers override them.");
        }

        var seenOverrides = new HashSet<string>(StringComparer.Ordinal);
        foreach (var o in overrides)
        {
            if (!seenOverrides.Add(o.RuleId))
            {
                ctx.Errors.Add(new RuleFileError(RuleFileErrorKind.DuplicateId, ctx.File, o.Location.Line, o.Location.Column, "overrides.rule", $"Rule '{o.RuleId}' is overridden twice in this file; merge the two entries."));
            }
        }

        return new RuleLayer
        {
            File = ctx.File,
            Kind = kind,
            Id = id,
            Site = site,
            Title = title,
            ServiceClasses = services,
            Lubricants = lubricants,
            Materials = materials,
            CompressorTypes = types,
            Rules = rules,
            Overrides = overrides,
            IdLocations = ctx.IdLocations,
        };
    }

    private static string? Id(Context ctx, MapView m, string path, Dictionary<string, string> ids)
    {
        var id = ctx.Text(m, "id", path + ".id", required: true);
        if (id is null)
        {
            return null;
        }

        if (!IsValidId(id))
        {
            ctx.Add(RuleFileErrorKind.BadValue, m.Get("id")!, path + ".id", $"Id '{id}' must be letters, digits, '-', '_' or '.', beginning and ending with a letter or digit.");
        }

        if (ids.TryGetValue(id, out var first))
        {
            ctx.Add(RuleFileErrorKind.DuplicateId, m.Get("id")!, path + ".id", $"Id '{id}' is already used at {first}.");
        }
        else
        {
            ids[id] = path;
            ctx.IdLocations[path.Split('[')[0] + "/" + id] = ctx.Loc(m.Get("id")!);
        }

        return id;
    }

    internal static bool IsValidId(string id) => Provider.LayerIds.IsWellFormed(id);

    private static ServiceClass? ParseService(Context ctx, YamlNode node, string path, Dictionary<string, string> ids)
    {
        if (ctx.AsMapping(node, path) is not { } mapNode)
        {
            return null;
        }

        var m = ctx.Map(mapNode, path, ServiceKeys);
        var id = Id(ctx, m, path, ids);
        var title = ctx.Text(m, "title", path + ".title", required: true);
        var detection = ctx.Enum(m, "detection", path + ".detection", ["declared", "molarMassAtMost", "oxygenFractionAbove", "speciesFractionAbove", "partialPressureAbove"], required: true);
        var basis = ctx.Text(m, "basis", path + ".basis", required: true);
        var species = detection is "speciesFractionAbove" or "partialPressureAbove" ? Species(ctx, m, "species", path + ".species", required: true) : null;
        if (detection is not ("speciesFractionAbove" or "partialPressureAbove") && m.Get("species") is { } misplacedSpecies)
        {
            ctx.Add(RuleFileErrorKind.BadValue, misplacedSpecies, path + ".species", "Only a speciesFractionAbove or partialPressureAbove class names a species.");
        }

        Ratio? speciesFraction = null;
        Pressure? partialPressure = null;
        MolarMass? mm = null;
        Ratio? o2 = null;
        Ratio? below = null;
        if (detection != "oxygenFractionAbove" && m.Get("below") is { } misplacedBelow)
        {
            ctx.Add(RuleFileErrorKind.BadValue, misplacedBelow, path + ".below", "Only an oxygenFractionAbove class has an upper bound.");
        }

        if (detection == "molarMassAtMost")
        {
            mm = ctx.Quantity(m, "threshold", path + ".threshold", QuantityKind.MolarMass, required: true) is { } q ? (MolarMass)q : null;
        }
        else if (detection == "oxygenFractionAbove")
        {
            o2 = ctx.Quantity(m, "threshold", path + ".threshold", QuantityKind.Fraction, required: true) is { } q ? (Ratio)q : null;
            below = ctx.Quantity(m, "below", path + ".below", QuantityKind.Fraction) is { } qb ? (Ratio)qb : null;
            if (o2 is { } lo && below is { } hi && !(hi.DecimalFractions > lo.DecimalFractions))
            {
                ctx.Add(RuleFileErrorKind.BadValue, m.Get("below")!, path + ".below", "The upper bound must lie above the threshold.");
            }
        }
        else if (detection == "speciesFractionAbove")
        {
            speciesFraction = ctx.Quantity(m, "threshold", path + ".threshold", QuantityKind.Fraction, required: true) is { } q ? (Ratio)q : null;
        }
        else if (detection == "partialPressureAbove")
        {
            partialPressure = ctx.Quantity(m, "threshold", path + ".threshold", QuantityKind.PressureDifference, required: true) is Pressure pq ? pq : null;
        }
        else if (m.Get("threshold") is { } t)
        {
            ctx.Add(RuleFileErrorKind.BadValue, t, path + ".threshold", "A declared service class has no detection threshold.");
        }

        if (id is null || title is null || detection is null || basis is null)
        {
            return null;
        }

        var det = detection switch
        {
            "molarMassAtMost" => ServiceDetection.MolarMassAtMost,
            "oxygenFractionAbove" => ServiceDetection.OxygenFractionAbove,
            "speciesFractionAbove" => ServiceDetection.SpeciesFractionAbove,
            "partialPressureAbove" => ServiceDetection.PartialPressureAbove,
            _ => ServiceDetection.Declared,
        };
        return new ServiceClass(id, title, det, mm, o2, basis, below, species, speciesFraction, partialPressure);
    }

    // A species id as the gas data names it (its formula id, not an alias), so a rule can never name a gas the
    // composition cannot hold.
    private static string? Species(Context ctx, MapView m, string key, string path, bool required)
    {
        var text = ctx.Text(m, key, path, required);
        return text is null ? null : CheckSpecies(ctx, m.Get(key)!, path, text);
    }

    private static string? CheckSpecies(Context ctx, YamlNode node, string path, string text)
    {
        if (Thermo.GasCatalog.Default.TryGetSpecies(text, out var sp) && string.Equals(sp.Id, text, StringComparison.Ordinal))
        {
            return text;
        }

        ctx.Add(RuleFileErrorKind.BadValue, node, path, $"'{text}' is not a species id; use one of: {Thermo.GasCatalog.Default.SupportedSpeciesList}.");
        return null;
    }

    private static Lubricant? ParseLubricant(Context ctx, YamlNode node, string path, Dictionary<string, string> ids)
    {
        if (ctx.AsMapping(node, path) is not { } mapNode)
        {
            return null;
        }

        var m = ctx.Map(mapNode, path, LubricantKeys);
        var id = Id(ctx, m, path, ids);
        var title = ctx.Text(m, "title", path + ".title", required: true);
        var baseStock = ctx.Enum(m, "baseStock", path + ".baseStock", ["mineral", "pao", "diester", "polyolester", "pag", "silicone", "phosphate-ester", "other-synthetic"], required: true);
        var cls = ctx.Text(m, "class", path + ".class");
        var flash = ctx.Temperature(m, "flashPoint", path + ".flashPoint");
        var ait = ctx.Temperature(m, "autoignitionTemperature", path + ".autoignitionTemperature");
        var rated = ctx.Temperature(m, "ratedMaxDischarge", path + ".ratedMaxDischarge");
        var basis = ctx.Text(m, "basis", path + ".basis", required: true);
        return id is null || title is null || baseStock is null || basis is null ? null : new Lubricant(id, title, baseStock, cls, flash, ait, rated, basis);
    }

    private static Material? ParseMaterial(Context ctx, YamlNode node, string path, Dictionary<string, string> ids)
    {
        if (ctx.AsMapping(node, path) is not { } mapNode)
        {
            return null;
        }

        var m = ctx.Map(mapNode, path, MaterialKeys);
        var id = Id(ctx, m, path, ids);
        var title = ctx.Text(m, "title", path + ".title", required: true);
        var use = ctx.Enum(m, "use", path + ".use", ["valve", "seal", "ring", "spring"], required: true);
        var limit = ctx.Temperature(m, "continuousLimit", path + ".continuousLimit");
        var oxygen = ctx.Bool(m, "oxygenCompatible", path + ".oxygenCompatible");
        var sour = ctx.Bool(m, "sourService", path + ".sourService");
        var rgd = ctx.Bool(m, "rgdRated", path + ".rgdRated");
        if (rgd is not null && use is not "seal")
        {
            ctx.Add(RuleFileErrorKind.BadValue, m.Get("rgdRated")!, path + ".rgdRated", "Only a seal elastomer has a rapid-gas-decompression rating.");
        }

        var basis = ctx.Text(m, "basis", path + ".basis", required: true);
        var materialUse = use switch { "seal" => MaterialUse.Seal, "ring" => MaterialUse.Ring, "spring" => MaterialUse.Spring, _ => MaterialUse.Valve };
        return id is null || title is null || use is null || basis is null ? null
            : new Material(id, title, materialUse, limit, basis, oxygen, sour, rgd);
    }

    private static CompressorType? ParseType(Context ctx, YamlNode node, string path, Dictionary<string, string> ids)
    {
        if (ctx.AsMapping(node, path) is not { } mapNode)
        {
            return null;
        }

        var m = ctx.Map(mapNode, path, TypeKeys);
        var id = Id(ctx, m, path, ids);
        var title = ctx.Text(m, "title", path + ".title", required: true);
        var family = ctx.Enum(m, "family", path + ".family", ["reciprocating", "screw", "centrifugal", "axial", "scroll", "vane", "other"], required: true);
        var lubricated = ctx.Bool(m, "lubricated", path + ".lubricated", required: true);
        var upper = ctx.Bool(m, "predictionIsUpperBound", path + ".predictionIsUpperBound") ?? false;
        var effNode = ctx.Mapping(m, "efficiency", path + ".efficiency", required: true);
        EfficiencyKind kind = EfficiencyKind.NotApplicable;
        double? value = null;
        string? basis = null;
        if (effNode is not null)
        {
            var e = ctx.Map(effNode, path + ".efficiency", EfficiencyKeys);
            var k = ctx.Enum(e, "kind", path + ".efficiency.kind", ["isentropic", "polytropic", "notApplicable"], required: true);
            kind = k switch { "isentropic" => EfficiencyKind.Isentropic, "polytropic" => EfficiencyKind.Polytropic, _ => EfficiencyKind.NotApplicable };
            value = ctx.Number(e, "value", path + ".efficiency.value", required: kind != EfficiencyKind.NotApplicable);
            if (value is { } v && (v <= 0 || v > 1))
            {
                ctx.Add(RuleFileErrorKind.BadValue, e.Get("value")!, path + ".efficiency.value", "An efficiency is a number in (0, 1].");
            }

            if (kind == EfficiencyKind.NotApplicable && e.Get("value") is { } vn)
            {
                ctx.Add(RuleFileErrorKind.BadValue, vn, path + ".efficiency.value", "An efficiency of kind notApplicable has no value.");
            }

            basis = ctx.Text(e, "basis", path + ".efficiency.basis", required: true);
        }

        ValveLossAllowance? valveLoss = null;
        if (ctx.Mapping(m, "valveLoss", path + ".valveLoss") is { } vlNode)
        {
            var vl = ctx.Map(vlNode, path + ".valveLoss", ValveLossKeys);
            var per = ctx.Quantity(vl, "perValve", path + ".valveLoss.perValve", QuantityKind.Fraction, required: true) is { } q ? ((Ratio)q).DecimalFractions : (double?)null;
            if (per is { } a && !(a is >= 0 and < 0.5))
            {
                ctx.Add(RuleFileErrorKind.BadValue, vl.Get("perValve")!, path + ".valveLoss.perValve", "A valve-loss allowance is a fraction from 0 % up to (not including) 50 %.");
            }

            var vlBasis = ctx.Text(vl, "basis", path + ".valveLoss.basis", required: true);
            valveLoss = per is { } pv && vlBasis is not null ? new ValveLossAllowance(pv, vlBasis) : null;
        }

        OilInjectionDefault? oil = null;
        if (ctx.Mapping(m, "oilInjection", path + ".oilInjection") is { } oiNode)
        {
            var oi = ctx.Map(oiNode, path + ".oilInjection", OilInjectionKeys);
            var ratio = ctx.Number(oi, "oilToGasMassRatio", path + ".oilInjection.oilToGasMassRatio", required: true);
            if (ratio is { } r && !(r > 0 && r <= 50))
            {
                ctx.Add(RuleFileErrorKind.BadValue, oi.Get("oilToGasMassRatio")!, path + ".oilInjection.oilToGasMassRatio", "An oil-to-gas mass ratio is a number in (0, 50].");
            }

            var tIn = ctx.Temperature(oi, "inletTemperature", path + ".oilInjection.inletTemperature");
            if (tIn is null && oi.Get("inletTemperature") is null)
            {
                ctx.Add(RuleFileErrorKind.MissingKey, oiNode, path + ".oilInjection.inletTemperature", "Give the oil inlet temperature (the thermostatic valve's set point).");
            }

            var oiBasis = ctx.Text(oi, "basis", path + ".oilInjection.basis", required: true);
            oil = ratio is { } rr && tIn is { } t && oiBasis is not null ? new OilInjectionDefault(rr, t, oiBasis) : null;
        }

        return id is null || title is null || family is null || lubricated is null || basis is null ? null
            : new CompressorType(id, title, family, lubricated.Value, kind, value, basis, upper) { ValveLoss = valveLoss, OilInjection = oil };
    }

    private static RuleDefinition? ParseRule(Context ctx, YamlNode node, string path, Dictionary<string, string> ids)
    {
        if (ctx.AsMapping(node, path) is not { } mapNode)
        {
            return null;
        }

        var m = ctx.Map(mapNode, path, RuleKeys);
        var id = Id(ctx, m, path, ids);
        var title = ctx.Text(m, "title", path + ".title", required: true);
        var applies = ParseAppliesTo(ctx, m, path + ".appliesTo");
        var prohibited = ctx.Bool(m, "prohibited", path + ".prohibited") ?? false;
        List<CheckedQuantity>? quantities;
        if (prohibited)
        {
            // A prohibited combination has no number: it names no quantity and no limit.
            foreach (var key in new[] { "quantity", "limit", "warningBand", "direction", "requiresSignedLimit", "setPoints", "trend" })
            {
                if (m.Get(key) is { } extra)
                {
                    ctx.Add(RuleFileErrorKind.BadValue, extra, path + "." + key, "A prohibited rule flags a combination or condition with no number: it has no " + key + ".");
                }
            }

            quantities = [CheckedQuantity.Combination];
        }
        else if (m.Get("quantity") is null && m.Get("limit") is null && m.Get("setPoints") is null
            && m.Get("severity") is YamlScalarNode { Value: "info" or "warning" })
        {
            // An info note or a warning caution that applies whenever its appliesTo holds (a saturated suction; wet CO2
            // on carbon steel): no number either. Unlike a prohibited rule, a layer may disable a caution with a reason.
            quantities = [CheckedQuantity.Combination];
        }
        else
        {
            quantities = ParseQuantities(ctx, m, path + ".quantity");
        }
        var dirText = ctx.Enum(m, "direction", path + ".direction", ["upper", "lower"]);
        var direction = dirText == "lower" ? LimitDirection.Lower : LimitDirection.Upper;
        var severityText = ctx.Enum(m, "severity", path + ".severity", ["info", "warning", "violation"], required: true);
        var severity = severityText switch { "warning" => Severity.Warning, "violation" => Severity.Violation, _ => Severity.Info };
        var basis = ctx.Text(m, "basis", path + ".basis", required: true);
        var message = ctx.Text(m, "message", path + ".message", required: true);
        var signed = ctx.Bool(m, "requiresSignedLimit", path + ".requiresSignedLimit") ?? false;
        var dimension = quantities is { Count: > 0 } ? quantities[0].Dimension() : QuantityDimension.Temperature;
        if (quantities is { Count: > 1 } && quantities.Any(q => q.Dimension() != dimension))
        {
            ctx.Add(RuleFileErrorKind.BadValue, m.Get("quantity")!, path + ".quantity", "All quantities of one rule must have the same dimension.");
        }

        var limit = m.Get("limit") is not null ? ParseLimit(ctx, m, path + ".limit", dimension) : null;
        var band = m.Get("warningBand") is not null ? ParseBand(ctx, m, path + ".warningBand", dimension) : 0;
        SetPointSpec? setPoints = null;
        if (ctx.Mapping(m, "setPoints", path + ".setPoints") is { } sp)
        {
            var s = ctx.Map(sp, path + ".setPoints", SetPointKeys);
            var alarm = ParseStep(ctx, s, "alarm", path + ".setPoints.alarm");
            var trip = ParseStep(ctx, s, "trip", path + ".setPoints.trip");
            var minimumStep = ctx.Quantity(s, "minimumStep", path + ".setPoints.minimumStep", QuantityKind.TemperatureDifference) is TemperatureDelta ms ? ms.Kelvins : 0;
            if (minimumStep < 0)
            {
                ctx.Add(RuleFileErrorKind.BadValue, s.Get("minimumStep")!, path + ".setPoints.minimumStep", "The minimum step is zero or more.");
            }
            else if (alarm is not null && trip is not null)
            {
                setPoints = new SetPointSpec(alarm, trip, minimumStep);
            }
        }

        TrendSpec? trend = null;
        var wantsTrend = quantities is not null && quantities.Contains(CheckedQuantity.MeasuredMinusPredictedRise);
        if (ctx.Mapping(m, "trend", path + ".trend", required: wantsTrend) is { } tn)
        {
            var t = ctx.Map(tn, path + ".trend", TrendKeys);
            var count = ctx.Number(t, "evaluations", path + ".trend.evaluations", required: true);
            var steady = ctx.Quantity(t, "steadyPressureWithin", path + ".trend.steadyPressureWithin", QuantityKind.Fraction, required: true);
            if (count is { } c && (c != Math.Floor(c) || c < TrendSpec.MinimumEvaluations || c > TrendSpec.MaximumEvaluations))
            {
                ctx.Add(RuleFileErrorKind.BadValue, t.Get("evaluations")!, path + ".trend.evaluations", $"A whole number of evaluations, {TrendSpec.MinimumEvaluations} to {TrendSpec.MaximumEvaluations}.");
            }
            else if (steady is Ratio r && (r.DecimalFractions <= 0 || r.DecimalFractions > 0.5))
            {
                ctx.Add(RuleFileErrorKind.BadValue, t.Get("steadyPressureWithin")!, path + ".trend.steadyPressureWithin", "Steady pressures are within more than 0 % and at most 50 %.");
            }
            else if (count is { } n && steady is Ratio f)
            {
                trend = new TrendSpec((int)n, f.DecimalFractions);
            }

            if (!wantsTrend)
            {
                ctx.Add(RuleFileErrorKind.BadValue, tn, path + ".trend", "Only a rule on measuredMinusPredictedRise has a trend window.");
            }
        }

        if (prohibited && severityText is not null && severity != Severity.Violation)
        {
            ctx.Add(RuleFileErrorKind.BadValue, m.Get("severity")!, path + ".severity", "A prohibited rule is a violation rule.");
        }

        var caution = quantities is [CheckedQuantity.Combination] && !prohibited;
        if (!prohibited && !caution && severityText is not null && limit is null && !signed && setPoints is null && severity != Severity.Info)
        {
            ctx.Add(RuleFileErrorKind.MissingKey, m.Key("severity") ?? mapNode, path + ".limit", "A warning or violation rule needs a limit (or requiresSignedLimit: true).");
        }

        if (signed && limit is not null)
        {
            ctx.Add(RuleFileErrorKind.BadValue, m.Get("limit")!, path + ".limit", "A rule that requires a signed limit has no limit of its own; a site or asset layer sets it with approvedBy and approvedOn.");
        }

        if (limit is not null && severityText is not null && severity == Severity.Info)
        {
            ctx.Add(RuleFileErrorKind.BadValue, m.Get("severity")!, path + ".severity", "A rule with a limit is a warning or a violation rule.");
        }

        if (id is null || title is null || quantities is null || severityText is null || basis is null || message is null)
        {
            return null;
        }

        return new RuleDefinition
        {
            Id = id,
            Title = title,
            AppliesTo = applies ?? new AppliesTo(),
            Quantities = quantities,
            Direction = direction,
            Limit = limit,
            WarningBand = band,
            Severity = severity,
            Basis = basis,
            Message = message,
            Trend = trend,
            RequiresSignedLimit = signed,
            Prohibited = prohibited,
            SetPoints = setPoints,
            Location = ctx.Loc(mapNode),
        };
    }

    private static SetPointStep? ParseStep(Context ctx, MapView parent, string key, string path)
    {
        if (ctx.Mapping(parent, key, path, required: true) is not { } node)
        {
            return null;
        }

        var m = ctx.Map(node, path, StepKeys);
        var fraction = ctx.Quantity(m, "fraction", path + ".fraction", QuantityKind.Fraction, required: true);
        var atMost = ctx.Quantity(m, "atMost", path + ".atMost", QuantityKind.TemperatureDifference, required: true);
        return fraction is null || atMost is null ? null
            : new SetPointStep(((Ratio)fraction).DecimalFractions, ((TemperatureDelta)atMost).Kelvins);
    }

    private static AppliesTo? ParseAppliesTo(Context ctx, MapView rule, string path)
    {
        if (ctx.Mapping(rule, "appliesTo", path) is not { } node)
        {
            return null;
        }

        var m = ctx.Map(node, path, AppliesKeys);
        var positions = new List<StagePosition>();
        foreach (var p in ctx.TextList(m, "stagePositions", path + ".stagePositions") ?? [])
        {
            switch (p.Text)
            {
                case "only": positions.Add(StagePosition.Only); break;
                case "first": positions.Add(StagePosition.First); break;
                case "intermediate": positions.Add(StagePosition.Intermediate); break;
                case "last": positions.Add(StagePosition.Last); break;
                default:
                    ctx.Add(RuleFileErrorKind.BadValue, p.Node, path + ".stagePositions", $"'{p.Text}' is not a stage position; use only, first, intermediate or last.");
                    break;
            }
        }

        return new AppliesTo
        {
            CompressorTypes = Texts(ctx.TextList(m, "compressorTypes", path + ".compressorTypes")),
            NotCompressorTypes = Texts(ctx.TextList(m, "notCompressorTypes", path + ".notCompressorTypes")),
            ServiceClasses = Texts(ctx.TextList(m, "serviceClasses", path + ".serviceClasses")),
            NotServiceClasses = Texts(ctx.TextList(m, "notServiceClasses", path + ".notServiceClasses")),
            BaseStocks = Texts(ctx.TextList(m, "baseStocks", path + ".baseStocks")),
            ValveMaterials = Texts(ctx.TextList(m, "valveMaterials", path + ".valveMaterials")),
            SealMaterials = Texts(ctx.TextList(m, "sealMaterials", path + ".sealMaterials")),
            StagePositions = positions,
            UnloadedRunning = ctx.Bool(m, "unloadedRunning", path + ".unloadedRunning"),
            Lubricated = ctx.Bool(m, "lubricated", path + ".lubricated"),
            Cooled = ctx.Bool(m, "cooled", path + ".cooled"),
            ValveMaterialOxygenCompatible = ctx.Bool(m, "valveMaterialOxygenCompatible", path + ".valveMaterialOxygenCompatible"),
            SealMaterialOxygenCompatible = ctx.Bool(m, "sealMaterialOxygenCompatible", path + ".sealMaterialOxygenCompatible"),
            OxygenPartialPressureAbovePascals = ctx.Quantity(m, "oxygenPartialPressureAbove", path + ".oxygenPartialPressureAbove", QuantityKind.PressureDifference) is Pressure po2 ? po2.Pascals : null,
            ValveMaterialSourService = ctx.Bool(m, "valveMaterialSourService", path + ".valveMaterialSourService"),
            SpringMaterialSourService = ctx.Bool(m, "springMaterialSourService", path + ".springMaterialSourService"),
            SealMaterialSourService = ctx.Bool(m, "sealMaterialSourService", path + ".sealMaterialSourService"),
            SealMaterialRgdRated = ctx.Bool(m, "sealMaterialRgdRated", path + ".sealMaterialRgdRated"),
            DischargeMaterials = Texts(ctx.TextList(m, "dischargeMaterials", path + ".dischargeMaterials")).Where(t => CheckDischargeMaterial(ctx, m, path, t)).ToArray(),
            PartialPressureAbovePascals = PartialPressures(ctx, m, path),
            DischargePressureAbovePascals = ctx.Quantity(m, "dischargePressureAbove", path + ".dischargePressureAbove", QuantityKind.PressureDifference) is Pressure pd ? pd.Pascals : null,
            DecidedBy = Texts(ctx.TextList(m, "decidedBy", path + ".decidedBy")).Where(t => CheckMethod(ctx, m, path, t)).ToArray(),
            SuctionPhases = Phases(ctx, m, "suctionPhases", path),
            DischargePhases = Phases(ctx, m, "dischargePhases", path),
        };
    }

    private static string[] Texts(List<(string Text, YamlNode Node)>? list) => list?.Select(x => x.Text).ToArray() ?? [];

    private static bool CheckDischargeMaterial(Context ctx, MapView m, string path, string material)
    {
        if (DischargeMaterials.IsKnown(material))
        {
            return true;
        }

        ctx.Add(RuleFileErrorKind.BadValue, m.Get("dischargeMaterials")!, path + ".dischargeMaterials", $"'{material}' is not a discharge material; use {string.Join(", ", DischargeMaterials.All)}.");
        return false;
    }

    // partialPressureAbove: {H2: 0.345 MPa, CO2: 5 MPa} — species id → absolute partial pressure at discharge.
    private static Dictionary<string, double> PartialPressures(Context ctx, MapView m, string path)
    {
        var result = new Dictionary<string, double>(StringComparer.Ordinal);
        var key = path + ".partialPressureAbove";
        if (ctx.Mapping(m, "partialPressureAbove", key) is not { } node)
        {
            return result;
        }

        var names = node.Children.Keys.OfType<YamlScalarNode>().Select(k => k.Value ?? string.Empty).ToArray();
        var view = ctx.Map(node, key, names);
        foreach (var name in names)
        {
            var keyNode = node.Children.Keys.OfType<YamlScalarNode>().First(k => k.Value == name);
            if (CheckSpecies(ctx, keyNode, key, name) is null)
            {
                continue;
            }

            if (ctx.Quantity(view, name, key + "." + name, QuantityKind.PressureDifference, required: true) is Pressure p)
            {
                result[name] = p.Pascals;
            }
        }

        if (names.Length == 0)
        {
            ctx.Add(RuleFileErrorKind.BadValue, node, key, "Name at least one species and its partial pressure.");
        }

        return result;
    }

    private static bool CheckMethod(Context ctx, MapView m, string path, string method)
    {
        if (method is "ideal-gas" or "real-gas" or "peng-robinson" or "gerg-2008")
        {
            return true;
        }

        ctx.Add(RuleFileErrorKind.BadValue, m.Get("decidedBy")!, path + ".decidedBy", $"'{method}' is not a model; use ideal-gas, peng-robinson, gerg-2008 or real-gas (either real-gas model).");
        return false;
    }

    private static StagePhase[] Phases(Context ctx, MapView m, string key, string path)
    {
        var result = new List<StagePhase>();
        foreach (var p in ctx.TextList(m, key, path + "." + key) ?? [])
        {
            switch (p.Text)
            {
                case "gas": result.Add(StagePhase.Gas); break;
                case "saturated": result.Add(StagePhase.Saturated); break;
                case "two-phase": result.Add(StagePhase.TwoPhase); break;
                case "liquid": result.Add(StagePhase.Liquid); break;
                default:
                    ctx.Add(RuleFileErrorKind.BadValue, p.Node, path + "." + key, $"'{p.Text}' is not a phase; use gas, saturated, two-phase or liquid.");
                    break;
            }
        }

        return result.ToArray();
    }

    private static List<CheckedQuantity>? ParseQuantities(Context ctx, MapView m, string path)
    {
        var node = m.Get("quantity");
        if (node is null)
        {
            ctx.Add(RuleFileErrorKind.MissingKey, m.Node, path, "Every rule names the quantity it checks: " + string.Join(", ", CheckedQuantityNames.All) + ".");
            return null;
        }

        var items = node switch
        {
            YamlScalarNode s => [(s.Value ?? string.Empty, (YamlNode)s)],
            YamlSequenceNode seq => seq.Children.Select(c => (c is YamlScalarNode sc ? sc.Value ?? string.Empty : "(a list or mapping)", c)).ToList(),
            _ => null,
        };
        if (items is null || items.Count == 0)
        {
            ctx.Add(RuleFileErrorKind.WrongType, node, path, "The quantity is a name or a list of names.");
            return null;
        }

        var result = new List<CheckedQuantity>();
        foreach (var (text, n) in items)
        {
            if (CheckedQuantityNames.TryParse(text, out var q) && q != CheckedQuantity.Combination)
            {
                result.Add(q);
            }
            else
            {
                ctx.Add(RuleFileErrorKind.BadValue, n, path, $"'{text}' is not a checkable quantity; use one of: {string.Join(", ", CheckedQuantityNames.All.Where(n => n != "combination"))} (a combination with no number is written as prohibited: true).");
            }
        }

        return result.Count == items.Count ? result : null;
    }

    internal static RuleLimit? ParseLimit(Context ctx, MapView parent, string path, QuantityDimension dimension)
    {
        var node = parent.Get("limit")!;
        if (node is YamlScalarNode)
        {
            switch (dimension)
            {
                case QuantityDimension.Ratio:
                    return ctx.Number(parent, "limit", path, required: true) is { } r ? new RuleLimit(LimitSource.Absolute, r) : null;
                case QuantityDimension.TemperatureDifference:
                    return ctx.StatedQuantity(parent, "limit", path, QuantityKind.TemperatureDifference, required: true) is { Quantity: TemperatureDelta d } sd
                        ? new RuleLimit(LimitSource.Absolute, d.Kelvins) { AsStated = sd.Stated } : null;
                default:
                    return ctx.StatedQuantity(parent, "limit", path, QuantityKind.Temperature) is { Quantity: Temperature t } st
                        ? new RuleLimit(LimitSource.Absolute, t.Kelvins) { AsStated = st.Stated } : null;
            }
        }

        if (ctx.AsMapping(node, path) is not { } mapNode)
        {
            return null;
        }

        if (mapNode.Children.Keys.OfType<YamlScalarNode>().Any(k => k.Value == "greaterOf"))
        {
            var outer = ctx.Map(mapNode, path, ["greaterOf"]);
            if (ctx.Mapping(outer, "greaterOf", path + ".greaterOf", required: true) is not { } g)
            {
                return null;
            }

            var gm = ctx.Map(g, path + ".greaterOf", GreaterOfKeys);
            var atLeast = ctx.Quantity(gm, "atLeast", path + ".greaterOf.atLeast", QuantityKind.TemperatureDifference, required: true);
            var fraction = ctx.Quantity(gm, "fractionOfPredicted", path + ".greaterOf.fractionOfPredicted", QuantityKind.Fraction, required: true);
            return atLeast is null || fraction is null ? null
                : new RuleLimit(LimitSource.GreaterOfFixedAndFractionOfPredicted, AtLeastKelvin: ((TemperatureDelta)atLeast).Kelvins, FractionOfPredicted: ((Ratio)fraction).DecimalFractions);
        }

        var m = ctx.Map(mapNode, path, CatalogueLimitKeys);
        var from = ctx.Enum(m, "from", path + ".from",
            ["lubricant.ratedMaxDischarge", "lubricant.autoignitionTemperature", "lubricant.flashPoint", "valveMaterial.continuousLimit", "sealMaterial.continuousLimit", "ringMaterial.continuousLimit", "input.suctionTemperature", "input.dischargeWaterDewPoint", "input.designTemperature"], required: true);
        double Delta(string key) => ctx.Quantity(m, key, path + "." + key, QuantityKind.TemperatureDifference) is TemperatureDelta d ? d.Kelvins : 0;
        var derating = Delta("deratingForPressure");
        var margin = Delta("margin");
        var plus = Delta("plus");
        if (dimension != QuantityDimension.Temperature)
        {
            ctx.Add(RuleFileErrorKind.BadValue, mapNode, path, "A limit taken from a catalogue or an input is a temperature; the rule's quantity must be a temperature.");
        }

        var source = from switch
        {
            "lubricant.ratedMaxDischarge" => LimitSource.LubricantRatedMaxDischarge,
            "lubricant.autoignitionTemperature" => LimitSource.LubricantAutoignition,
            "lubricant.flashPoint" => LimitSource.LubricantFlashPoint,
            "valveMaterial.continuousLimit" => LimitSource.ValveMaterialLimit,
            "ringMaterial.continuousLimit" => LimitSource.RingMaterialLimit,
            "sealMaterial.continuousLimit" => LimitSource.SealMaterialLimit,
            "input.suctionTemperature" => LimitSource.InputSuctionTemperature,
            "input.dischargeWaterDewPoint" => LimitSource.InputDischargeWaterDewPoint,
            "input.designTemperature" => LimitSource.InputDesignTemperature,
            _ => (LimitSource?)null,
        };
        return source is null ? null : new RuleLimit(source.Value, null, derating, margin, plus);
    }

    internal static double ParseBand(Context ctx, MapView parent, string path, QuantityDimension dimension)
    {
        double band;
        if (dimension == QuantityDimension.Ratio)
        {
            band = ctx.Number(parent, "warningBand", path, required: true) ?? 0;
        }
        else
        {
            band = ctx.Quantity(parent, "warningBand", path, QuantityKind.TemperatureDifference, required: true) is TemperatureDelta d ? d.Kelvins : 0;
        }

        if (band < 0)
        {
            ctx.Add(RuleFileErrorKind.BadValue, parent.Get("warningBand")!, path, "A warning band is not negative.");
        }

        return band;
    }

    private static RuleOverride? ParseOverride(Context ctx, YamlNode node, string path)
    {
        if (ctx.AsMapping(node, path) is not { } mapNode)
        {
            return null;
        }

        var m = ctx.Map(mapNode, path, OverrideKeys);
        var ruleId = ctx.Text(m, "rule", path + ".rule", required: true);
        var disabled = ctx.Bool(m, "disabled", path + ".disabled") ?? false;
        var reason = ctx.Text(m, "reason", path + ".reason");
        var basis = ctx.Text(m, "basis", path + ".basis");
        if (basis is not null && string.IsNullOrWhiteSpace(basis))
        {
            ctx.Add(RuleFileErrorKind.BadValue, m.Get("basis")!, path + ".basis", "A basis is not blank.");
            basis = null;
        }

        var approvedBy = ctx.Text(m, "approvedBy", path + ".approvedBy");
        var approvedOnText = ctx.Text(m, "approvedOn", path + ".approvedOn");
        var reference = ctx.Text(m, "reference", path + ".reference");
        DateOnly? approvedOn = null;
        if (approvedOnText is not null)
        {
            if (DateOnly.TryParseExact(approvedOnText, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out var d))
            {
                approvedOn = d;
            }
            else
            {
                ctx.Add(RuleFileErrorKind.WrongType, m.Get("approvedOn")!, path + ".approvedOn", "A date is written yyyy-MM-dd.");
            }
        }

        if (reason is not null && string.IsNullOrWhiteSpace(reason))
        {
            ctx.Add(RuleFileErrorKind.BadValue, m.Get("reason")!, path + ".reason", "A reason is not blank.");
            reason = null;
        }

        if ((approvedBy is null) != (approvedOnText is null))
        {
            ctx.Add(RuleFileErrorKind.MissingKey, mapNode, path + (approvedBy is null ? ".approvedBy" : ".approvedOn"), "A sign-off has both approvedBy and approvedOn.");
        }

        if (ruleId is null)
        {
            return null;
        }

        // The limit's form depends on the rule's quantity, known only at merge time: keep the raw node.
        return new RuleOverride
        {
            RuleId = ruleId,
            Disabled = disabled,
            Reason = reason,
            Basis = basis,
            SignOff = approvedBy is not null && approvedOn is not null ? new SignOff(approvedBy, approvedOn.Value, reference) : null,
            Location = ctx.Loc(mapNode),
            Raw = m,
        };
    }
}
