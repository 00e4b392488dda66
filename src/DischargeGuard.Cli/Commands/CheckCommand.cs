using System.CommandLine;
using System.Globalization;
using DischargeGuard.Cli.Evaluation;
using DischargeGuard.Cli.Proposals;
using DischargeGuard.Cli.Reports;
using DischargeGuard.Rules.Loading;

namespace DischargeGuard.Cli.Commands;

/// <summary><c>check</c> and <c>envelope</c>: read proposals, evaluate and record every case, report, exit with the worst code.</summary>
internal static class CheckCommand
{
    public static Command Create(TextWriter stdout, TextWriter stderr, GateEnvironment environment, bool envelope)
    {
        var command = envelope
            ? new Command("envelope", "Print the operating envelope per case and stage (how far discharge pressure and suction temperature may rise before the governing limit). Each case is evaluated and recorded as by 'check', and the exit code is the same.")
            : new Command("check", "Evaluate and record every case of the proposal files; the worst verdict decides the exit code.");
        var files = new Argument<string[]>("proposal")
        {
            Arity = ArgumentArity.OneOrMore,
            Description = "Proposal files (YAML or JSON): one evaluation request, or {asset, site, cases: [{name, ...request fields}]}. Schema: schemas/proposal.schema.json.",
        };
        // An unknown option would otherwise be taken for a file name.
        files.Validators.Add(result =>
        {
            foreach (var token in result.Tokens.Where(t => t.Value.Length > 1 && t.Value.StartsWith('-')))
            {
                result.AddError($"Unrecognized option '{token.Value}'.");
            }
        });
        var server = new Option<string?>("--server") { Description = $"Evaluate through the service at this address (default when {GateEnvironment.ServerVariable} is set). The key is read from the variable named by --key-env.", HelpName = "URL" };
        var local = new Option<bool>("--local") { Description = "Evaluate in-process with the shipped rules (or --rules) and record each evaluation in the local audit file." };
        var rules = new Option<string?>("--rules") { Description = "Rules directory for --local (default.yaml, sites/, assets/); default: the rules shipped with the tool.", HelpName = "DIR" };
        var audit = new Option<string>("--audit-file") { Description = "SQLite audit file for --local (created when missing; appended to).", HelpName = "PATH", DefaultValueFactory = _ => "dischargeguard-audit.db" };
        var format = new Option<string>("--format") { Description = envelope ? "Output on stdout: text or json." : "Output on stdout: text, json (the API's response documents) or junit.", HelpName = "FORMAT", DefaultValueFactory = _ => "text" };
        format.AcceptOnlyFromAmong(envelope ? ["text", "json"] : ["text", "json", "junit"]);
        var junitFile = new Option<string?>("--junit-file") { Description = "Also write the JUnit report to this file.", HelpName = "PATH" };
        var expect = new Option<string[]>("--expect-rules-digest")
        {
            Description = "Approved merged rule digest (repeatable). A case whose rules in force (for its site and asset) have another digest is not evaluated: exit 64.",
            HelpName = "DIGEST",
            Arity = ArgumentArity.ZeroOrMore,
        };
        var keyEnv = new Option<string>("--key-env") { Description = "Environment variable holding the API key (never pass a key on the command line).", HelpName = "NAME", DefaultValueFactory = _ => GateEnvironment.KeyVariable };
        var timeout = new Option<double>("--timeout") { Description = "Seconds allowed per request to the service.", HelpName = "SECONDS", DefaultValueFactory = _ => 30 };
        var caller = new Option<string?>("--caller") { Description = $"Caller recorded in local audit records (default: {GateEnvironment.CallerVariable}, else local:<user>).", HelpName = "ID" };
        command.Arguments.Add(files);
        foreach (var o in new Option[] { server, local, rules, audit, format, junitFile, expect, keyEnv, timeout, caller })
        {
            command.Options.Add(o);
        }

        command.SetAction(async (parse, cancellationToken) =>
        {
            var settings = new CheckSettings(
                parse.GetValue(files) ?? [],
                parse.GetValue(server),
                parse.GetValue(local),
                parse.GetValue(rules),
                parse.GetValue(audit) ?? "dischargeguard-audit.db",
                parse.GetValue(format) ?? "text",
                parse.GetValue(junitFile),
                parse.GetValue(expect) ?? [],
                parse.GetValue(keyEnv) ?? GateEnvironment.KeyVariable,
                parse.GetValue(timeout),
                parse.GetValue(caller),
                envelope,
                parse.GetResult(rules) is not null,
                parse.GetResult(audit) is { Implicit: false });
            return await RunAsync(settings, stdout, stderr, environment, cancellationToken).ConfigureAwait(false);
        });
        return command;
    }

