using System.Collections.Concurrent;
using System.Text.Json;
using DischargeGuard.Audit;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Provider;
using FluentValidation;
using UnitsNet;
using EvaluationResult = DischargeGuard.Evaluation.Pipeline.EvaluationResult;

namespace DischargeGuard.Evaluation.Service;

/// <summary>
/// The one way an evaluation is made, whoever asks (the single post, each batch item, a replay, the gate's local mode):
/// validate → bind → evaluate with the asset's history → the audit record (with its per-stage SI summary) → the answer.
/// Hosts add only their own guards (keys, quotas, storage) and the append. History is read from the store's stage
/// summaries, never from stored answers, so the trend rule answers the same in the service and in the gate.
/// </summary>
public sealed class EvaluationService(EvaluationPipeline pipeline, IValidator<EvaluationRequest> validator)
{
    // Rule sets this process has archived: each digest is written once, before the first record that names it.
    private readonly ConcurrentDictionary<(IAuditStore Store, string Digest), bool> _archived = new();

    /// <summary>Validates a request; null when it is valid, else the 400 problem keyed by request path.</summary>
    public RequestProblem? Validate(EvaluationRequest request)
    {
        ArgumentNullException.ThrowIfNull(request);
        var validation = validator.Validate(request);
        if (validation.IsValid)
        {
            return null;
        }

        var errors = validation.Errors
            .GroupBy(f => ContractPaths.FromValidator(f.PropertyName), StringComparer.Ordinal)
            .ToDictionary(g => g.Key, g => g.Select(f => f.ErrorMessage).Distinct(StringComparer.Ordinal).ToArray(), StringComparer.Ordinal);
        return new RequestProblem(ProblemKind.InvalidRequest, "invalid-request", "The request has invalid fields.", errors);
    }

    /// <summary>
    /// The asset's history for the trend rule, per stage and oldest first, from the store's stage summaries; null when the
    /// request has no measured discharge temperature a trend could use.
    /// </summary>
    /// <param name="audit">The store.</param>
    /// <param name="request">The request being evaluated.</param>
    /// <param name="narrow">Narrows the query to what the caller may read (a key's sites and assets); identity for the gate.</param>
    /// <param name="before">Only records evaluated before this instant (a replay); null for all.</param>
    /// <param name="cancellationToken">Cancels the read.</param>
    /// <exception cref="AuditStoreUnavailableException">The store could not be read.</exception>
    public static async Task<IReadOnlyList<IReadOnlyList<DeviationSample>>?> HistoryAsync(
        IAuditStore audit, EvaluationRequest request, Func<AuditQuery, AuditQuery> narrow, DateTimeOffset? before, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(audit);
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(narrow);
        if (request.Asset is null || request.Stages is not { } stages || !stages.Any(s => s?.Measured?.DischargeTemperature is not null))
        {
            return null;
        }

        var query = narrow(new AuditQuery { Asset = request.Asset, SiteId = request.Site?.Id, To = before, Limit = EvaluationHistory.MaxEvaluations });
        var entries = await audit.GetStageHistoryAsync(query, cancellationToken).ConfigureAwait(false);
        return EvaluationHistory.Merge(entries.Select(SamplesOf), stages.Count);
    }

    /// <summary>A stored record's trend samples: measured minus estimated, with the stage's pressures, from its SI summary.</summary>
    public static IReadOnlyList<StageSample> SamplesOf(AuditStageHistoryEntry entry)
    {
        ArgumentNullException.ThrowIfNull(entry);
        var samples = new List<StageSample>(entry.Stages.Count);
        foreach (var s in entry.Stages)
        {
            if (s.MeasuredKelvin is { } measured && s.EstimatedKelvin is { } estimated)
            {
                samples.Add(new StageSample(s.Index, new DeviationSample(
                    TemperatureDelta.FromKelvins(measured - estimated),
                    Pressure.FromPascals(s.SuctionPressurePascal),
                    Pressure.FromPascals(s.DischargePressurePascal))));
            }
        }

        return samples;
    }

