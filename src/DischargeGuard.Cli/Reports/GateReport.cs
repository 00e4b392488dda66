using DischargeGuard.Cli.Evaluation;
using DischargeGuard.Cli.Proposals;
using DischargeGuard.Evaluation.Pipeline;

namespace DischargeGuard.Cli.Reports;

/// <summary>Everything a run found: per file, its errors and its cases' results; and the exit code that decides.</summary>
/// <param name="Files">The files in command-line order.</param>
/// <param name="Results">The case results in file and case order.</param>
/// <param name="EvaluatedBy">Where the cases were evaluated.</param>
public sealed record GateReport(IReadOnlyList<ProposalFile> Files, IReadOnlyList<CaseResult> Results, string EvaluatedBy)
{
    /// <summary>The run's exit code: the highest-precedence code of every file and case (a file that could not be read counts as invalid input).</summary>
    public int ExitCode =>
        Files.Where(f => f.Errors.Count > 0).Select(_ => ExitCodes.InvalidInput)
            .Concat(Results.Select(r => r.ExitCode))
            .Aggregate(ExitCodes.Pass, ExitCodes.Worst);

    /// <summary>
    /// The cautions to print: the two every answer carries, then every other caution the answers carried, in order,
    /// without repeats. Printed even when nothing was evaluated.
    /// </summary>
    public IReadOnlyList<string> Cautions =>
        AlwaysCautions.Concat(Results.Where(r => r.Response is not null).SelectMany(r => r.Response!.Cautions)).Distinct(StringComparer.Ordinal).ToList();

    /// <summary>The cautions every output carries, whatever was evaluated.</summary>
    public static IReadOnlyList<string> AlwaysCautions { get; } = [DischargeGuard.Evaluation.Pipeline.Cautions.DeferToCodes, DischargeGuard.Evaluation.Pipeline.Cautions.KeepProtection];
}
