using System.Globalization;
using System.Security.Cryptography;
using System.Text.Json;
using DischargeGuard.Rules.Model;
using YamlDotNet.RepresentationModel;

namespace DischargeGuard.Rules.Loading;

/// <summary>
/// The normalised form a digest is taken over: JSON with entries sorted by id, quantities in SI (kelvin,
/// plain ratios) written round-trip, no comments or layout, so re-indenting or re-commenting a file changes nothing.
/// A limit's stated readings (<see cref="RuleLimit.AsStated"/>: number and unit symbol as written) are part of it,
/// because answers show them: <c>150 °C</c> and <c>302 °F</c> check the same value but read differently, so their
/// digests differ, while <c>150 degC</c> and <c>150 °C</c> (one unit, two spellings) give the same digest.
/// </summary>
public static class CanonicalForm
{
    /// <summary>SHA-256 of UTF-8 bytes, lower-case hex.</summary>
    /// <param name="canonical">Canonical bytes.</param>
    /// <returns>The digest.</returns>
    public static string Digest(byte[] canonical) => Convert.ToHexStringLower(SHA256.HashData(canonical));

    /// <summary>The canonical form of one layer as written.</summary>
    /// <param name="layer">The layer.</param>
    /// <returns>UTF-8 JSON bytes.</returns>
    public static byte[] OfLayer(RuleLayer layer)
    {
        ArgumentNullException.ThrowIfNull(layer);
        return Write(w =>
        {
            w.WriteStartObject();
            w.WriteString("kind", layer.Kind.ToString());
            w.WriteString("id", layer.Id);
            w.WriteString("site", layer.Site);
            w.WriteString("title", layer.Title);
            WriteCatalogues(w, layer.ServiceClasses, layer.Lubricants, layer.Materials, layer.CompressorTypes);
            w.WriteStartArray("rules");
            foreach (var r in layer.Rules.OrderBy(r => r.Id, StringComparer.Ordinal))
            {
                WriteRule(w, r, withProvenance: false);
            }

            w.WriteEndArray();
            w.WriteStartArray("overrides");
            foreach (var o in layer.Overrides.OrderBy(o => o.RuleId, StringComparer.Ordinal))
            {
                w.WriteStartObject();
                w.WriteString("rule", o.RuleId);
                w.WriteBoolean("disabled", o.Disabled);
                w.WriteString("reason", o.Reason);
                if (o.Basis is not null)
                {
                    // Written only when given, so the digests of layers without one are unchanged.
                    w.WriteString("basis", o.Basis);
                }

                WriteSignOff(w, o.SignOff);
                w.WritePropertyName("limit");
                WriteNode(w, o.Raw?.Get("limit"));
                w.WritePropertyName("warningBand");
                WriteNode(w, o.Raw?.Get("warningBand"));
                w.WriteEndObject();
            }

            w.WriteEndArray();
            w.WriteEndObject();
        });
    }

    /// <summary>The canonical form of a merged, effective rule set.</summary>
    /// <param name="set">The merged set.</param>
    /// <returns>UTF-8 JSON bytes.</returns>
    public static byte[] OfMerged(EffectiveRuleSet set)
    {
        ArgumentNullException.ThrowIfNull(set);
        return Write(w =>
        {
            w.WriteStartObject();
            w.WriteNumber("schemaVersion", RuleFileParser.SchemaVersion);
            WriteCatalogues(w, set.ServiceClasses.Values, set.Lubricants.Values, set.Materials.Values, set.CompressorTypes.Values);
            w.WriteStartArray("rules");
            foreach (var r in set.Rules.OrderBy(r => r.Id, StringComparer.Ordinal))
            {
                WriteRule(w, r, withProvenance: true);
            }

            w.WriteEndArray();
            w.WriteStartArray("disabled");
            foreach (var d in set.Disabled.OrderBy(d => d.RuleId, StringComparer.Ordinal))
            {
                w.WriteStartObject();
                w.WriteString("rule", d.RuleId);
                w.WriteString("layer", d.Layer);
                w.WriteString("reason", d.Reason);
                w.WriteEndObject();
            }

            w.WriteEndArray();
            w.WriteEndObject();
        });
    }