    /// <summary>Evaluates a valid request and makes its record and answer; nothing is stored here.</summary>
    /// <param name="request">The validated request.</param>
    /// <param name="requestBytes">The request as received (stored as sent).</param>
    /// <param name="rules">One rule snapshot for the whole evaluation.</param>
    /// <param name="context">Id, time, history, detail and curve.</param>
    /// <param name="caller">The key id, or the gate's caller name.</param>
    /// <param name="replayOf">The evaluation this one replays.</param>
    public Evaluated Evaluate(EvaluationRequest request, byte[] requestBytes, RuleSetSnapshot rules, EvaluationContext context, string caller, Guid? replayOf = null)
    {
        ArgumentNullException.ThrowIfNull(context);
        var (result, problem) = pipeline.Run(request, rules, context);
        if (result is null)
        {
            return new Evaluated(null, null, null, problem);
        }

        var response = ResponseMapper.Map(result, context);
        var bytes = EvaluationRecords.ResponseBytes(response);
        return new Evaluated(result, response, EvaluationRecords.Of(request, requestBytes, result, response, bytes, caller, replayOf), null);
    }

    /// <summary>
    /// Archives the rule set an evaluation used, once per store and digest, in its canonical form: any record can then be
    /// explained in full (every rule's basis) years later without the text repeated in every answer.
    /// </summary>
    /// <exception cref="AuditStoreUnavailableException">The store could not write it.</exception>
    public async ValueTask ArchiveRuleSetAsync(IAuditStore audit, EvaluationResult result, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(audit);
        ArgumentNullException.ThrowIfNull(result);
        var set = result.Layers.Set!;
        if (_archived.ContainsKey((audit, set.Digest)))
        {
            return;
        }

        await audit.ArchiveRuleSetAsync(set.Digest, CanonicalForm.OfMerged(set), cancellationToken).ConfigureAwait(false);
        _archived.TryAdd((audit, set.Digest), true);
    }
}

/// <summary>What one evaluation came to before it was recorded: the result, its answer and record, or the problem.</summary>
/// <param name="Result">The result in SI.</param>
/// <param name="Response">The answer.</param>
/// <param name="Record">The record to append before the answer is given (its response bytes are the answer's).</param>
/// <param name="Problem">Why the request was refused.</param>
public sealed record Evaluated(EvaluationResult? Result, EvaluationResponse? Response, AuditRecord? Record, RequestProblem? Problem);

/// <summary>
/// The audit record of an evaluation, the same in the service and the gate's local mode: the answer's own id and time,
/// the request as received, the answer's bytes as sent, and a per-stage summary in SI that history, trend, export,
/// replay and telemetry read.
/// </summary>
public static class EvaluationRecords
{
    /// <summary>The answer's bytes, exactly as they are stored and sent.</summary>
    public static byte[] ResponseBytes(EvaluationResponse response) =>
        JsonSerializer.SerializeToUtf8Bytes(response, EvaluationJson.Options.GetTypeInfo(typeof(EvaluationResponse)));

    /// <summary>The record to append before the answer is given.</summary>
    public static AuditRecord Of(EvaluationRequest request, byte[] requestBytes, EvaluationResult result, EvaluationResponse response, byte[] responseBytes, string caller, Guid? replayOf = null)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(result);
        ArgumentNullException.ThrowIfNull(response);
        return new AuditRecord
        {
            Id = response.Id,
            EvaluatedAt = response.EvaluatedAt,
            Caller = caller,
            Asset = request.Asset!,
            SiteId = request.Site?.Id,
            Verdict = response.Verdict,
            RuleDigest = response.RuleSet.Digest,
            EngineVersion = response.EngineVersion,
            Request = requestBytes,
            Response = responseBytes,
            ReplayOf = replayOf,
            Stages = StageSummaries(result),
        };
    }

    /// <summary>Each stage's verdict, governing rule and margin (K), T2s and T2 (K), pressures (Pa) and measured temperature (K).</summary>
    public static IReadOnlyList<AuditStageSummary> StageSummaries(EvaluationResult result)
    {
        ArgumentNullException.ThrowIfNull(result);
        return result.Stages.Select(s => new AuditStageSummary(
            s.Index,
            ResponseMapper.Name(s.Verdict),
            s.Governing?.RuleId,
            s.Governing?.Margin is { Dimension: not Rules.Model.QuantityDimension.Ratio } m ? m.SiValue : null,
            s.Isentropic?.Kelvins,
            s.Estimated?.Kelvins,
            s.SuctionPressure.Pascals,
            s.DischargePressure.Pascals,
            s.Measured?.Kelvins)).ToArray();
    }
}
