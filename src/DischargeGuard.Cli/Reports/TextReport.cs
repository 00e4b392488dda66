using DischargeGuard.Cli.Evaluation;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Cli.Reports;

/// <summary>The human-readable report: a table per case and stage, each finding with its basis, ids, digests and cautions.</summary>
public static class TextReport
{
    /// <summary>Writes the report.</summary>
    /// <param name="report">What the run found.</param>
    /// <param name="w">Where to write.</param>
    public static void Write(GateReport report, TextWriter w)
    {
        ArgumentNullException.ThrowIfNull(report);
        ArgumentNullException.ThrowIfNull(w);
        w.WriteLine("DischargeGuard engineering-change check — evaluated by " + report.EvaluatedBy);
        foreach (var file in report.Files)
        {
            w.WriteLine();
            w.WriteLine("Proposal " + file.File);
            foreach (var e in file.Errors)
            {
                w.WriteLine("  invalid: " + e);
            }

            foreach (var result in report.Results.Where(r => file.Cases.Contains(r.Case)))
            {
                WriteCase(result, w);
            }
        }

        w.WriteLine();
        var code = report.ExitCode;
        w.WriteLine($"Result: {ExitCodes.Describe(code)} (exit {code}) — {report.Results.Count} case(s) in {report.Files.Count} file(s); "
            + $"{report.Results.Count(r => r.Response is not null)} evaluated and recorded.");
        var digests = report.Results.Where(r => r.Response is not null).Select(r => r.Response!.RuleSet.Digest).Distinct(StringComparer.Ordinal).ToList();
        if (digests.Count > 0)
        {
            w.WriteLine("Rule digest(s): " + string.Join(", ", digests));
        }

        w.WriteLine();
        w.WriteLine("Cautions:");
        foreach (var c in report.Cautions)
        {
            w.WriteLine("  - " + c);
        }
    }

    private static void WriteCase(CaseResult result, TextWriter w)
    {
        var c = result.Case;
        w.WriteLine();
        var r = result.Response;
        if (r is null)
        {
            w.WriteLine($"  Case '{c.Name}': not evaluated — {ExitCodes.Describe(result.ExitCode)} (exit {result.ExitCode})");
            foreach (var e in result.Errors)
            {
                w.WriteLine("    " + e);
            }

            foreach (var m in result.Messages)
            {
                w.WriteLine("    " + m);
            }

            return;
        }

        w.WriteLine($"  Case '{c.Name}' — {Format.Subject(r.Asset, r.Site)} — verdict {Format.Verdict(r.Verdict)}");
        w.WriteLine($"    evaluation {r.Id} at {r.EvaluatedAt:u}, engine {r.EngineVersion}, method {r.Method}");
        w.WriteLine($"    rules {r.RuleSet.Digest}");
        if (result.ReportUrl is { } report)
        {
            w.WriteLine($"    change record {report} (send the key as X-Api-Key, or open report.html?evaluation={r.Id} on the service's page)");
        }
        w.WriteLine($"    {Format.Applied(r.RuleSet)}");
        foreach (var m in result.Messages)
        {
            w.WriteLine("    note: " + m);
        }

        var table = new TextTable("stage", "P2/P1", "suction", "discharge", "isentropic T2s", "estimated T2 (band)", "governing limit", "margin", "verdict");
        foreach (var s in r.Stages)
        {
            var t = s.DischargeTemperature;
            table.Add(
                (s.Index + 1).ToString(System.Globalization.CultureInfo.InvariantCulture),
                Format.N(s.PressureRatio, "0.00"),
                Format.Q(s.Suction.PressureAbsolute) + ", " + Format.Q(s.Suction.Temperature),
                Format.Q(s.Discharge.PressureAbsolute),
                t is null ? "not evaluated" : Format.Q(t.Isentropic),
                t is null ? "liquid at suction" : $"{Format.Q(t.Estimated)} ({Format.N(t.EstimatedLowerBound.Value, "0.#")}–{Format.Q(t.EstimatedUpperBound)})",
                s.Governing is { } g ? g.Limit is null ? $"{g.RuleId} (no number: fails as stated)" : $"{g.RuleId} {Format.Q(g.Limit)} ({g.Quantity})" : "none applies",
                s.Governing?.Margin is { } margin ? Format.Q(margin) : "—",
                Format.Verdict(s.Verdict));
        }

        table.WriteTo(w, "    ");
        foreach (var s in r.Stages)
        {
            if (s.NotEvaluated is { } why)
            {
                w.WriteLine($"    Stage {s.Index + 1}: {why}");
            }
            else
            {
                w.WriteLine($"    Stage {s.Index + 1} model: {RealGasLine(s)}");
            }

            if (s.Phase is { } phase)
            {
                w.WriteLine($"    Stage {s.Index + 1} phase: {PhaseLine(phase)}");
            }

            w.WriteLine($"    Stage {s.Index + 1} findings:");
            foreach (var f in s.Findings)
            {
                WriteFinding(f, w);
            }

            foreach (var n in s.NotChecked)
            {
                w.WriteLine($"      not checked  {n.RuleId}: missing {string.Join(", ", n.Missing)} — {n.Reason}");
            }
        }
    }

