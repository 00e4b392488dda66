using System.Text.Encodings.Web;
using System.Text.Json;
using DischargeGuard.Cli.Evaluation;
using DischargeGuard.Cli.Proposals;

namespace DischargeGuard.Cli.Reports;

/// <summary>
/// The machine-readable report: per case its file, name, exit code and the API's response document exactly as the
/// service sent it (or as the local audit record holds it); refused cases carry their errors instead.
/// </summary>
public static class JsonReport
{
    private static readonly JsonWriterOptions Options = new() { Indented = true, Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping };

    /// <summary>Writes the report.</summary>
    /// <param name="report">What the run found.</param>
    /// <param name="output">Where to write (UTF-8).</param>
    public static void Write(GateReport report, Stream output)
    {
        ArgumentNullException.ThrowIfNull(report);
        using var w = new Utf8JsonWriter(output, Options);
        w.WriteStartObject();
        w.WriteNumber("exitCode", report.ExitCode);
        w.WriteString("result", ExitCodes.Describe(report.ExitCode));
        w.WriteString("evaluatedBy", report.EvaluatedBy);
        w.WriteStartArray("files");
        foreach (var f in report.Files)
        {
            w.WriteStartObject();
            w.WriteString("file", f.File);
            WriteErrors(w, f.Errors);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        w.WriteStartArray("cases");
        foreach (var r in report.Results)
        {
            WriteCase(w, r);
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

    private static void WriteCase(Utf8JsonWriter w, CaseResult r)
    {
        w.WriteStartObject();
        w.WriteString("file", r.Case.File);
        w.WriteString("case", r.Case.Name);
        w.WriteNumber("exitCode", r.ExitCode);
        w.WriteString("result", ExitCodes.Describe(r.ExitCode));
        WriteErrors(w, r.Errors);
        if (r.Messages.Count > 0)
        {
            w.WriteStartArray("messages");
            foreach (var m in r.Messages)
            {
                w.WriteStringValue(m);
            }

            w.WriteEndArray();
        }

        if (r.Response is { } response)
        {
            // Also carried inside the response as ruleSet.applied; repeated here so a reader of the gate's report need
            // not know the answer's shape to see which layers applied.
            w.WriteString("rulesApplied", Format.Applied(response.RuleSet));
        }

        if (r.ReportUrl is { } report)
        {
            w.WriteString("report", report.ToString());
        }

        if (r.ResponseJson is { } body)
        {
            w.WritePropertyName("response");
            w.WriteRawValue(body, skipInputValidation: false);
        }

        w.WriteEndObject();
    }

    private static void WriteErrors(Utf8JsonWriter w, IReadOnlyList<InputError> errors)
    {
        if (errors.Count == 0)
        {
            return;
        }

        w.WriteStartArray("errors");
        foreach (var e in errors)
        {
            w.WriteStartObject();
            w.WriteString("file", e.File);
            w.WriteNumber("line", e.Line);
            w.WriteNumber("column", e.Column);
            w.WriteString("field", e.Field);
            w.WriteString("message", e.Message);
            w.WriteEndObject();
        }

        w.WriteEndArray();
    }
}
