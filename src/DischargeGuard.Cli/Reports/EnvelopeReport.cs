using System.Globalization;
using System.Text.Encodings.Web;
using System.Text.Json;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Cli.Reports;

/// <summary>The operating envelope per case and stage: how far discharge pressure and suction temperature may rise before the governing limit, and each limit's own bound.</summary>
public static class EnvelopeReport
{
    /// <summary>Writes the envelope as text.</summary>
    /// <param name="report">What the run found.</param>
    /// <param name="w">Where to write.</param>
    public static void WriteText(GateReport report, TextWriter w)
    {
        ArgumentNullException.ThrowIfNull(report);
        ArgumentNullException.ThrowIfNull(w);
        w.WriteLine("DischargeGuard operating envelope — evaluated by " + report.EvaluatedBy);
        foreach (var f in report.Files.Where(f => f.Errors.Count > 0))
        {
            w.WriteLine();
            w.WriteLine("Proposal " + f.File + ": not read");
            foreach (var e in f.Errors)
            {
                w.WriteLine("  " + e);
            }
        }

        foreach (var result in report.Results)
        {
            w.WriteLine();
            var r = result.Response;
            if (r is null)
            {
                w.WriteLine($"{result.Case.File}: case '{result.Case.Name}': not evaluated — {ExitCodes.Describe(result.ExitCode)} (exit {result.ExitCode})");
                foreach (var line in result.Errors.Select(e => e.ToString()).Concat(result.Messages))
                {
                    w.WriteLine("  " + line);
                }

                continue;
            }

            w.WriteLine($"{result.Case.File}: case '{result.Case.Name}' — {Format.Subject(r.Asset, r.Site)} — verdict {Format.Verdict(r.Verdict)} — evaluation {r.Id}, rules {r.RuleSet.Digest}");
            foreach (var s in r.Stages)
            {
                var e = s.Envelope;
                w.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"  Stage {s.Index + 1}: now {Format.Q(s.Discharge.PressureAbsolute)} discharge (absolute), {Format.Q(s.Suction.Temperature)} suction, {(s.DischargeTemperature is { } dt ? "estimated " + Format.Q(dt.Estimated) : "not evaluated (liquid at suction)")}"));
                if (e is null)
                {
                    w.WriteLine("    no violation-level limit applies to this stage, so it has no envelope.");
                    continue;
                }

                w.WriteLine($"    governing rule {e.GoverningRule}: highest discharge pressure {Format.Q(e.MaxDischargePressure)} (absolute), highest suction temperature {Format.Q(e.MaxSuctionTemperature)}");
                if (e.Note is { } note)
                {
                    w.WriteLine("    " + note);
                }

                if (e.ByLimit is { Count: > 0 })
                {
                    var table = new TextTable("rule", "checks", "limit", "max P2/P1", "max discharge pressure (absolute)", "status");
                    foreach (var l in e.ByLimit)
                    {
                        table.Add(l.RuleId, l.Quantity, Format.Q(l.Limit), l.MaxPressureRatio is { } ratio ? Format.N(ratio, "0.00") : "—", Format.Q(l.MaxDischargePressure), l.Status);
                    }

                    table.WriteTo(w, "    ");
                }
            }
        }

        w.WriteLine();
        w.WriteLine($"Result: {ExitCodes.Describe(report.ExitCode)} (exit {report.ExitCode})");
        w.WriteLine();
        w.WriteLine("Cautions:");
        foreach (var c in report.Cautions)
        {
            w.WriteLine("  - " + c);
        }
    }

    /// <summary>Writes the envelope as JSON: per case and stage, the response's <c>envelope</c> object.</summary>
    /// <param name="report">What the run found.</param>
    /// <param name="output">Where to write (UTF-8).</param>
    public static void WriteJson(GateReport report, Stream output)
    {
        ArgumentNullException.ThrowIfNull(report);
        using var w = new Utf8JsonWriter(output, new JsonWriterOptions { Indented = true, Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping });
        w.WriteStartObject();
        w.WriteNumber("exitCode", report.ExitCode);
        w.WriteStartArray("cases");
        foreach (var result in report.Results)
        {
            w.WriteStartObject();
            w.WriteString("file", result.Case.File);
            w.WriteString("case", result.Case.Name);
            w.WriteNumber("exitCode", result.ExitCode);
            if (result.Response is { } r)
            {
                w.WriteString("evaluationId", r.Id);
                w.WriteString("ruleDigest", r.RuleSet.Digest);
                w.WriteStartArray("stages");
                foreach (var s in r.Stages)
                {
                    w.WriteStartObject();
                    w.WriteNumber("index", s.Index);
                    w.WritePropertyName("envelope");
                    if (s.Envelope is null)
                    {
                        w.WriteNullValue();
                    }
                    else
                    {
                        JsonSerializer.Serialize(w, s.Envelope, EvaluationJson.Options.GetTypeInfo(typeof(EnvelopeDto)));
                    }

                    w.WriteEndObject();
                }

                w.WriteEndArray();
            }

            w.WriteEndObject();
        }

        w.WriteEndArray();
        w.WriteStartArray("cautions");
        foreach (var c in report.Cautions)
        {
            w.WriteStringValue(c);
        }

        w.WriteEndArray();
        w.WriteEndObject();
    }
}
