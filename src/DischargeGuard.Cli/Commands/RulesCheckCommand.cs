using System.CommandLine;
using DischargeGuard.Cli.Reports;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Cli.Commands;

/// <summary>
/// <c>rules check &lt;file|dir&gt;</c>: validates rule layers with the service's own loader and merger and prints the
/// merged digests, the same digests <c>GET /v1/rules?site=&amp;asset=</c> and every evaluation's <c>ruleSet.digest</c> show.
/// </summary>
internal static class RulesCheckCommand
{
    public static Command Create(TextWriter stdout, TextWriter stderr, string shippedRulesDirectory)
    {
        var command = new Command("check", "Validate rule layers (a rules directory, or one file) and print the merged digest; exit 64 with file, line and key when invalid.");
        var path = new Argument<string>("path") { Description = "A rules directory (default.yaml, sites/*.yaml, assets/*.yaml) or one rule file." };
        var site = new Option<string?>("--site") { Description = "Print the merged digest in force for this site.", HelpName = "ID" };
        var asset = new Option<string?>("--asset") { Description = "Print the merged digest in force for this asset.", HelpName = "TAG" };
        var expect = new Option<string?>("--expect-rules-digest") { Description = "Fail (exit 64) unless the printed digest is this one.", HelpName = "DIGEST" };
        var over = new Option<string?>("--rules")
        {
            Description = "Check the file as a candidate merged over this rules directory (as POST /v1/rules/check merges it over the active rules). "
                + "Default for a file outside a rules directory: the rules shipped with the tool.",
            HelpName = "DIR",
        };
        command.Arguments.Add(path);
        command.Options.Add(site);
        command.Options.Add(asset);
        command.Options.Add(expect);
        command.Options.Add(over);
        command.SetAction(parse => Run(parse.GetValue(path)!, parse.GetValue(site), parse.GetValue(asset), parse.GetValue(expect), stdout, stderr, parse.GetValue(over) ?? shippedRulesDirectory, parse.GetResult(over) is not null));
        return command;
    }

    internal static int Run(string path, string? site, string? asset, string? expected, TextWriter stdout, TextWriter stderr, string? activeRules = null, bool overGiven = false)
    {
        if (expected is not null && !GateApp.DigestPattern().IsMatch(expected))
        {
            stderr.WriteLine($"dischargeguard: --expect-rules-digest '{expected}' is not a rule digest (64 hexadecimal digits). (exit 64: invalid usage)");
            return ExitCodes.InvalidInput;
        }

        string? directory = null;
        string? singleFile = null;
        if (Directory.Exists(path))
        {
            directory = path;
        }
        else if (File.Exists(path))
        {
            directory = overGiven ? null : RulesDirectoryOf(path);
            singleFile = path;
            if (directory is null)
            {
                return activeRules is null
                    ? Fail(stderr, $"{path}: give --rules DIR, the rules the candidate is merged over.")
                    : RunCandidate(path, activeRules, expected, stdout, stderr);
            }
        }
        else
        {
            stderr.WriteLine($"{path}: no such file or directory. (exit 64)");
            return ExitCodes.InvalidInput;
        }

        try
        {
            var snapshot = FileRuleSetProvider.LoadDirectory(directory, DateTimeOffset.UtcNow);
            var digest = WriteDirectory(snapshot, directory, singleFile, site, asset, stdout);
            WriteCautions(stdout);
            if (expected is not null && !string.Equals(expected, digest, StringComparison.OrdinalIgnoreCase))
            {
                stderr.WriteLine($"dischargeguard: the rules' digest is {digest}, not the approved {expected.ToLowerInvariant()}. (exit 64)");
                return ExitCodes.InvalidInput;
            }

            return ExitCodes.Pass;
        }
        catch (RuleFileException ex)
        {
            foreach (var e in ex.Errors)
            {
                stderr.WriteLine((e with { File = Path.Combine(directory, e.File) }).ToString());
            }

            stderr.WriteLine($"dischargeguard: {ex.Errors.Count} error(s); the rules are not valid. (exit 64)");
            return ExitCodes.InvalidInput;
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            stderr.WriteLine($"{path}: cannot read: {ex.Message} (exit 64)");
            return ExitCodes.InvalidInput;
        }
    }

    private static int Fail(TextWriter stderr, string message)
    {
        stderr.WriteLine(message + " (exit 64)");
        return ExitCodes.InvalidInput;
    }

