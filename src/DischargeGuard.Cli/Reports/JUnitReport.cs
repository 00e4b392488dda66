using System.Globalization;
using System.Text;
using System.Xml;
using DischargeGuard.Cli.Evaluation;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Cli.Reports;

/// <summary>
/// The JUnit XML report, for CI systems that show JUnit: one test suite per case, one test case per stage × rule.
/// A violation is a <c>failure</c>; a warning (review needed) and a rule that could not be checked are <c>skipped</c>
/// with the reason; a case that could not be evaluated is one test case with an <c>error</c>.
/// </summary>
public static class JUnitReport
{
    /// <summary>Writes the report.</summary>
    /// <param name="report">What the run found.</param>
    /// <param name="output">Where to write (UTF-8).</param>
    public static void Write(GateReport report, Stream output)
    {
        ArgumentNullException.ThrowIfNull(report);
        var settings = new XmlWriterSettings { Indent = true, Encoding = new UTF8Encoding(false), CheckCharacters = true };
        using var x = XmlWriter.Create(output, settings);
        var suites = report.Files.Where(f => f.Errors.Count > 0).Select(f => (Name: f.File, Cases: FileErrorCases(f), Report: (Uri?)null)).ToList();
        suites.AddRange(report.Results.Select(r => (Name: $"{r.Case.File}: {r.Case.Name}", Cases: CasesOf(r), Report: r.ReportUrl)));
        x.WriteStartDocument();
        x.WriteStartElement("testsuites");
        x.WriteAttributeString("name", "dischargeguard check");
        WriteCounts(x, suites.SelectMany(s => s.Cases).ToList());
        foreach (var (name, cases, reportUrl) in suites)
        {
            x.WriteStartElement("testsuite");
            x.WriteAttributeString("name", name);
            WriteCounts(x, cases);
            foreach (var c in cases)
            {
                x.WriteStartElement("testcase");
                x.WriteAttributeString("classname", c.ClassName);
                x.WriteAttributeString("name", c.Name);
                x.WriteAttributeString("time", "0");
                if (c.Outcome is not null)
                {
                    x.WriteStartElement(c.Outcome);
                    x.WriteAttributeString("message", c.Message);
                    if (c.Outcome != "skipped")
                    {
                        x.WriteAttributeString("type", c.Type);
                    }

                    if (c.Detail.Length > 0)
                    {
                        x.WriteString(c.Detail);
                    }

                    x.WriteEndElement();
                }

                if (c.Output.Length > 0)
                {
                    x.WriteElementString("system-out", c.Output);
                }

                x.WriteEndElement();
            }

            // The server's change record of the case, when a server evaluated it, then the cautions.
            x.WriteElementString("system-out", string.Join("\n", (reportUrl is null ? [] : new[] { "change record: " + reportUrl }).Concat(report.Cautions)));
            x.WriteEndElement();
        }

        x.WriteEndElement();
        x.WriteEndDocument();
    }

    private static void WriteCounts(XmlWriter x, IReadOnlyCollection<JUnitCase> cases)
    {
        x.WriteAttributeString("tests", cases.Count.ToString(CultureInfo.InvariantCulture));
        x.WriteAttributeString("failures", cases.Count(c => c.Outcome == "failure").ToString(CultureInfo.InvariantCulture));
        x.WriteAttributeString("errors", cases.Count(c => c.Outcome == "error").ToString(CultureInfo.InvariantCulture));
        x.WriteAttributeString("skipped", cases.Count(c => c.Outcome == "skipped").ToString(CultureInfo.InvariantCulture));
        x.WriteAttributeString("time", "0");
    }

    private static List<JUnitCase> FileErrorCases(Proposals.ProposalFile f) =>
    [
        new JUnitCase(Safe(f.File), "read proposal", "error", "invalid-input", "The proposal cannot be read (exit 64).", string.Join("\n", f.Errors), string.Empty),
    ];

    private static List<JUnitCase> CasesOf(CaseResult r)
    {
        var caseClass = Safe(r.Case.File) + "." + Safe(r.Case.Name);
        if (r.Response is not { } response)
        {
            var detail = string.Join("\n", r.Errors.Select(e => e.ToString()).Concat(r.Messages));
            return [new JUnitCase(caseClass, "evaluation", "error", ExitCodes.Describe(r.ExitCode).Replace(' ', '-'), $"Not evaluated: {ExitCodes.Describe(r.ExitCode)} (exit {r.ExitCode}).", detail, string.Empty)];
        }

        // Which layers applied is a test case of its own, so a viewer shows it beside the findings it decided.
        var applied = Format.Applied(response.RuleSet);
        var list = new List<JUnitCase> { new(caseClass, "rule layers", null, string.Empty, string.Empty, string.Empty, $"{applied}\nrules {response.RuleSet.Digest}") };
        foreach (var s in response.Stages)
        {
            var stageClass = $"{caseClass}.stage{s.Index + 1}";
            var ids = $"evaluation {response.Id}; rules {response.RuleSet.Digest}; {applied}";
            foreach (var f in s.Findings)
            {
                var numbers = Numbers(f);
                var output = $"{f.Message}\nbasis: {f.Basis}\nlayer: {f.Layer}\n{ids}";
                list.Add(f.Severity switch
                {
                    "violation" => new JUnitCase(stageClass, f.RuleId, "failure", "violation", $"{f.Title}: {numbers}", output, string.Empty),
                    "warning" => new JUnitCase(stageClass, f.RuleId, "skipped", "review", $"Review needed — {f.Title}: {numbers}", string.Empty, output),
                    _ => new JUnitCase(stageClass, f.RuleId, null, string.Empty, string.Empty, string.Empty, $"{f.Severity}: {f.Title}: {numbers}\n{output}"),
                });
            }

            foreach (var n in s.NotChecked)
            {
                list.Add(new JUnitCase(stageClass, n.RuleId, "skipped", "not-checked", $"Not checked: missing {string.Join(", ", n.Missing)} — {n.Reason}", string.Empty, ids));
            }
        }

        return list;
    }

    private static string Numbers(FindingDto f)
    {
        var parts = new List<string>();
        if (f.Value is not null)
        {
            parts.Add($"{f.Quantity} {Format.Q(f.Value)}");
        }

        if (f.Limit is not null)
        {
            parts.Add($"limit {Format.Q(f.Limit)}");
        }

        if (f.Margin is not null)
        {
            parts.Add($"margin {Format.Q(f.Margin)}");
        }

        return parts.Count == 0 ? (f.Quantity == "combination" ? "prohibited, whatever the temperature" : f.Quantity) : string.Join(", ", parts);
    }

    // Dots separate the class name's parts in JUnit viewers; keep them out of file and case names.
    private static string Safe(string s) => s.Replace('.', '_');

    private sealed record JUnitCase(string ClassName, string Name, string? Outcome, string Type, string Message, string Detail, string Output);
}
