using DischargeGuard.Cli.Proposals;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Cli.Evaluation;

/// <summary>What became of one case: its response (when evaluated), its exit code and its diagnostics.</summary>
public sealed class CaseResult
{
    /// <summary>Creates the result of a case.</summary>
    /// <param name="proposalCase">The case.</param>
    /// <param name="exitCode">Its exit code (see <see cref="ExitCodes"/>).</param>
    public CaseResult(ProposalCase proposalCase, int exitCode)
    {
        Case = proposalCase;
        ExitCode = exitCode;
    }

    /// <summary>The case.</summary>
    public ProposalCase Case { get; }

    /// <summary>The case's exit code: its verdict's, or the error's.</summary>
    public int ExitCode { get; set; }

    /// <summary>The answer, when the case was evaluated (and recorded).</summary>
    public EvaluationResponse? Response { get; init; }

    /// <summary>The answer's JSON exactly as the service sent it or the local audit record holds it.</summary>
    public byte[]? ResponseJson { get; init; }

    /// <summary>Errors located in the proposal file (invalid fields).</summary>
    public List<InputError> Errors { get; } = [];

    /// <summary>Other diagnostics (service refusals, unavailability, digest mismatches).</summary>
    public List<string> Messages { get; } = [];

    /// <summary>Where the case was evaluated: "local" or the service's address.</summary>
    public string? EvaluatedBy { get; init; }

    /// <summary>
    /// The printable management-of-change record of the evaluation (<c>GET /v1/evaluations/{id}/report</c>, sent with the
    /// same key header), when a server evaluated and recorded the case; null for a local run.
    /// </summary>
    public Uri? ReportUrl { get; init; }

    /// <summary>A result for a case that could not be read.</summary>
    /// <param name="proposalCase">The case, with its errors.</param>
    /// <returns>An invalid-input result carrying the case's errors.</returns>
    public static CaseResult Invalid(ProposalCase proposalCase)
    {
        ArgumentNullException.ThrowIfNull(proposalCase);
        var r = new CaseResult(proposalCase, ExitCodes.InvalidInput);
        r.Errors.AddRange(proposalCase.Errors);
        return r;
    }
}

/// <summary>Evaluates cases one at a time, each evaluated and recorded on its own.</summary>
public interface ICaseEvaluator : IAsyncDisposable
{
    /// <summary>"local (rules …, audit file …)" or the service's address.</summary>
    string Description { get; }

    /// <summary>Evaluates and records one case (a case with errors is never sent).</summary>
    /// <param name="proposalCase">A case whose <see cref="ProposalCase.Request"/> is set.</param>
    /// <param name="cancellationToken">Cancels the wait.</param>
    /// <returns>The result.</returns>
    Task<CaseResult> EvaluateAsync(ProposalCase proposalCase, CancellationToken cancellationToken);
}

/// <summary>The approved rule digests a run was given (<c>--expect-rules-digest</c>); empty means any.</summary>
/// <param name="Digests">The approved merged-rule-set digests (lowercase hex).</param>
public sealed record ApprovedRules(IReadOnlyCollection<string> Digests)
{
    /// <summary>Whether <paramref name="digest"/> is approved (always, when no digest was given).</summary>
    /// <param name="digest">The merged digest in force for the case's site and asset.</param>
    /// <returns>True when approved.</returns>
    public bool Approves(string digest) => Digests.Count == 0 || Digests.Contains(digest, StringComparer.OrdinalIgnoreCase);

    /// <summary>The message when a digest is not approved.</summary>
    /// <param name="digest">The digest in force.</param>
    /// <param name="site">The case's site.</param>
    /// <param name="asset">The case's asset.</param>
    /// <returns>A sentence naming both digests.</returns>
    public string Mismatch(string digest, string? site, string? asset) =>
        $"The rules in force for site '{site ?? "(none)"}' and asset '{asset ?? "(none)"}' have digest {digest}, which is not the approved set "
        + $"({string.Join(", ", Digests)}); nothing was evaluated. Approve the new rules (dischargeguard rules check) or point the gate at the approved ones.";
}
