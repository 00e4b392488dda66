using DischargeGuard.Evaluation;
using System.Text.Json;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Evaluation.Service;
using DischargeGuard.Rules.Provider;
using FluentValidation;
using Microsoft.AspNetCore.Mvc;
using Microsoft.Extensions.Caching.Memory;

namespace DischargeGuard.Api.Endpoints;

/// <summary>
/// One evaluation from request bytes to an audit record and its answer, the same for a single post, a batch item and a
/// replay, through the Evaluation library's <see cref="EvaluationService"/>, with the host's own guards around it (key
/// scope, storage, quotas, record size). Appending the record is the caller's step (a batch appends many at once).
/// </summary>
internal sealed class EvaluationRunner(
    EvaluationService evaluations,
    TimeProvider time,
    StorageQuota quota,
    StorageGuard storage,
    Microsoft.Extensions.Options.IOptions<QuotaOptions> quotas,
    Microsoft.Extensions.Options.IOptions<ServiceOptions> service)
{
    /// <summary>Reads and validates one request document (a batch item or a stored request).</summary>
    /// <param name="json">The request as received (UTF-8 JSON).</param>
    /// <returns>The request, or the 400 problem that refuses it.</returns>
    public (EvaluationRequest? Request, RunResult? Refusal) Read(ReadOnlyMemory<byte> json)
    {
        EvaluationRequest? request;
        try
        {
            request = JsonSerializer.Deserialize(json.Span, EvaluationJsonContext.Default.EvaluationRequest);
        }
        catch (JsonException e)
        {
            return (null, RunResult.Refused(Problems.UnreadableBody(e)));
        }

        if (request is null)
        {
            return (null, RunResult.Refused(Problems.UnreadableBody(string.Empty, "Each item is an evaluation request object.")));
        }

        return evaluations.Validate(request) is { } invalid
            ? (null, RunResult.Refused(Problems.InvalidFields(invalid.Errors, invalid.Title)))
            : (request, null);
    }

    /// <summary>Evaluates a request that has been read and validated.</summary>
    public RunResult Run(EvaluationRequest request, byte[] requestBytes, RuleSetSnapshot snapshot, string caller, bool curve, AssetHistory? history = null, Guid? replayOf = null, KeyScope? scope = null, AnswerDetail detail = AnswerDetail.Compact)
    {
        // A key bound to sites (and assets) evaluates only inside them: refused before anything is computed or stored.
        if (scope is not null && !scope.MayPost(request.Asset, request.Site?.Id))
        {
            return RunResult.Refused(Problems.OutOfScope(request.Asset, request.Site?.Id));
        }

        // Refused before evaluating when the store is nearly full or the key's quota is already spent.
        var room = storage.Current;
        if (time.GetUtcNow() - room.At > TimeSpan.FromSeconds(1))
        {
            _ = RefreshQuietlyAsync();
        }

        if (room.Level == StorageLevel.Full)
        {
            return RunResult.Refused(Problems.StorageNearlyFull(room.Description, service.Value.RetryAfterSeconds));
        }

        if (!quota.TryReserve(caller, 0, out var spent, out var limit, out var untilTomorrow) || spent >= limit)
        {
            return RunResult.Refused(Problems.StorageQuotaSpent(caller, spent, limit, untilTomorrow));
        }

        var now = time.GetUtcNow();
        var id = Guid.CreateVersion7(now);
        var evaluated = evaluations.Evaluate(request, requestBytes, snapshot, new EvaluationContext(id, now, curve) { History = history?.Stages, Detail = detail }, caller, replayOf);
        if (evaluated.Problem is { } problem)
        {
            return RunResult.Refused(Problems.Refusal(problem));
        }

        var response = evaluated.Response!;
        var record = evaluated.Record!;

        // What the record would store is known only now; nothing has been recorded yet.
        var bytes = StoredBytes(record);
        if (bytes > quotas.Value.MaxRecordBytes)
        {
            return RunResult.Refused(Problems.RecordOverLimit(bytes, quotas.Value.MaxRecordBytes));
        }

        if (!quota.TryReserve(caller, bytes, out spent, out limit, out untilTomorrow))
        {
            return RunResult.Refused(Problems.StorageQuotaSpent(caller, spent, limit, untilTomorrow));
        }

        return new RunResult(StatusCodes.Status200OK, record, response, null) { Result = evaluated.Result };
    }

    /// <summary>
    /// Appends an evaluated item's record, after archiving the rule set it used (once per digest), so the record can be
    /// explained in full from the store alone; completes when the record is durable.
    /// </summary>
    /// <exception cref="AuditStoreUnavailableException">The store could not archive or append.</exception>
    public async Task AppendAsync(IAuditStore audit, RunResult run, CancellationToken cancellationToken)
    {
        if (run.Result is { } result)
        {
            await evaluations.ArchiveRuleSetAsync(audit, result, cancellationToken).ConfigureAwait(false);
        }

        await audit.AppendAsync(run.Record!, cancellationToken).ConfigureAwait(false);
    }

    /// <summary>The bytes a record stores against its caller's quota and the per-record cap: request plus response.</summary>
    public static long StoredBytes(AuditRecord record) => (long)record.Request.Length + record.Response.Length;

    /// <summary>Gives back the quota reserved for a record the store then refused.</summary>
    public void Unreserve(AuditRecord record) => quota.Release(record.Caller, StoredBytes(record));

    private async Task RefreshQuietlyAsync()
    {
        try
        {
            await storage.CheckAsync(CancellationToken.None).ConfigureAwait(false);
        }
#pragma warning disable CA1031 // A failed background refresh keeps the last reading; the next one tries again.
        catch (Exception)
#pragma warning restore CA1031
        {
        }
    }
}

