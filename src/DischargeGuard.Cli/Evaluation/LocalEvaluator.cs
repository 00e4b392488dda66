using DischargeGuard.Evaluation;
using System.Text.Json;
using DischargeGuard.Audit;
using DischargeGuard.Cli.Proposals;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Evaluation.Service;
using DischargeGuard.Evaluation.Validation;
using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Cli.Evaluation;

/// <summary>
/// Evaluates in-process with the service's own parts: the rule directory loaded as the service loads it, the same
/// FluentValidation validator, the same <see cref="EvaluationPipeline"/>; and records every evaluation in a local SQLite
/// audit file before its result is reported, so the gate never evaluates without a record.
/// </summary>
public sealed class LocalEvaluator : ICaseEvaluator
{
    private readonly RuleSetSnapshot _rules;
    private readonly string _auditFile;
    private readonly string _caller;
    private readonly ApprovedRules _approved;
    private readonly TimeProvider _time;
    private readonly EvaluationService _service = new(new EvaluationPipeline(), new EvaluationRequestValidator());
    private Task<AuditStore>? _store;

    private LocalEvaluator(RuleSetSnapshot rules, string rulesDirectory, string auditFile, string caller, ApprovedRules approved, TimeProvider time)
    {
        _rules = rules;
        _auditFile = auditFile;
        _caller = caller;
        _approved = approved;
        _time = time;
        Description = $"local (rules {rulesDirectory}, audit file {auditFile})";
    }

    /// <inheritdoc />
    public string Description { get; }

    /// <summary>The loaded rules.</summary>
    public RuleSetSnapshot Rules => _rules;

    /// <summary>Loads the rule directory (throws <see cref="DischargeGuard.Rules.Loading.RuleFileException"/> with file, line and key when it is invalid).</summary>
    /// <param name="rulesDirectory">The rules directory.</param>
    /// <param name="auditFile">The SQLite audit file (created when missing).</param>
    /// <param name="caller">The caller recorded in each audit record.</param>
    /// <param name="approved">The approved digests.</param>
    /// <param name="time">Clock.</param>
    /// <returns>The evaluator.</returns>
    public static LocalEvaluator Open(string rulesDirectory, string auditFile, string caller, ApprovedRules approved, TimeProvider? time = null)
    {
        var t = time ?? TimeProvider.System;
        var snapshot = FileRuleSetProvider.LoadDirectory(rulesDirectory, t.GetUtcNow());
        return new LocalEvaluator(snapshot, rulesDirectory, auditFile, caller, approved, t);
    }

    /// <summary>
    /// Starts opening (creating and migrating) an audit file, so that it can proceed while the rules load; pass the
    /// task to <see cref="UseAuditStore"/>. A failure surfaces at the first append, as an unavailable store.
    /// </summary>
    /// <param name="auditFile">The SQLite audit file.</param>
    /// <returns>The opening store.</returns>
    public static Task<AuditStore> BeginOpeningAuditFile(string auditFile) =>
        AuditStore.OpenAsync(new AuditStoreSettings { Provider = AuditStoreSettings.Sqlite, SqlitePath = auditFile }, CancellationToken.None);

    /// <summary>Uses an audit store already being opened (see <see cref="BeginOpeningAuditFile"/>) instead of opening one at the first append.</summary>
    /// <param name="store">The opening store for this evaluator's audit file.</param>
    public void UseAuditStore(Task<AuditStore> store) => _store ??= store;

    /// <inheritdoc />
    public async Task<CaseResult> EvaluateAsync(ProposalCase proposalCase, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(proposalCase);
        var request = proposalCase.Request ?? throw new ArgumentException("The case has no request.", nameof(proposalCase));
        if (_service.Validate(request) is { } invalidRequest)
        {
            var invalid = new CaseResult(proposalCase, ExitCodes.InvalidInput);
            foreach (var (path, messages) in invalidRequest.Errors)
            {
                foreach (var m in messages)
                {
                    invalid.Errors.Add(proposalCase.ErrorAt(path, m));
                }
            }

            return invalid;
        }

        if (_approved.Digests.Count > 0 && DigestFor(request) is { } digest && !_approved.Approves(digest))
        {
            var refused = new CaseResult(proposalCase, ExitCodes.InvalidInput);
            refused.Messages.Add(_approved.Mismatch(digest, request.Site?.Id, request.Asset));
            return refused;
        }

        // The same service as the server's: history from this audit file's stage summaries, so the trend rule answers here
        // as it would there; the same record, and the same bytes, as the service writes.
        IReadOnlyList<IReadOnlyList<DischargeGuard.Rules.Evaluation.DeviationSample>>? history;
        AuditStore store;
        try
        {
            _store ??= BeginOpeningAuditFile(_auditFile);
            store = await _store.ConfigureAwait(false);
            history = await EvaluationService.HistoryAsync(store, request, q => q, null, cancellationToken).ConfigureAwait(false);
        }
        catch (AuditStoreUnavailableException ex)
        {
            return Unavailable(proposalCase, ex);
        }

        var now = _time.GetUtcNow();
        var id = Guid.CreateVersion7(now);
        var evaluated = _service.Evaluate(request, proposalCase.RequestJson, _rules, new EvaluationContext(id, now) { Detail = AnswerDetail.Full, History = history }, _caller);
        if (evaluated.Problem is { } problem)
        {
            var invalid = new CaseResult(proposalCase, ExitCodes.InvalidInput);
            foreach (var (path, messages) in problem.Errors)
            {
                foreach (var m in messages)
                {
                    invalid.Errors.Add(proposalCase.ErrorAt(path, m));
                }
            }

            if (invalid.Errors.Count == 0)
            {
                invalid.Messages.Add(problem.Title);
            }

            return invalid;
        }

        var response = evaluated.Response!;
        var body = evaluated.Record!.Response;
        try
        {
            await _service.ArchiveRuleSetAsync(store, evaluated.Result!, cancellationToken).ConfigureAwait(false);
            await store.AppendAsync(evaluated.Record, cancellationToken).ConfigureAwait(false);
        }
        catch (AuditStoreUnavailableException ex)
        {
            return Unavailable(proposalCase, ex);
        }

        return new CaseResult(proposalCase, ExitCodes.OfVerdict(response.Verdict)) { Response = response, ResponseJson = body, EvaluatedBy = "local" };
    }

    // No record, no result: the answer is withheld exactly as the service withholds it (503).
    private CaseResult Unavailable(ProposalCase proposalCase, AuditStoreUnavailableException ex)
    {
        var unavailable = new CaseResult(proposalCase, ExitCodes.ServiceUnavailable);
        unavailable.Messages.Add($"The local audit file {_auditFile} could not record the evaluation, so no result is reported: {ex.Message}");
        return unavailable;
    }

    // A refused resolution (a near miss of a layer id, an asset with another site) has no digest: the pipeline names it
    // as a field error.
    private string? DigestFor(EvaluationRequest request) => _rules.ResolveRequest(request.Site?.Id, request.Asset).Set?.Digest;

    /// <inheritdoc />
    public async ValueTask DisposeAsync()
    {
        if (_store is null)
        {
            return;
        }

        try
        {
            var store = await _store.ConfigureAwait(false);
            await store.DisposeAsync().ConfigureAwait(false);
        }
        catch (AuditStoreUnavailableException)
        {
            // It never opened; the append that needed it already reported that.
        }
    }
}