    // Which model the stage's temperatures come from and why, the other models' answers, Z, and the defaulted k_ij pairs.
    private static string RealGasLine(StageDto s)
    {
        var z = s.Properties is { } props ? $"Z {Format.N(props.ZSuction, "0.0000")} → {Format.N(props.ZDischarge, "0.0000")}" : "Z not given";
        if (s.RealGas is not { } rg)
        {
            return $"{s.Method}, {z}";
        }

        var model = rg.Model == "gerg-2008" ? "GERG-2008" : "Peng-Robinson";
        var second = rg.PengRobinson is { } pr ? $", Peng-Robinson {Format.Q(pr.Estimated)}" : string.Empty;
        var line = rg.RealGasTemperatures is { } real
            ? $"{s.Method}{(rg.Recommended ? " (real gas called for)" : string.Empty)}; estimated T2 ideal gas {Format.Q(rg.IdealGas.Estimated)}, {model} {Format.Q(real.Estimated)}{second}, difference {Format.Q(rg.Difference!.Estimated)}; {z}"
            : $"{s.Method}; {rg.Note}";
        if (rg.MethodReason is { Length: > 0 } why)
        {
            line += $"; why: {why}";
        }

        if (rg.RealGasTemperatures is not null && rg.Note is { Length: > 0 } note)
        {
            line += $"; note: {note}";
        }

        return rg.DefaultedPairs.Count > 0 ? line + $"; k_ij taken as 0 for {string.Join(", ", rg.DefaultedPairs)}" : line;
    }

    private static string PhaseLine(PhaseDto p)
    {
        var hc = p.HydrocarbonDewPoint is { } dew
            ? $"hydrocarbon dew point {Format.Q(dew)}" + (p.SuperheatAboveHydrocarbonDewPoint is { } sh ? $" (superheat {Format.Q(sh)})" : string.Empty)
            : $"hydrocarbon dew point: {p.HydrocarbonDewPointNote ?? "none"}";
        var water = p.WaterDewPoint is { } w ? $"; water dew point {Format.Q(w)}" + (p.SuperheatAboveWaterDewPoint is { } sw ? $" (superheat {Format.Q(sw)})" : string.Empty) : string.Empty;
        return $"suction {p.Suction}, discharge {p.Discharge ?? "not evaluated"}; {hc}{water}";
    }

    private static void WriteFinding(FindingDto f, TextWriter w)
    {
        var numbers = f.Value is null ? (f.Quantity == "combination" ? " prohibited, whatever the temperature" : string.Empty) : $" {f.Quantity} {Format.Q(f.Value)}";
        if (f.Limit is not null)
        {
            numbers += $", limit {Format.Q(f.Limit)}";
        }

        if (f.Margin is not null)
        {
            numbers += $", margin {Format.Q(f.Margin)}";
        }

        w.WriteLine($"      {f.Severity,-12} {f.RuleId} {f.Title}:{numbers} [layer {f.Layer}]");
        if (f.Severity is "warning" or "violation")
        {
            w.WriteLine($"                   {f.Message}");
        }

        w.WriteLine($"                   basis: {f.Basis}");
        if (f.LoosenedReason is not null)
        {
            w.WriteLine($"                   loosened: {f.LoosenedReason}");
        }

        if (f.SetPoints is { } sp)
        {
            w.WriteLine($"                   proposed set points: alarm {Format.Q(sp.Alarm)}, trip {Format.Q(sp.Trip)} (normal {Format.Q(sp.Normal)}{(sp.CappedBy is null ? string.Empty : ", capped by " + sp.CappedBy)})");
        }
    }
}