/// <summary>What one evaluation came to before it was recorded.</summary>
/// <param name="Status">200, 400 or 422.</param>
/// <param name="Record">The record to append (on 200).</param>
/// <param name="Response">The answer (on 200); its bytes are <see cref="AuditRecord.Response"/>.</param>
/// <param name="Problem">Why it was refused (otherwise).</param>
internal sealed record RunResult(int Status, AuditRecord? Record, EvaluationResponse? Response, ProblemDetails? Problem)
{
    /// <summary>The result in SI (on 200).</summary>
    public DischargeGuard.Evaluation.Pipeline.EvaluationResult? Result { get; init; }

    public static RunResult Refused(ProblemDetails problem) => new(problem.Status!.Value, null, null, problem);
}

/// <summary>The asset's earlier evaluations as trend rules read them: per stage, oldest first.</summary>
/// <param name="Stages">One list per stage of the request.</param>
internal sealed record AssetHistory(IReadOnlyList<IReadOnlyList<DischargeGuard.Rules.Evaluation.DeviationSample>> Stages)
{
    /// <summary>Whether the request has anything a trend could use: a measured discharge temperature on some stage.</summary>
    public static bool IsUseful(EvaluationRequest request) =>
        request.Stages is { } stages && stages.Any(s => s.Measured?.DischargeTemperature is not null);
}

/// <summary>
/// Reads an asset's history from the audit store for trend rules: the store is asked every time (another replica may
/// have recorded since), and it answers from each record's per-stage SI summary without reading the answers.
/// </summary>
internal sealed class HistoryReader(IAuditStore audit)
{
    /// <summary>
    /// The asset's history for trend rules from the store's per-stage SI summaries (never from stored answers), before
    /// <paramref name="before"/> when given; null when the request has no measurement a trend could use.
    /// </summary>
    /// <exception cref="AuditStoreUnavailableException">The store could not be read.</exception>
    /// <param name="request">The request being evaluated.</param>
    /// <param name="before">Only records evaluated before this instant (a replay); null for all.</param>
    /// <param name="scope">What the caller may read: a trend never draws on records the caller could not read itself.</param>
    /// <param name="cancellationToken">Cancels the read.</param>
    public async Task<AssetHistory?> LoadAsync(EvaluationRequest request, DateTimeOffset? before, KeyScope scope, CancellationToken cancellationToken)
    {
        var stages = await EvaluationService.HistoryAsync(audit, request, scope.Narrow, before, cancellationToken).ConfigureAwait(false);
        return stages is null ? null : new AssetHistory(stages);
    }
}
