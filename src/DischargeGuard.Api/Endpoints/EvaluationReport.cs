using System.Globalization;
using System.Net;
using System.Text;
using System.Text.Json;
using DischargeGuard.Audit;

namespace DischargeGuard.Api.Endpoints;

/// <summary>
/// Writes a recorded evaluation as a management-of-change record. Reads the stored request and response as JSON
/// documents (not the contract types), so a compact or full answer, an older record, and request members added later
/// (scenarios, a stage fed directly) are all echoed. It computes nothing: every figure is the stored answer's.
/// </summary>
internal static class EvaluationReport
{
    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;

    // A governing rule with no number (a prohibited combination, liquid at the suction): no figure makes it acceptable.
    private const string NoNumberWords = "no limit figure: the condition itself fails the stage, whatever the temperature (see its finding)";

    private static readonly Dictionary<string, string> VerdictWords = new(StringComparer.Ordinal)
    {
        ["pass"] = "PASS",
        ["review"] = "REVIEW",
        ["fail"] = "FAIL",
    };

    private static readonly Dictionary<string, string> SeverityWords = new(StringComparer.Ordinal)
    {
        ["violation"] = "LIMIT EXCEEDED",
        ["warning"] = "WARNING",
        ["pass"] = "WITHIN LIMIT",
        ["info"] = "NOTE",
    };

    /// <summary>The standing caution printed at the head of every report, whatever the stored answer says.</summary>
    internal const string StandingCaution =
        "Screening record only. The manufacturer's limits, the applicable design standard and local codes take precedence, "
        + "and a licensed engineer must review this change before the machine runs at the new conditions. The machine's own "
        + "discharge-temperature alarms and shutdowns stay in service whatever this record says.";

