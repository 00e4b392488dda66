using System.CommandLine;
using System.Text.Json;
using DischargeGuard.Cli.Reports;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Cli.Commands;

/// <summary>
/// <c>rules show [--site ID] [--asset TAG]</c>: the limits in force for a site and asset, each rule with its limit and
/// warning band, what it applies to, the layer, basis, reason and sign-off that set it and the chain of layers that
/// touched it; the same view as <c>GET /v1/rules?site=&amp;asset=</c>. A near miss of a layer id is refused, as an
/// evaluation refuses it.
/// </summary>
internal static class RulesShowCommand
{
    public static Command Create(TextWriter stdout, TextWriter stderr, string shippedRulesDirectory)
    {
        var command = new Command("show", "Show the limits in force for a site and asset: each rule's limit, warning band, what it applies to, the layer and basis that set it, and the chain of layers.");
        var site = new Option<string?>("--site") { Description = "The site id.", HelpName = "ID" };
        var asset = new Option<string?>("--asset") { Description = "The asset tag.", HelpName = "TAG" };
        var rules = new Option<string?>("--rules") { Description = "Rules directory; default: the rules shipped with the tool.", HelpName = "DIR" };
        var format = new Option<string>("--format") { Description = "Output: text or json.", HelpName = "FORMAT", DefaultValueFactory = _ => "text" };
        format.AcceptOnlyFromAmong("text", "json");
        command.Options.Add(site);
        command.Options.Add(asset);
        command.Options.Add(rules);
        command.Options.Add(format);
        command.SetAction(parse => Run(parse.GetValue(rules) ?? shippedRulesDirectory, parse.GetValue(site), parse.GetValue(asset), parse.GetValue(format) ?? "text", stdout, stderr));
        return command;
    }

    internal static int Run(string rulesDirectory, string? site, string? asset, string format, TextWriter stdout, TextWriter stderr)
    {
        RuleSetSnapshot snapshot;
        try
        {
            snapshot = FileRuleSetProvider.LoadDirectory(rulesDirectory, DateTimeOffset.UtcNow);
        }
        catch (RuleFileException ex)
        {
            foreach (var e in ex.Errors)
            {
                stderr.WriteLine((e with { File = Path.Combine(rulesDirectory, e.File) }).ToString());
            }

            stderr.WriteLine($"dischargeguard: the rules in {rulesDirectory} do not load. (exit 64)");
            return ExitCodes.InvalidInput;
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            stderr.WriteLine($"dischargeguard: cannot read the rules directory {rulesDirectory}: {ex.Message} (exit 64)");
            return ExitCodes.InvalidInput;
        }

        var resolution = snapshot.ResolveRequest(string.IsNullOrEmpty(site) ? null : site, string.IsNullOrEmpty(asset) ? null : asset);
        if (resolution.Refusal is { } refused)
        {
            stderr.WriteLine($"--{(refused.Field == LayerIdField.Site ? "site" : "asset")} {refused.Id}: {refused.Message} (exit 64)");
            return ExitCodes.InvalidInput;
        }

        var view = RulesInForce.Of(resolution, site, asset, GateReport.AlwaysCautions);
        if (format == "json")
        {
            stdout.WriteLine(JsonSerializer.Serialize(view, JsonOptions));
            return ExitCodes.Pass;
        }

        WriteText(view, rulesDirectory, stdout);
        return ExitCodes.Pass;
    }

    private static readonly JsonSerializerOptions JsonOptions = new(EvaluationJson.Options) { WriteIndented = true };

    private static void WriteText(LimitsInForceDto view, string rulesDirectory, TextWriter w)
    {
        w.WriteLine($"Limits in force for site {view.Site ?? "—"}, asset {view.Asset ?? "—"} (rules {rulesDirectory})");
        w.WriteLine(view.Applied);
        w.WriteLine($"digest: {view.Digest}");
        foreach (var r in view.Rules)
        {
            w.WriteLine();
            w.WriteLine($"{r.Id}  {r.Title}");
            var band = r.WarningBand is null ? "no warning band" : $"warning band {Format.Q(r.WarningBand)}";
            w.WriteLine($"  limit {r.LimitText} ({r.Direction}), {band}; {r.Severity}; checks {string.Join(", ", r.Quantities)}");
            w.WriteLine($"  applies to: {r.AppliesTo.Text}");
            w.WriteLine($"  set by {r.LimitLayer}; basis: {r.Basis}");
            if (r.Reason is not null)
            {
                w.WriteLine($"  reason: {r.Reason}");
            }

            if (r.ApprovedBy is not null)
            {
                w.WriteLine($"  approved by {r.ApprovedBy} on {r.ApprovedOn}{(r.Reference is null ? string.Empty : " (" + r.Reference + ")")}");
            }

            WriteChain(r.Chain, w);
        }

        if (view.Disabled.Count > 0)
        {
            w.WriteLine();
            w.WriteLine("Disabled:");
            foreach (var d in view.Disabled)
            {
                w.WriteLine($"{d.RuleId}  disabled by {d.Layer}: {d.Reason}");
                WriteChain(d.Chain, w);
            }
        }

        w.WriteLine();
        w.WriteLine("Cautions:");
        foreach (var c in view.Cautions)
        {
            w.WriteLine("  - " + c);
        }
    }

    private static void WriteChain(IReadOnlyList<RuleChangeDto> chain, TextWriter w)
    {
        w.WriteLine("  chain:");
        foreach (var c in chain)
        {
            w.WriteLine($"    {c.Layer} ({c.File}): {c.Change} → limit {c.Limit}, warning band {c.WarningBand}");
            if (c.Basis is not null)
            {
                w.WriteLine($"      basis: {c.Basis}");
            }

            if (c.Reason is not null)
            {
                w.WriteLine($"      reason: {c.Reason}");
            }

            if (c.ApprovedBy is not null)
            {
                w.WriteLine($"      approved by {c.ApprovedBy} on {c.ApprovedOn}");
            }
        }
    }
}