    internal static async Task<int> RunAsync(CheckSettings s, TextWriter stdout, TextWriter stderr, GateEnvironment environment, CancellationToken cancellationToken)
    {
        // Usage first: nothing is read or evaluated with a contradictory command line.
        var serverText = s.Server ?? (s.Local ? null : environment.Variable(GateEnvironment.ServerVariable));
        if (s.Local && s.Server is not null)
        {
            return await UsageAsync(stderr, "--local and --server exclude each other.").ConfigureAwait(false);
        }

        if (serverText is not null && (s.RulesGiven || s.AuditGiven))
        {
            return await UsageAsync(stderr, $"--rules and --audit-file apply to --local; this run evaluates through {serverText} (from {(s.Server is null ? GateEnvironment.ServerVariable : "--server")}). Add --local to evaluate in-process.").ConfigureAwait(false);
        }

        foreach (var d in s.ExpectedDigests)
        {
            if (!GateApp.DigestPattern().IsMatch(d))
            {
                return await UsageAsync(stderr, $"--expect-rules-digest '{d}' is not a rule digest (64 hexadecimal digits, as 'dischargeguard rules check' prints).").ConfigureAwait(false);
            }
        }

        if (!(s.TimeoutSeconds > 0 && s.TimeoutSeconds <= 3600))
        {
            return await UsageAsync(stderr, "--timeout is a number of seconds above 0 and at most 3600.").ConfigureAwait(false);
        }

        Uri? serverUri = null;
        if (serverText is not null)
        {
            var withSlash = serverText.EndsWith('/') ? serverText : serverText + "/";
            if (!Uri.TryCreate(withSlash, UriKind.Absolute, out serverUri) || serverUri.Scheme is not ("http" or "https"))
            {
                return await UsageAsync(stderr, $"The server address '{serverText}' is not an absolute http or https URL.").ConfigureAwait(false);
            }
        }

        // Local mode starts loading the rules (and building the validator) at once, on another core, while the proposals
        // are read; the audit file is opened in parallel too once there is a case to record.
        var approved = new ApprovedRules(s.ExpectedDigests.Select(d => d.ToLowerInvariant()).ToArray());
        var rulesDir = s.Rules ?? environment.ShippedRulesDirectory;
        var caller = s.Caller ?? environment.Variable(GateEnvironment.CallerVariable) ?? "local:" + Environment.UserName;
        var opening = serverUri is null ? Task.Run(() => LocalEvaluator.Open(rulesDir, s.AuditFile, caller, approved), cancellationToken) : null;
        var warming = serverUri is null ? Task.Run(Warm, cancellationToken) : null;

        // Read every file; a file's errors do not stop the others.
        var files = s.Files.Select(ProposalReader.ReadFile).ToList();
        StartupTrace.Mark("proposals read");
        foreach (var e in files.SelectMany(f => f.Errors.Concat(f.Cases.SelectMany(c => c.Errors))))
        {
            await stderr.WriteLineAsync(e.ToString()).ConfigureAwait(false);
        }

        var auditFile = opening is not null && files.SelectMany(f => f.Cases).Any(c => c.Errors.Count == 0 && c.Request is not null)
            ? LocalEvaluator.BeginOpeningAuditFile(s.AuditFile)
            : null;
        var results = new List<CaseResult>();
        ICaseEvaluator? evaluator = null;
        string evaluatedBy;
        try
        {
            if (serverUri is not null)
            {
                evaluator = new ServerEvaluator(serverUri, environment.Variable(s.KeyEnv), approved, TimeSpan.FromSeconds(s.TimeoutSeconds));
            }
            else
            {
                try
                {
                    var local = await opening!.ConfigureAwait(false);
                    if (auditFile is not null)
                    {
                        local.UseAuditStore(auditFile);
                    }

                    evaluator = local;
                    await warming!.ConfigureAwait(false);
                }
                catch (RuleFileException ex)
                {
                    await CloseAsync(auditFile).ConfigureAwait(false);
                    foreach (var e in ex.Errors)
                    {
                        await stderr.WriteLineAsync(Path.Combine(rulesDir, e.File) + ":" + e.Line.ToString(CultureInfo.InvariantCulture) + ":" + e.Column.ToString(CultureInfo.InvariantCulture) + ": " + e.Key + ": " + e.Message).ConfigureAwait(false);
                    }

                    await stderr.WriteLineAsync($"dischargeguard: the rules in {rulesDir} do not load; nothing was evaluated (exit 64).").ConfigureAwait(false);
                    return ExitCodes.InvalidInput;
                }
                catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or ArgumentException)
                {
                    await CloseAsync(auditFile).ConfigureAwait(false);
                    await stderr.WriteLineAsync($"dischargeguard: cannot read the rules directory {rulesDir}: {ex.Message} (exit 64).").ConfigureAwait(false);
                    return ExitCodes.InvalidInput;
                }
            }

            evaluatedBy = evaluator.Description;
            StartupTrace.Mark("evaluator ready (rules loaded)");
            foreach (var c in files.SelectMany(f => f.Cases))
            {
                var result = c.Errors.Count > 0 || c.Request is null ? CaseResult.Invalid(c) : await evaluator.EvaluateAsync(c, cancellationToken).ConfigureAwait(false);
                if (!ReferenceEquals(result.Errors, c.Errors))
                {
                    foreach (var e in result.Errors.Where(e => !c.Errors.Contains(e)))
                    {
                        await stderr.WriteLineAsync(e.ToString()).ConfigureAwait(false);
                    }
                }

                foreach (var m in result.Messages)
                {
                    await stderr.WriteLineAsync($"{c.File}: case '{c.Name}': {m}").ConfigureAwait(false);
                }

                results.Add(result);
                StartupTrace.Mark($"case '{c.Name}' evaluated and recorded");
            }
        }
        finally
        {
            if (evaluator is not null)
            {
                await evaluator.DisposeAsync().ConfigureAwait(false);
            }
        }