    /// <summary>The whole HTML document.</summary>
    public static string Write(AuditRecord record)
    {
        using var request = JsonDocument.Parse(record.Request);
        using var response = JsonDocument.Parse(record.Response);
        var r = response.RootElement;
        var q = request.RootElement;
        var h = new StringBuilder(32 * 1024);
        var verdict = record.Verdict;
        var title = $"Management-of-change record: {record.Asset}{(record.SiteId is null ? string.Empty : " at " + record.SiteId)}, {Word(verdict)}";
        h.Append("<!doctype html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
            .Append("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
            .Append("<title>").Append(E(title)).Append("</title>\n")
            .Append("<link rel=\"stylesheet\" href=\"/report.css\">\n</head>\n<body>\n");
        h.Append("<article class=\"report\" data-evaluation=\"").Append(E(record.Id.ToString("D"))).Append("\">\n");
        h.Append("<header class=\"report-head\">\n<p class=\"report-kind\">DischargeGuard — management-of-change record</p>\n")
            .Append("<h1>Discharge temperature check of ").Append(E(record.Asset)).Append("</h1>\n");
        Verdict(h, verdict);
        h.Append("<p class=\"standing-caution\" role=\"note\"><strong>Caution.</strong> ").Append(E(StandingCaution)).Append("</p>\n");
        h.Append("</header>\n");

        Identification(h, record, r);
        Summary(h, r);
        Inputs(h, q, r);
        foreach (var stage in Array(r, "stages"))
        {
            Stage(h, stage, Array(r, "stages").Count);
        }

        Cautions(h, r);
        SignOff(h);
        h.Append("<footer class=\"report-foot\"><p>Produced from the stored record ").Append(E(record.Id.ToString("D")))
            .Append(". Its integrity is checked with GET /v1/evaluations/").Append(E(record.Id.ToString("D"))).Append("/verify; ")
            .Append("request SHA-256 ").Append(E(record.RequestSha256 ?? "not stored")).Append(", response SHA-256 ").Append(E(record.ResponseSha256 ?? "not stored"))
            .Append(".</p></footer>\n");
        h.Append("</article>\n</body>\n</html>\n");
        return h.ToString();
    }

    private static void Verdict(StringBuilder h, string verdict)
    {
        var kind = VerdictWords.ContainsKey(verdict) ? verdict : "none";
        var meaning = kind switch
        {
            "pass" => "Every limit that could be checked holds with these inputs.",
            "review" => "A warning needs attention, or a limit could not be checked.",
            "fail" => "At least one limit is exceeded at these conditions.",
            _ => "No verdict.",
        };
        var shape = kind switch
        {
            "pass" => "<circle class=\"shape\" cx=\"32\" cy=\"32\" r=\"27\"/><path class=\"mark\" d=\"M19 33 L28 42 L46 22\"/>",
            "review" => "<path class=\"shape\" d=\"M32 6 L59 56 L5 56 Z\"/><path class=\"mark\" d=\"M32 22 L32 40 M32 48 L32 49\"/>",
            "fail" => "<path class=\"shape\" d=\"M21 5 L43 5 L59 21 L59 43 L43 59 L21 59 L5 43 L5 21 Z\"/><path class=\"mark\" d=\"M22 22 L42 42 M42 22 L22 42\"/>",
            _ => "<circle class=\"shape\" cx=\"32\" cy=\"32\" r=\"27\" stroke-dasharray=\"8 6\"/><path class=\"mark\" d=\"M18 32 L46 32\"/>",
        };
        h.Append("<div class=\"verdict verdict-").Append(kind).Append("\" data-verdict=\"").Append(kind).Append("\">")
            .Append("<svg viewBox=\"0 0 64 64\" aria-hidden=\"true\" focusable=\"false\">").Append(shape).Append("</svg>")
            .Append("<p><span class=\"word\">").Append(Word(verdict)).Append("</span> <span class=\"meaning\">").Append(E(meaning)).Append("</span></p></div>\n");
    }

    private static void Identification(StringBuilder h, AuditRecord record, JsonElement r)
    {
        h.Append("<section class=\"identification\" aria-labelledby=\"id-heading\">\n<h2 id=\"id-heading\">Record</h2>\n<table class=\"values\">\n");
        Row(h, "Asset", record.Asset);
        Row(h, "Site", record.SiteId ?? "not given");
        Row(h, "Evaluated (UTC)", record.EvaluatedAt.UtcDateTime.ToString("yyyy-MM-dd HH:mm:ss", Invariant) + " UTC", "evaluated-at");
        Row(h, "Evaluation id", record.Id.ToString("D"), "id");
        Row(h, "Requested by (key id)", record.Caller);
        Row(h, "Engine version", record.EngineVersion);
        Row(h, "Gas model", Text(r, "method") ?? "not stated");
        Row(h, "Rule-set digest (SHA-256)", record.RuleDigest, "digest");
        if (r.TryGetProperty("ruleSet", out var ruleSet))
        {
            var layers = Array(ruleSet, "layers").Select(l => $"{Text(l, "name")} ({Text(l, "digest")?[..Math.Min(12, Text(l, "digest")?.Length ?? 0)]}…)");
            Row(h, "Rule layers, in merge order", string.Join(" ← ", layers), "layers");
            if (Text(ruleSet, "applied") is { } applied)
            {
                Row(h, "Layers applied", applied);
            }
        }

        if (record.ReplayOf is { } replay)
        {
            Row(h, "Replay of", replay.ToString("D"));
        }

        if (r.TryGetProperty("barometricPressure", out var barometer))
        {
            Row(h, "Barometric pressure used for gauge readings", Q(barometer));
        }

        h.Append("</table>\n</section>\n");
    }

    // The answer first: the governing limit in words, its limit and margin, the estimate and the highest discharge pressure.
    private static void Summary(StringBuilder h, JsonElement r)
    {
        h.Append("<section class=\"summary\" aria-labelledby=\"summary-heading\">\n<h2 id=\"summary-heading\">Answer</h2>\n");
        var stages = Array(r, "stages");
        var governingIndex = r.TryGetProperty("governing", out var g) && g.TryGetProperty("stage", out var gi) ? gi.GetInt32() : -1;
        if (governingIndex < 0 || governingIndex >= stages.Count)
        {
            h.Append("<p>No violation-level limit applied, so none governs. Read each stage's findings and what was not checked below.</p>\n</section>\n");
            return;
        }

        var stage = stages[governingIndex];
        var rule = Text(g, "ruleId") ?? string.Empty;
        var finding = Array(stage, "findings").FirstOrDefault(f => Text(f, "ruleId") == rule);
        var governing = stage.TryGetProperty("governing", out var sg) ? sg : default;
        var limit = governing.ValueKind == JsonValueKind.Object && governing.TryGetProperty("limit", out var l) ? Q(l) : NoNumberWords;
        var margin = g.TryGetProperty("margin", out var m) ? m : default;
        var beyond = margin.ValueKind == JsonValueKind.Object && margin.GetProperty("value").GetDouble() < 0;
        h.Append("<table class=\"values\">\n");
        Row(h, "Governing limit", $"{(finding.ValueKind == JsonValueKind.Object ? Text(finding, "title") : rule)} ({rule}), stage {governingIndex + 1}", "governing");
        Row(h, "Limit", limit);
        Row(h, "Margin", margin.ValueKind == JsonValueKind.Object ? $"{Q(margin)} {(beyond ? "beyond the limit" : "below the limit")}" : "—", "margin");
        if (stage.TryGetProperty("dischargeTemperature", out var dt))
        {
            Row(h, "Estimated discharge temperature", Q(dt.GetProperty("estimated")), "estimated");
        }

        if (stage.TryGetProperty("envelope", out var envelope))
        {
            var typed = envelope.TryGetProperty("maxDischargePressureAsTyped", out var t) ? Q(t) : null;
            var absolute = envelope.TryGetProperty("maxDischargePressure", out var a) ? Q(a) + " absolute" : null;
            Row(h, "Highest allowed discharge pressure", typed is null ? absolute ?? "not found (see the envelope note)" : absolute is null ? typed : $"{typed} ({absolute})", "max-discharge-pressure");
        }

        h.Append("</table>\n</section>\n");
    }

    // Every input as sent, path by path: nothing is left out, including members this writer does not know by name.
    private static void Inputs(StringBuilder h, JsonElement q, JsonElement r)
    {
        h.Append("<section class=\"inputs\" aria-labelledby=\"inputs-heading\">\n<h2 id=\"inputs-heading\">Inputs as sent</h2>\n");
        h.Append("<p>Every field of the stored request, as typed (units and gauge or absolute basis as given). Blank fields were not sent.</p>\n");
        foreach (var part in q.EnumerateObject().Where(p => p.Name != "stages"))
        {
            h.Append("<h3>").Append(E(InputTitle(part.Name))).Append("</h3>\n<table class=\"values inputs-table\" data-part=\"").Append(E(part.Name)).Append("\">\n");
            Flatten(h, part.Name, part.Value);
            h.Append("</table>\n");
        }

        var stages = q.TryGetProperty("stages", out var s) && s.ValueKind == JsonValueKind.Array ? s.EnumerateArray().ToList() : [];
        for (var i = 0; i < stages.Count; i++)
        {
            h.Append("<h3>Stage ").Append((i + 1).ToString(Invariant)).Append(" inputs</h3>\n<table class=\"values inputs-table\" data-part=\"stages[")
                .Append(i.ToString(Invariant)).Append("]\">\n");
            Flatten(h, string.Empty, stages[i]);
            h.Append("</table>\n");
        }

        if (r.TryGetProperty("gas", out var gas))
        {
            h.Append("<h3>Gas as evaluated</h3>\n<table class=\"values\">\n");
            if (gas.TryGetProperty("composition", out var composition))
            {
                Row(h, "Mole fractions (humidity added)", string.Join(", ", composition.EnumerateObject().Select(c => $"{c.Name} {c.Value.GetDouble().ToString("0.######", Invariant)}")), "composition");
            }

            if (gas.TryGetProperty("molarMass", out var molar))
            {
                Row(h, "Molar mass", Q(molar));
            }

            Row(h, "Service classes", string.Join(", ", Array(gas, "serviceClasses").Select(c => c.GetString())));
            h.Append("</table>\n");
        }

        h.Append("</section>\n");
    }

    private static string InputTitle(string name) => name switch
    {
        "asset" => "Asset",
        "site" => "Site",
        "service" => "Declared service",
        "gas" => "Gas, humidity",
        "method" => "Gas model asked for",
        "outputUnits" => "Answer units",
        "flow" => "Flow",
        "scenarios" => "Scenarios",
        _ => name,
    };

    private static void Flatten(StringBuilder h, string path, JsonElement value)
    {
        switch (value.ValueKind)
        {
            case JsonValueKind.Object when !IsQuantity(value):
                foreach (var p in value.EnumerateObject())
                {
                    Flatten(h, path.Length == 0 ? p.Name : path + "." + p.Name, p.Value);
                }

                break;
            case JsonValueKind.Array when value.EnumerateArray().Any(e => e.ValueKind is JsonValueKind.Object or JsonValueKind.Array):
                var i = 0;
                foreach (var e in value.EnumerateArray())
                {
                    Flatten(h, $"{path}[{i++}]", e);
                }

                break;
            default:
                h.Append("<tr data-path=\"").Append(E(path)).Append("\"><th scope=\"row\">").Append(E(path)).Append("</th><td>").Append(E(Scalar(value))).Append("</td></tr>\n");
                break;
        }
    }

    private static bool IsQuantity(JsonElement e) =>
        e.ValueKind == JsonValueKind.Object && e.TryGetProperty("value", out _) && e.TryGetProperty("unit", out _) && e.EnumerateObject().Count() == 2;

    private static string Scalar(JsonElement e) => e.ValueKind switch
    {
        JsonValueKind.String => e.GetString() ?? string.Empty,
        JsonValueKind.Number => e.GetRawText(),
        JsonValueKind.True => "yes",
        JsonValueKind.False => "no",
        JsonValueKind.Null => "null",
        JsonValueKind.Array => string.Join(", ", e.EnumerateArray().Select(Scalar)),
        _ when IsQuantity(e) => Q(e),
        _ => e.GetRawText(),
    };

    private static void Stage(StringBuilder h, JsonElement s, int count)
    {
        var index = s.GetProperty("index").GetInt32();
        var name = count > 1 ? $"Stage {index + 1}" : "The stage";
        var verdict = Text(s, "verdict") ?? "none";
        h.Append("<section class=\"stage\" data-stage=\"").Append(index.ToString(Invariant)).Append("\" aria-labelledby=\"stage-").Append(index.ToString(Invariant)).Append("-heading\">\n")
            .Append("<h2 id=\"stage-").Append(index.ToString(Invariant)).Append("-heading\">").Append(E(name)).Append(": <span class=\"tag tag-").Append(E(verdict)).Append("\">")
            .Append(Word(verdict)).Append("</span></h2>\n<table class=\"values stage-values\">\n");
        var suction = s.GetProperty("suction");
        var discharge = s.GetProperty("discharge");
        Row(h, "Suction pressure", Typed(suction));
        Row(h, "Suction temperature", Q(suction.GetProperty("temperature")));
        Row(h, "Discharge pressure", Typed(discharge));
        Row(h, "Pressure ratio (absolute)", s.GetProperty("pressureRatio").GetDouble().ToString("0.###", Invariant));
        if (s.TryGetProperty("dischargeTemperature", out var dt))
        {
            Row(h, "Isentropic discharge temperature (η = 1)", Q(dt.GetProperty("isentropic")));
            Row(h, "Estimated discharge temperature", Q(dt.GetProperty("estimated")), "estimated");
            Row(h, "Range of the estimate (efficiency uncertainty)", $"{Q(dt.GetProperty("estimatedLowerBound"))} to {Q(dt.GetProperty("estimatedUpperBound"))}");
        }
        else
        {
            Row(h, "Not evaluated", Text(s, "notEvaluated") ?? "no discharge temperatures");
        }

        if (s.TryGetProperty("efficiency", out var eff))
        {
            var given = Text(eff, "given") ?? "isentropic";
            var source = Text(eff, "source") switch
            {
                "rule-default" => "the compressor type's default from the rule file (not measured)",
                "calibration" => "implied by the measured duty (calibration)",
                _ => "as entered",
            };
            var uncertainty = eff.TryGetProperty("uncertainty", out var u) ? $" ± {u.GetDouble().ToString("0.###", Invariant)}" : string.Empty;
            Row(h, "Efficiency used", $"{given} {eff.GetProperty(given).GetDouble().ToString("0.###", Invariant)}{uncertainty}, {source}" + (Text(eff, "basis") is { } basis ? $"; basis: {basis}" : string.Empty), "efficiency");
        }

        Row(h, "Gas model of these temperatures", Text(s, "method") ?? "ideal-gas");
        if (s.TryGetProperty("governing", out var g))
        {
            var margin = g.TryGetProperty("margin", out var m) ? m : default;
            var words = margin.ValueKind == JsonValueKind.Object ? $"{Q(margin)} {(margin.GetProperty("value").GetDouble() < 0 ? "beyond the limit" : "below the limit")}" : "—";
            Row(h, "Governing limit", g.TryGetProperty("limit", out var gl)
                ? $"{Title(s, Text(g, "ruleId"))} ({Text(g, "ruleId")}) {Q(gl)} on the {Text(g, "quantity")} temperature; margin {words}"
                : $"{Title(s, Text(g, "ruleId"))} ({Text(g, "ruleId")}): {NoNumberWords}");
        }

        if (s.TryGetProperty("envelope", out var envelope))
        {
            if (envelope.TryGetProperty("maxDischargePressure", out var p))
            {
                var typed = envelope.TryGetProperty("maxDischargePressureAsTyped", out var t) ? $"{Q(t)} ({Q(p)} absolute)" : Q(p) + " absolute";
                Row(h, "Highest discharge pressure before the governing limit", typed);
            }

            if (envelope.TryGetProperty("maxSuctionTemperature", out var ts))
            {
                Row(h, "Highest suction temperature before it", Q(ts));
            }

            if (Text(envelope, "note") is { } note)
            {
                Row(h, "Envelope note", note);
            }
        }

        if (s.TryGetProperty("measured", out var measured))
        {
            Row(h, "Measured discharge temperature", $"{Q(measured.GetProperty("dischargeTemperature"))} (measured minus estimated {Q(measured.GetProperty("minusEstimated"))})");
        }

        h.Append("</table>\n");
        h.Append(ReportChart.Draw(s));
        Findings(h, s);
        h.Append("</section>\n");
    }

    private static void Findings(StringBuilder h, JsonElement s)
    {
        var order = new Dictionary<string, int>(StringComparer.Ordinal) { ["violation"] = 0, ["warning"] = 1, ["info"] = 2, ["pass"] = 3 };
        var findings = Array(s, "findings").OrderBy(f => order.GetValueOrDefault(Text(f, "severity") ?? string.Empty, 9)).ToList();
        h.Append("<h3>Findings</h3>\n<ul class=\"findings\">\n");
        foreach (var f in findings)
        {
            var severity = Text(f, "severity") ?? "info";
            h.Append("<li class=\"finding\" data-rule=\"").Append(E(Text(f, "ruleId") ?? string.Empty)).Append("\" data-severity=\"").Append(E(severity)).Append("\">")
                .Append("<p class=\"finding-head\"><span class=\"tag tag-").Append(E(severity)).Append("\">").Append(E(SeverityWords.GetValueOrDefault(severity, severity.ToUpperInvariant())))
                .Append("</span> ").Append(E(Text(f, "ruleId") ?? string.Empty)).Append(": ").Append(E(Text(f, "title") ?? string.Empty)).Append("</p>");
            var numbers = new List<string>();
            if (f.TryGetProperty("value", out var v))
            {
                numbers.Add($"{Text(f, "quantity")} {Q(v)}");
            }

            if (f.TryGetProperty("limit", out var l))
            {
                numbers.Add("limit " + Q(l));
            }

            if (f.TryGetProperty("margin", out var m))
            {
                numbers.Add("margin " + Q(m));
            }

            if (numbers.Count > 0)
            {
                h.Append("<p>").Append(E(string.Join(" · ", numbers))).Append("</p>");
            }

            if (severity != "pass" && Text(f, "message") is { } message)
            {
                h.Append("<p>").Append(E(message)).Append("</p>");
            }

            if (Text(f, "note") is { } note)
            {
                h.Append("<p>").Append(E(note)).Append("</p>");
            }

            h.Append("<p class=\"basis\"><strong>Basis:</strong> ").Append(E(Text(f, "basis") ?? "in the archived rule set of this record's digest"))
                .Append(" (layer ").Append(E(Text(f, "layer") ?? "default")).Append(")</p>");
            if (Text(f, "loosenedReason") is { } loosened)
            {
                h.Append("<p class=\"basis\"><strong>Loosened by the layer because:</strong> ").Append(E(loosened)).Append("</p>");
            }

            h.Append("</li>\n");
        }

        h.Append("</ul>\n<h3>Not checked</h3>\n");
        var notChecked = Array(s, "notChecked");
        if (notChecked.Count == 0)
        {
            h.Append("<p>Every rule that applied was checked.</p>\n");
            return;
        }

        h.Append("<ul class=\"not-checked\">\n");
        foreach (var n in notChecked)
        {
            var missing = string.Join(", ", Array(n, "missing").Select(x => x.GetString()));
            h.Append("<li data-rule=\"").Append(E(Text(n, "ruleId") ?? string.Empty)).Append("\"><strong>").Append(E(Text(n, "ruleId") ?? string.Empty)).Append(":</strong> missing ")
                .Append(E(missing)).Append(Text(n, "reason") is { } reason ? " — " + E(reason) : string.Empty).Append("</li>\n");
        }

        h.Append("</ul>\n");
    }

    private static void Cautions(StringBuilder h, JsonElement r)
    {
        h.Append("<section class=\"cautions-section\" aria-labelledby=\"cautions-heading\">\n<h2 id=\"cautions-heading\">Cautions</h2>\n<ul class=\"cautions\">\n");
        foreach (var c in Array(r, "cautions"))
        {
            h.Append("<li>").Append(E(c.GetString() ?? string.Empty)).Append("</li>\n");
        }

        h.Append("</ul>\n</section>\n");
    }

    private static void SignOff(StringBuilder h)
    {
        h.Append("<section class=\"sign-off\" aria-labelledby=\"sign-off-heading\">\n<h2 id=\"sign-off-heading\">Review and sign-off</h2>\n")
            .Append("<p>To be completed on paper or in the site's change-management system. The screening result above does not approve the change.</p>\n")
            .Append("<table class=\"sign-off-table\">\n<thead><tr><th scope=\"col\">Role</th><th scope=\"col\">Name</th><th scope=\"col\">Date</th><th scope=\"col\">Signature</th></tr></thead>\n<tbody>\n");
        foreach (var role in new[] { "Prepared by", "Reviewed by (licensed engineer)", "Approved by (change owner)" })
        {
            h.Append("<tr><th scope=\"row\">").Append(E(role)).Append("</th><td class=\"blank\"></td><td class=\"blank\"></td><td class=\"blank\"></td></tr>\n");
        }

        h.Append("</tbody>\n</table>\n<p class=\"blank-line\">Change reference: ______________________</p>\n")
            .Append("<p class=\"blank-line\">Manufacturer's limits checked against (document, revision): ______________________</p>\n")
            .Append("<p class=\"blank-line\">Local codes and standards applied: ______________________</p>\n</section>\n");
    }

    private static string Typed(JsonElement state)
    {
        var absolute = Q(state.GetProperty("pressureAbsolute")) + " absolute";
        return state.TryGetProperty("pressureAsTyped", out var typed) ? $"{Q(typed)} ({absolute})" : absolute;
    }

    private static string Title(JsonElement stage, string? ruleId) =>
        Array(stage, "findings").Where(f => Text(f, "ruleId") == ruleId).Select(f => Text(f, "title")).FirstOrDefault() ?? ruleId ?? string.Empty;

    private static void Row(StringBuilder h, string label, string value, string? key = null)
    {
        h.Append("<tr").Append(key is null ? string.Empty : " data-value=\"" + key + "\"").Append("><th scope=\"row\">").Append(E(label)).Append("</th><td>").Append(E(value)).Append("</td></tr>\n");
    }

    internal static List<JsonElement> Array(JsonElement e, string name) =>
        e.ValueKind == JsonValueKind.Object && e.TryGetProperty(name, out var a) && a.ValueKind == JsonValueKind.Array ? a.EnumerateArray().ToList() : [];

    internal static string? Text(JsonElement e, string name) =>
        e.ValueKind == JsonValueKind.Object && e.TryGetProperty(name, out var v) && v.ValueKind == JsonValueKind.String ? v.GetString() : null;

    /// <summary>"151.4 °C" from {"value":151.37,"unit":"°C"}; a plain number or string as it is.</summary>
    internal static string Q(JsonElement q)
    {
        if (q.ValueKind == JsonValueKind.Object && q.TryGetProperty("value", out var v) && v.ValueKind == JsonValueKind.Number)
        {
            var unit = Text(q, "unit") ?? string.Empty;
            var value = v.GetDouble();
            var text = Math.Abs(value) >= 1000 ? value.ToString("0", Invariant) : Math.Abs(value) >= 1 ? value.ToString("0.0", Invariant) : value.ToString("0.###", Invariant);
            return unit is "" or "1" ? text : text + " " + unit;
        }

        return q.ValueKind == JsonValueKind.String ? q.GetString() ?? string.Empty : q.GetRawText();
    }

    private static string Word(string verdict) => VerdictWords.GetValueOrDefault(verdict, "NO VERDICT");

    internal static string E(string text) => WebUtility.HtmlEncode(text);
}