    // A file outside a rules directory (or any file with --rules): merged over the directory's layers by the routine the
    // service's POST /v1/rules/check uses, so the two give one verdict with the same located errors.
    private static int RunCandidate(string file, string rulesDirectory, string? expected, TextWriter stdout, TextWriter stderr)
    {
        RuleSetSnapshot active;
        string text;
        try
        {
            active = FileRuleSetProvider.LoadDirectory(rulesDirectory, DateTimeOffset.UtcNow);
            text = File.ReadAllText(file);
        }
        catch (RuleFileException ex)
        {
            foreach (var e in ex.Errors)
            {
                stderr.WriteLine((e with { File = Path.Combine(rulesDirectory, e.File) }).ToString());
            }

            return Fail(stderr, $"dischargeguard: the rules in {rulesDirectory} do not load, so nothing can be merged over them.");
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            return Fail(stderr, $"{file}: cannot read: {ex.Message}");
        }

        var check = RuleSetValidation.CheckCandidate(active, CandidateName(file), text, DateTimeOffset.UtcNow);
        if (!check.Valid)
        {
            foreach (var e in check.Errors)
            {
                // The candidate's own errors name the file given; errors in other layers name their file in the directory.
                var where = e.File == check.Place || e.File == Path.GetFileName(file) ? file : Path.Combine(rulesDirectory, e.File);
                stderr.WriteLine((e with { File = where }).ToString());
            }

            stderr.WriteLine($"dischargeguard: {check.Errors.Count} error(s); the candidate is not valid over {rulesDirectory}. (exit 64)");
            return ExitCodes.InvalidInput;
        }

        var merged = check.Merged!;
        stdout.WriteLine($"Rule file {file}: valid ({check.Layer!.Name}) as {check.Place} over {rulesDirectory}");
        stdout.WriteLine($"  layer digest {check.Layer.Digest}");
        stdout.WriteLine($"  merged layers {string.Join(" ← ", merged.Layers.Select(l => l.Name))}");
        stdout.WriteLine($"digest: {merged.Digest}");
        WriteCautions(stdout);
        if (expected is not null && !string.Equals(expected, merged.Digest, StringComparison.OrdinalIgnoreCase))
        {
            return Fail(stderr, $"dischargeguard: the rules' digest is {merged.Digest}, not the approved {expected.ToLowerInvariant()}.");
        }

        return ExitCodes.Pass;
    }

    // sites/x.yaml and assets/y.yaml keep their folder (it sets the kind); any other file is named bare and placed by its own kind and id.
    private static string CandidateName(string file)
    {
        var full = Path.GetFullPath(file);
        var folder = Path.GetFileName(Path.GetDirectoryName(full));
        return folder is "sites" or "assets" ? folder + "/" + Path.GetFileName(full) : Path.GetFileName(full);
    }

    private static string WriteDirectory(RuleSetSnapshot snapshot, string directory, string? focus, string? site, string? asset, TextWriter w)
    {
        w.WriteLine($"Rules directory {directory}: valid" + (focus is null ? string.Empty : $" (checked for {focus})"));
        var layers = new TextTable("layer", "file", "layer digest");
        foreach (var l in new[] { snapshot.Default }.Concat(snapshot.Sites.Values.OrderBy(l => l.Id, StringComparer.Ordinal)).Concat(snapshot.Assets.Values.OrderBy(l => l.Id, StringComparer.Ordinal)))
        {
            layers.Add(l.Name, l.File, l.Digest);
        }

        layers.WriteTo(w, "  ");
        w.WriteLine("Merged digests (as GET /v1/rules?site=&asset= and each evaluation's ruleSet.digest show them):");
        var merged = new TextTable("site", "asset", "layers", "merged digest");
        merged.Add("—", "—", "default", snapshot.DefaultSet.Digest);
        foreach (var s in snapshot.Sites.Keys.Order(StringComparer.Ordinal))
        {
            var set = snapshot.Resolve(s, null);
            merged.Add(s, "—", string.Join(" ← ", set.Layers.Select(l => l.Name)), set.Digest);
        }

        foreach (var a in snapshot.Assets.Values.OrderBy(l => l.Id, StringComparer.Ordinal))
        {
            var set = snapshot.Resolve(a.Site, a.Id);
            merged.Add(a.Site ?? "—", a.Id, string.Join(" ← ", set.Layers.Select(l => l.Name)), set.Digest);
        }

        merged.WriteTo(w, "  ");
        string digest;
        try
        {
            digest = snapshot.Resolve(site, asset).Digest;
        }
        catch (ArgumentOutOfRangeException ex)
        {
            throw new RuleFileException([new RuleFileError(RuleFileErrorKind.BadValue, "assets/" + asset + ".yaml", 0, 0, "layer.site", ex.Message.Split(" (Parameter", StringSplitOptions.None)[0])]);
        }

        w.WriteLine($"digest: {digest}" + (site is null && asset is null ? string.Empty : $" (site {site ?? "—"}, asset {asset ?? "—"})"));
        return digest;
    }

    // A file inside a rules directory (default.yaml, sites/x.yaml, assets/y.yaml) is checked with its directory, so its
    // merges are checked too and the digest printed is the one the service would use.
    private static string? RulesDirectoryOf(string file)
    {
        var full = Path.GetFullPath(file);
        var dir = Path.GetDirectoryName(full);
        if (dir is null)
        {
            return null;
        }

        if (Path.GetFileName(full) == "default.yaml")
        {
            return dir;
        }

        var parent = Path.GetDirectoryName(dir);
        var folder = Path.GetFileName(dir);
        return parent is not null && folder is "sites" or "assets" && File.Exists(Path.Combine(parent, "default.yaml")) ? parent : null;
    }

    private static void WriteCautions(TextWriter w)
    {
        w.WriteLine();
        w.WriteLine("Cautions:");
        foreach (var c in GateReport.AlwaysCautions)
        {
            w.WriteLine("  - " + c);
        }
    }
}