    private static byte[] Write(Action<Utf8JsonWriter> body)
    {
        using var ms = new MemoryStream();
        using (var w = new Utf8JsonWriter(ms, new JsonWriterOptions { Indented = false, Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping }))
        {
            body(w);
        }

        return ms.ToArray();
    }

    private static string Num(double v) => (v == 0 ? 0.0 : v).ToString("R", CultureInfo.InvariantCulture);

    private static void WriteNum(Utf8JsonWriter w, string name, double? v)
    {
        if (v is { } d)
        {
            w.WriteString(name, Num(d));
        }
        else
        {
            w.WriteNull(name);
        }
    }

    private static void WriteCatalogues(Utf8JsonWriter w, IEnumerable<ServiceClass> services, IEnumerable<Lubricant> lubricants, IEnumerable<Material> materials, IEnumerable<CompressorType> types)
    {
        w.WriteStartArray("serviceClasses");
        foreach (var s in services.OrderBy(s => s.Id, StringComparer.Ordinal))
        {
            w.WriteStartObject();
            w.WriteString("id", s.Id);
            w.WriteString("title", s.Title);
            w.WriteString("detection", s.Detection.ToString());
            WriteNum(w, "molarMassGPerMol", s.MolarMassThreshold?.GramsPerMole);
            WriteNum(w, "oxygenFraction", s.OxygenFractionThreshold?.DecimalFractions);
            if (s.OxygenFractionBelow is { } below)
            {
                WriteNum(w, "oxygenFractionBelow", below.DecimalFractions);
            }

            if (s.Species is { } species)
            {
                w.WriteString("species", species);
                WriteNum(w, "speciesFraction", s.SpeciesFractionThreshold?.DecimalFractions);
                WriteNum(w, "partialPressurePa", s.PartialPressureThreshold?.Pascals);
            }

            w.WriteString("basis", s.Basis);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        w.WriteStartArray("lubricants");
        foreach (var l in lubricants.OrderBy(l => l.Id, StringComparer.Ordinal))
        {
            w.WriteStartObject();
            w.WriteString("id", l.Id);
            w.WriteString("title", l.Title);
            w.WriteString("baseStock", l.BaseStock);
            w.WriteString("class", l.Class);
            WriteNum(w, "flashPointK", l.FlashPoint?.Kelvins);
            WriteNum(w, "autoignitionK", l.AutoignitionTemperature?.Kelvins);
            WriteNum(w, "ratedMaxDischargeK", l.RatedMaxDischarge?.Kelvins);
            w.WriteString("basis", l.Basis);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        w.WriteStartArray("materials");
        foreach (var m in materials.OrderBy(m => m.Id, StringComparer.Ordinal))
        {
            w.WriteStartObject();
            w.WriteString("id", m.Id);
            w.WriteString("title", m.Title);
            w.WriteString("use", m.Use.ToString());
            WriteNum(w, "continuousLimitK", m.ContinuousLimit?.Kelvins);
            if (m.OxygenCompatible is { } o2)
            {
                w.WriteBoolean("oxygenCompatible", o2);
            }

            WriteFlag(w, "sourService", m.SourService);
            WriteFlag(w, "rgdRated", m.RgdRated);

            w.WriteString("basis", m.Basis);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        w.WriteStartArray("compressorTypes");
        foreach (var t in types.OrderBy(t => t.Id, StringComparer.Ordinal))
        {
            w.WriteStartObject();
            w.WriteString("id", t.Id);
            w.WriteString("title", t.Title);
            w.WriteString("family", t.Family);
            w.WriteBoolean("lubricated", t.Lubricated);
            w.WriteString("efficiencyKind", t.EfficiencyKind.ToString());
            WriteNum(w, "efficiency", t.DefaultEfficiency);
            w.WriteString("efficiencyBasis", t.EfficiencyBasis);
            w.WriteBoolean("predictionIsUpperBound", t.PredictionIsUpperBound);
            if (t.ValveLoss is { } vl)
            {
                WriteNum(w, "valveLossPerValve", vl.PerValveFraction);
                w.WriteString("valveLossBasis", vl.Basis);
            }

            if (t.OilInjection is { } oi)
            {
                WriteNum(w, "oilToGasMassRatio", oi.OilToGasMassRatio);
                WriteNum(w, "oilInletKelvin", oi.InletTemperature.Kelvins);
                w.WriteString("oilInjectionBasis", oi.Basis);
            }
            w.WriteEndObject();
        }

        w.WriteEndArray();
    }

    private static void WriteFlag(Utf8JsonWriter w, string name, bool? value)
    {
        if (value is { } v)
        {
            w.WriteBoolean(name, v);
        }
    }

    private static void WriteList(Utf8JsonWriter w, string name, IEnumerable<string> items)
    {
        w.WriteStartArray(name);
        foreach (var i in items)
        {
            w.WriteStringValue(i);
        }

        w.WriteEndArray();
    }

    private static void WriteRule(Utf8JsonWriter w, RuleDefinition r, bool withProvenance)
    {
        w.WriteStartObject();
        w.WriteString("id", r.Id);
        w.WriteString("title", r.Title);
        w.WriteStartObject("appliesTo");
        var a = r.AppliesTo;
        WriteList(w, "compressorTypes", a.CompressorTypes.Order(StringComparer.Ordinal));
        WriteList(w, "notCompressorTypes", a.NotCompressorTypes.Order(StringComparer.Ordinal));
        WriteList(w, "serviceClasses", a.ServiceClasses.Order(StringComparer.Ordinal));
        WriteList(w, "notServiceClasses", a.NotServiceClasses.Order(StringComparer.Ordinal));
        WriteList(w, "baseStocks", a.BaseStocks.Order(StringComparer.Ordinal));
        WriteList(w, "valveMaterials", a.ValveMaterials.Order(StringComparer.Ordinal));
        WriteList(w, "sealMaterials", a.SealMaterials.Order(StringComparer.Ordinal));
        WriteList(w, "stagePositions", a.StagePositions.Order().Select(p => p.ToString()));
        if (a.UnloadedRunning is { } u)
        {
            w.WriteBoolean("unloadedRunning", u);
        }

        // Criteria added later are written only when set, so layers that do not use them keep their digests.
        WriteFlag(w, "lubricated", a.Lubricated);
        WriteFlag(w, "cooled", a.Cooled);
        WriteFlag(w, "valveMaterialOxygenCompatible", a.ValveMaterialOxygenCompatible);
        WriteFlag(w, "sealMaterialOxygenCompatible", a.SealMaterialOxygenCompatible);
        if (a.OxygenPartialPressureAbovePascals is { } po2)
        {
            WriteNum(w, "oxygenPartialPressureAbovePa", po2);
        }

        if (a.DecidedBy.Count > 0)
        {
            WriteList(w, "decidedBy", a.DecidedBy.Order(StringComparer.Ordinal));
        }

        if (a.SuctionPhases.Count > 0)
        {
            WriteList(w, "suctionPhases", a.SuctionPhases.Order().Select(p => p.ToString()));
        }

        WriteFlag(w, "valveMaterialSourService", a.ValveMaterialSourService);
        WriteFlag(w, "springMaterialSourService", a.SpringMaterialSourService);
        WriteFlag(w, "sealMaterialSourService", a.SealMaterialSourService);
        WriteFlag(w, "sealMaterialRgdRated", a.SealMaterialRgdRated);
        if (a.DischargeMaterials.Count > 0)
        {
            WriteList(w, "dischargeMaterials", a.DischargeMaterials.Order(StringComparer.Ordinal));
        }

        if (a.PartialPressureAbovePascals.Count > 0)
        {
            w.WriteStartObject("partialPressureAbovePa");
            foreach (var kv in a.PartialPressureAbovePascals.OrderBy(kv => kv.Key, StringComparer.Ordinal))
            {
                WriteNum(w, kv.Key, kv.Value);
            }

            w.WriteEndObject();
        }

        if (a.DischargePressureAbovePascals is { } pd)
        {
            WriteNum(w, "dischargePressureAbovePa", pd);
        }

        if (a.DischargePhases.Count > 0)
        {
            WriteList(w, "dischargePhases", a.DischargePhases.Order().Select(p => p.ToString()));
        }

        w.WriteEndObject();
        WriteList(w, "quantity", r.Quantities.Select(q => q.ToName()));
        w.WriteString("direction", r.Direction.ToString());
        if (r.Limit is { } l)
        {
            w.WriteStartObject("limit");
            w.WriteString("source", l.Source.ToString());
            WriteNum(w, "absolute", l.Absolute);
            WriteNum(w, "deratingForPressureK", l.DeratingForPressureKelvin);
            WriteNum(w, "marginK", l.MarginKelvin);
            WriteNum(w, "plusK", l.PlusKelvin);
            WriteNum(w, "atLeastK", l.AtLeastKelvin);
            WriteNum(w, "fractionOfPredicted", l.FractionOfPredicted);
            if (l.AsStated.Count > 0)
            {
                // Written only when there are readings, so ratio and derived limits keep their digests.
                w.WriteStartArray("stated");
                foreach (var v in l.AsStated)
                {
                    w.WriteStartObject();
                    WriteNum(w, "value", v.Value);
                    w.WriteString("unit", v.Unit);
                    w.WriteEndObject();
                }

                w.WriteEndArray();
            }

            w.WriteEndObject();
        }
        else
        {
            w.WriteNull("limit");
        }

        WriteNum(w, "warningBand", r.WarningBand);
        w.WriteString("severity", r.Severity.ToString());
        w.WriteString("basis", r.Basis);
        w.WriteString("message", r.Message);
        w.WriteBoolean("requiresSignedLimit", r.RequiresSignedLimit);
        if (r.Prohibited)
        {
            w.WriteBoolean("prohibited", true);
        }

        if (r.SetPoints is { } sp)
        {
            w.WriteStartObject("setPoints");
            WriteNum(w, "alarmFraction", sp.Alarm.Fraction);
            WriteNum(w, "alarmAtMostK", sp.Alarm.AtMostKelvin);
            WriteNum(w, "tripFraction", sp.Trip.Fraction);
            WriteNum(w, "tripAtMostK", sp.Trip.AtMostKelvin);
            if (sp.MinimumStepKelvin != 0)
            {
                WriteNum(w, "minimumStepK", sp.MinimumStepKelvin);
            }

            w.WriteEndObject();
        }

        if (r.Trend is { } tr)
        {
            w.WriteStartObject("trend");
            w.WriteNumber("evaluations", tr.Evaluations);
            WriteNum(w, "steadyPressureFraction", tr.SteadyPressureFraction);
            w.WriteEndObject();
        }

        if (withProvenance)
        {
            w.WriteString("limitLayer", r.LimitLayer);
            w.WriteString("loosenedReason", r.LoosenedReason);
            WriteSignOff(w, r.SignOff);
        }

        w.WriteEndObject();
    }

    private static void WriteSignOff(Utf8JsonWriter w, SignOff? s)
    {
        if (s is null)
        {
            w.WriteNull("signOff");
            return;
        }

        w.WriteStartObject("signOff");
        w.WriteString("approvedBy", s.ApprovedBy);
        w.WriteString("approvedOn", s.ApprovedOn.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture));
        w.WriteString("reference", s.Reference);
        w.WriteEndObject();
    }

    private static void WriteNode(Utf8JsonWriter w, YamlNode? node)
    {
        switch (node)
        {
            case null:
                w.WriteNullValue();
                break;
            case YamlScalarNode s:
                w.WriteStringValue(s.Value);
                break;
            case YamlSequenceNode seq:
                w.WriteStartArray();
                foreach (var c in seq.Children)
                {
                    WriteNode(w, c);
                }

                w.WriteEndArray();
                break;
            case YamlMappingNode m:
                w.WriteStartObject();
                foreach (var (k, v) in m.Children.OrderBy(kv => (kv.Key as YamlScalarNode)?.Value, StringComparer.Ordinal))
                {
                    w.WritePropertyName((k as YamlScalarNode)?.Value ?? "");
                    WriteNode(w, v);
                }

                w.WriteEndObject();
                break;
            default:
                w.WriteNullValue();
                break;
        }
    }
}