        var report = new GateReport(files, results, evaluatedBy);
        if (s.JUnitFile is not null)
        {
            await using var junit = File.Create(s.JUnitFile);
            JUnitReport.Write(report, junit);
        }

        switch (s.Format)
        {
            case "json" when s.Envelope:
                GateApp.WriteBytes(stdout, o => EnvelopeReport.WriteJson(report, o));
                break;
            case "json":
                GateApp.WriteBytes(stdout, o => JsonReport.Write(report, o));
                break;
            case "junit":
                GateApp.WriteBytes(stdout, o => JUnitReport.Write(report, o));
                break;
            default:
                if (s.Envelope)
                {
                    EnvelopeReport.WriteText(report, stdout);
                }
                else
                {
                    TextReport.Write(report, stdout);
                }

                break;
        }

        await stdout.FlushAsync(cancellationToken).ConfigureAwait(false);
        StartupTrace.Mark("report written");
        return report.ExitCode;
    }

    // First use of the gas data and the unit vocabulary, off the main thread: the first evaluation then finds them built.
    private static void Warm()
    {
        _ = DischargeGuard.Thermo.GasCatalog.Default;
        _ = DischargeGuard.Rules.Units.UnitVocabulary.Default;
    }

    private static async Task CloseAsync(Task<DischargeGuard.Audit.AuditStore>? opening)
    {
        if (opening is null)
        {
            return;
        }

        try
        {
            await (await opening.ConfigureAwait(false)).DisposeAsync().ConfigureAwait(false);
        }
        catch (DischargeGuard.Audit.AuditStoreUnavailableException)
        {
        }
    }

    private static async Task<int> UsageAsync(TextWriter stderr, string message)
    {
        await stderr.WriteLineAsync("dischargeguard: " + message + " (exit 64: invalid usage)").ConfigureAwait(false);
        return ExitCodes.InvalidInput;
    }
}

/// <summary>The options of one <c>check</c> or <c>envelope</c> run.</summary>
internal sealed record CheckSettings(
    string[] Files,
    string? Server,
    bool Local,
    string? Rules,
    string AuditFile,
    string Format,
    string? JUnitFile,
    string[] ExpectedDigests,
    string KeyEnv,
    double TimeoutSeconds,
    string? Caller,
    bool Envelope,
    bool RulesGiven,
    bool AuditGiven);
