using System.Diagnostics;
using System.Security.Claims;
using System.Text.Json;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Rules.Provider;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Mvc;
using Microsoft.Extensions.Options;

namespace DischargeGuard.Api.Endpoints;

/// <summary>Evaluations: compute, audit, answer; and read back what was recorded.</summary>
public static partial class EvaluationsApi
{
    /// <summary>Maps <c>/v1/evaluations</c>.</summary>
    public static RouteGroupBuilder MapEvaluations(this IEndpointRouteBuilder routes)
    {
        var group = routes.MapGroup("/v1/evaluations").WithTags("Evaluations").RequireKey();
        group.MapPost("/", Evaluate)
            .WithName("CreateEvaluation")
            .WithSummary("Evaluate a proposed stage or train; the answer is recorded in the audit store before it is sent.")
            .WithDescription("Quantities are strings \"<number> <unit>\" or {\"value\", \"unit\"}; state pressures state their basis. "
                + "The answer is compact: each finding once, under its stage, with its limit, margin and outcome wording; add ?detail=full for each rule's basis, "
                + "the envelope per limit and the gas models side by side (the basis is also in the archived rule set of the answer's digest). "
                + "Add ?curve=true for the discharge-temperature curve per stage. A rule violation is a 200 with verdict \"fail\".")
            .Accepts<EvaluationRequest>("application/json")
            .WithValidation<EvaluationRequest>()
            .RequireRoles(Policies.Evaluate)
            // ProblemHttpResult declares no status of its own: name every problem the handler and the host can answer.
            .ProducesProblem(StatusCodes.Status413PayloadTooLarge)
            .ProducesProblem(StatusCodes.Status422UnprocessableEntity)
            .ProducesProblem(StatusCodes.Status503ServiceUnavailable);
        group.MapGet("/{id:guid}", GetEvaluation)
            .WithName("GetEvaluation")
            .WithSummary("The stored request and response of an evaluation; the response is byte-identical to what was sent.")
            .WithDescription("A key bound to sites (and assets) reads only their records; an unbound planner or admin key reads any record; an unbound technician key reads only the records it made. Others answer 404.")
            .RequireRoles(Policies.ReadEvaluation)
            .ProducesProblem(StatusCodes.Status404NotFound);
        group.MapGet("/", ListEvaluations)
            .WithName("ListEvaluations")
            .WithSummary("Recorded evaluations, newest first, with keyset paging (cursor); filters by asset, site, verdict and time.")
            .WithDescription("Only the records the key may read: those of its bound sites (and assets); every record for an unbound planner or admin key; "
                + "its own records for an unbound technician key. `from` is inclusive, `to` exclusive (ISO 8601).")
            .RequireRoles(Policies.ReadEvaluation);
        group.MapGet("/{id:guid}/verify", VerifyEvaluation)
            .WithName("VerifyEvaluation")
            .WithSummary("Recompute the SHA-256 of a record's stored request and response and its record hash (every column and the previous hash), and compare them with what was stored when it was written.")
            .RequireRoles(Policies.ReadEvaluation);
        group.MapReport();
        group.MapBatch();
        group.MapExport();
        group.MapReplay();
        return group;
    }

    /// <summary>
    /// Reads <c>?detail=</c>: absent or <c>compact</c> for the compact answer, <c>full</c> for everything; anything else is
    /// the field's 400 (the query check answers it before the handler; this keeps the handler whole on its own).
    /// </summary>
    internal static bool TryDetail(string? detail, out AnswerDetail value, out ValidationProblem problem)
    {
        problem = null!;
        switch (detail)
        {
            case null or "compact":
                value = AnswerDetail.Compact;
                return true;
            case "full":
                value = AnswerDetail.Full;
                return true;
            default:
                value = AnswerDetail.Compact;
                problem = Problems.Validation(new Dictionary<string, string[]>(StringComparer.Ordinal)
                {
                    ["detail"] = [QueryParameters.NotInVocabulary("detail", detail)],
                });
                return false;
        }
    }

    // The endpoint tag of the single evaluation in metrics.
    private const string Endpoint = "single";

    internal static async Task<Results<Utf8JsonResult<EvaluationResponse>, ValidationProblem, ProblemHttpResult>> Evaluate(
        [FromBody] EvaluationRequest request,
        [FromQuery] bool? curve,
        [FromQuery] string? detail,
        HttpContext http,
        IRuleSetProvider rules,
        EvaluationRunner runner,
        IAuditStore audit,
        IOptions<ServiceOptions> options,
        HistoryReader histories,
        ServiceTelemetry telemetry,
        ApiKeyRegistry keys,
        StorageGuard storage,
        ILoggerFactory loggers)
    {
        var started = Stopwatch.GetTimestamp();
        if (!TryDetail(detail, out var answerDetail, out var detailProblem))
        {
            return detailProblem;
        }

        var logger = loggers.CreateLogger("DischargeGuard.Evaluations");
        await storage.CheckAsync(http.RequestAborted).ConfigureAwait(false);
        AssetHistory? history;
        try
        {
            history = await histories.LoadAsync(request, null, keys.ScopeOf(http.User), http.RequestAborted).ConfigureAwait(false);
        }
        catch (AuditStoreUnavailableException ex)
        {
            LogHistoryFailed(logger, request.Asset!, ex.Message);
            telemetry.Refused(Problems.AuditUnavailable, Endpoint);
            return Unavailable(http, options);
        }

        // One snapshot for the whole evaluation: a reload mid-request cannot mix two rule sets.
        var body = await RequestBodyAsync(http, request).ConfigureAwait(false);
        RunResult result;
        using (var span = ServiceTelemetry.Source.StartActivity("evaluate"))
        {
            result = runner.Run(request, body, rules.Current, CallerOf(http), curve == true, history, scope: keys.ScopeOf(http.User), detail: answerDetail);
            span?.SetTag("dischargeguard.evaluation.id", result.Record?.Id.ToString());
            span?.SetTag("dischargeguard.verdict", result.Response?.Verdict);
            span?.SetTag("dischargeguard.rules.digest", result.Response?.RuleSet.Digest);
            span?.SetTag("dischargeguard.status", result.Status);
        }

        if (result.Record is not { } record)
        {
            telemetry.Answered(result, Endpoint);
            SetRetryAfter(http, result.Problem);
            return result.Problem is HttpValidationProblemDetails v
                ? Problems.AsResult(v)
                : Problems.AsResult(result.Problem!);
        }

        try
        {
            using var wait = ServiceTelemetry.Source.StartActivity("audit.commit-wait");
            await runner.AppendAsync(audit, result, http.RequestAborted).ConfigureAwait(false);
        }
        catch (AuditStoreUnavailableException ex)
        {
            runner.Unreserve(record);
            LogAuditFailed(logger, record.Id, record.Asset, ex.Message);
            telemetry.Refused(Problems.AuditUnavailable, Endpoint);
            return Unavailable(http, options);
        }

        telemetry.Answered(result, Endpoint);

        if (logger.IsEnabled(LogLevel.Information))
        {
            var response = result.Response!;
            var margin = GoverningMargin(record);
            var elapsedMs = Stopwatch.GetElapsedTime(started).TotalMilliseconds;
            LogEvaluated(logger, record.Id, record.Asset, response.Verdict, margin, response.RuleSet.Digest, record.Caller, elapsedMs);
        }

        return new Utf8JsonResult<EvaluationResponse>(record.Response);
    }

    /// <summary>Copies a refusal's <c>retryAfterSeconds</c> (a spent quota, a nearly full store) into <c>Retry-After</c>.</summary>
    internal static void SetRetryAfter(HttpContext http, ProblemDetails? problem)
    {
        if (problem?.Extensions.TryGetValue("retryAfterSeconds", out var seconds) == true && seconds is int s)
        {
            http.Response.Headers.RetryAfter = s.ToString(System.Globalization.CultureInfo.InvariantCulture);
        }
    }

    internal static ProblemHttpResult Unavailable(HttpContext http, IOptions<ServiceOptions> options)
    {
        http.Response.Headers.RetryAfter = options.Value.RetryAfterSeconds.ToString(System.Globalization.CultureInfo.InvariantCulture);
        return Problems.AsResult(Problems.AuditStoreUnavailable());
    }

    // The smallest governing margin in kelvin, from the record's SI summary (whatever units the answer was written in).
    internal static double? GoverningMargin(AuditRecord record) =>
        record.Stages.Select(s => s.MarginKelvin).Where(m => m is not null).DefaultIfEmpty(null).Min();

    internal static async Task<Results<Utf8JsonResult<StoredEvaluation>, ProblemHttpResult>> GetEvaluation(
        Guid id, ClaimsPrincipal user, ApiKeyRegistry keys, IAuditStore audit, CancellationToken cancellationToken)
    {
        var record = await audit.GetAsync(id, cancellationToken).ConfigureAwait(false);

        // A record outside the key's scope answers as missing, so ids cannot be probed.
        return record is null || !keys.ScopeOf(user).MayRead(record)
            ? Problems.AsResult(Problems.Missing($"No evaluation with id {id} is recorded."))
            : new Utf8JsonResult<StoredEvaluation>(StoredEvaluation.Write(record));
    }

    internal static async Task<Results<Ok<VerificationResult>, ProblemHttpResult>> VerifyEvaluation(
        Guid id, ClaimsPrincipal user, ApiKeyRegistry keys, IAuditStore audit, CancellationToken cancellationToken)
    {
        var record = await audit.GetAsync(id, cancellationToken).ConfigureAwait(false);
        if (record is null || !keys.ScopeOf(user).MayRead(record))
        {
            return Problems.AsResult(Problems.Missing($"No evaluation with id {id} is recorded."));
        }

        // Recompute from the stored bytes; the hashes stored beside them were taken when the record was written.
        var requestSha256 = AuditDigest.Sha256Hex(record.Request);
        var responseSha256 = AuditDigest.Sha256Hex(record.Response);
        // The record hash covers every column and the previous record's hash, so a changed verdict or caller shows here too.
        var recordSha256 = record.Sequence is { } sequence && record.PreviousHash is { } previous
            ? AuditChain.RecordHash(sequence, previous, record)
            : string.Empty;
        var intact = string.Equals(requestSha256, record.RequestSha256, StringComparison.Ordinal)
            && string.Equals(responseSha256, record.ResponseSha256, StringComparison.Ordinal)
            && recordSha256.Length > 0 && string.Equals(recordSha256, record.RecordHash, StringComparison.Ordinal);
        return TypedResults.Ok(new VerificationResult(id, intact, requestSha256, record.RequestSha256 ?? string.Empty, responseSha256, record.ResponseSha256 ?? string.Empty)
        {
            Sequence = record.Sequence,
            RecordSha256 = recordSha256,
            StoredRecordSha256 = record.RecordHash ?? string.Empty,
            PreviousSha256 = record.PreviousHash ?? string.Empty,
        });
    }

    internal static async Task<Results<Ok<EvaluationList>, ValidationProblem>> ListEvaluations(
        [FromQuery] string? asset,
        [FromQuery] string? site,
        [FromQuery] string? verdict,
        [FromQuery] DateTimeOffset? from,
        [FromQuery] DateTimeOffset? to,
        [FromQuery] string? cursor,
        [FromQuery] int? limit,
        ClaimsPrincipal user,
        ApiKeyRegistry keys,
        IAuditStore audit,
        CancellationToken cancellationToken)
    {
        var errors = FilterErrors(verdict, from, to);
        if (limit is < 1 or > AuditQuery.MaxPageSize)
        {
            errors["limit"] = [QueryParameters.OutOfRange("limit", limit.Value.ToString(System.Globalization.CultureInfo.InvariantCulture))];
        }

        if (cursor is not null && !AuditCursor.TryParse(cursor, out _))
        {
            errors["cursor"] = ["Not a cursor this service issued; pass back the nextCursor of the previous page unchanged."];
        }

        if (errors.Count > 0)
        {
            return Problems.Validation(errors);
        }

        // What the key is bound to narrows every list; history is never earned by posting.
        var page = await audit.QueryPageAsync(
            keys.ScopeOf(user).Narrow(new AuditQuery { Asset = asset, SiteId = site, Verdict = verdict, From = from, To = to, Cursor = cursor, Limit = limit }),
            cancellationToken).ConfigureAwait(false);
        return TypedResults.Ok(new EvaluationList(
            page.Records.Select(r => new EvaluationSummary(r.Id, r.EvaluatedAt, r.Caller, r.Asset, r.SiteId, r.Verdict, r.RuleDigest, r.EngineVersion, r.ReplayOf)).ToArray(),
            page.NextCursor));
    }

    /// <summary>The filters shared by the list and the export, checked field by field.</summary>
    internal static Dictionary<string, string[]> FilterErrors(string? verdict, DateTimeOffset? from, DateTimeOffset? to)
    {
        var errors = new Dictionary<string, string[]>(StringComparer.Ordinal);
        if (verdict is not null && !AuditVerdict.IsKnown(verdict))
        {
            errors["verdict"] = [QueryParameters.NotInVocabulary("verdict", verdict)];
        }

        if (from is not null && to is not null && from >= to)
        {
            errors["to"] = ["'to' must be later than 'from'."];
        }

        return errors;
    }

    internal static string CallerOf(HttpContext http) =>
        http.User.Identity?.IsAuthenticated == true && http.User.Identity.Name is { } name ? name : AuditRecord.AnonymousCaller;

    // The request as received (the body was buffered for this route), so the record holds what the caller sent.
    private static async Task<byte[]> RequestBodyAsync(HttpContext http, EvaluationRequest bound)
    {
        var body = http.Request.Body;
        if (body.CanSeek)
        {
            body.Position = 0;
            using var copy = new MemoryStream();
            await body.CopyToAsync(copy, http.RequestAborted).ConfigureAwait(false);
            return copy.ToArray();
        }

        return JsonSerializer.SerializeToUtf8Bytes(bound, EvaluationJson.Options);
    }

    [LoggerMessage(EventId = 1, Level = LogLevel.Information,
        Message = "Evaluation {EvaluationId} of {Asset}: {Verdict}, governing margin {GoverningMargin}, rules {RuleDigest}, caller {Caller}, {DurationMs:0.0} ms")]
    private static partial void LogEvaluated(ILogger logger, Guid evaluationId, string asset, string verdict, double? governingMargin, string ruleDigest, string caller, double durationMs);

    // Store failures are expected faults with a known cause: the message says it, a stack trace would add nothing.
    [LoggerMessage(EventId = 2, Level = LogLevel.Error, Message = "Evaluation {EvaluationId} of {Asset} not answered: the audit store refused the write ({Reason})")]
    private static partial void LogAuditFailed(ILogger logger, Guid evaluationId, string asset, string reason);

    [LoggerMessage(EventId = 3, Level = LogLevel.Error, Message = "Evaluation of {Asset} not answered: the asset's history could not be read from the audit store ({Reason})")]
    private static partial void LogHistoryFailed(ILogger logger, string asset, string reason);
}

/// <summary>
/// A recorded evaluation as <c>GET /v1/evaluations/{id}</c> returns it. <c>request</c> and <c>response</c> are the stored
/// JSON documents embedded verbatim (their bytes are unchanged).
/// </summary>
public sealed record StoredEvaluation(
    Guid Id,
    DateTimeOffset EvaluatedAt,
    string Caller,
    string Asset,
    string? Site,
    string Verdict,
    string RuleDigest,
    string EngineVersion,
    string RequestSha256,
    string ResponseSha256,
    Guid? ReplayOf,
    JsonElement Request,
    JsonElement Response)
{
    internal static byte[] Write(AuditRecord record)
    {
        using var buffer = new MemoryStream(record.Request.Length + record.Response.Length + 512);
        using (var w = new Utf8JsonWriter(buffer, new JsonWriterOptions { Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping }))
        {
            w.WriteStartObject();
            w.WriteString("id", record.Id);
            w.WriteString("evaluatedAt", record.EvaluatedAt);
            w.WriteString("caller", record.Caller);
            w.WriteString("asset", record.Asset);
            if (record.SiteId is not null)
            {
                w.WriteString("site", record.SiteId);
            }

            w.WriteString("verdict", record.Verdict);
            w.WriteString("ruleDigest", record.RuleDigest);
            w.WriteString("engineVersion", record.EngineVersion);
            w.WriteString("requestSha256", record.RequestSha256);
            w.WriteString("responseSha256", record.ResponseSha256);
            if (record.ReplayOf is { } replayOf)
            {
                w.WriteString("replayOf", replayOf);
            }

            w.WritePropertyName("request");
            w.WriteRawValue(record.Request, skipInputValidation: false);
            w.WritePropertyName("response");
            w.WriteRawValue(record.Response, skipInputValidation: true);
            w.WriteEndObject();
        }

        return buffer.ToArray();
    }
}

/// <summary>The answer of <c>GET /v1/evaluations/{id}/verify</c>.</summary>
/// <param name="Id">The evaluation.</param>
/// <param name="Intact">Whether the recomputed body hashes and record hash equal the stored ones.</param>
/// <param name="RequestSha256">SHA-256 (hex) recomputed from the stored request bytes.</param>
/// <param name="StoredRequestSha256">The request hash stored with the record.</param>
/// <param name="ResponseSha256">SHA-256 (hex) recomputed from the stored response bytes.</param>
/// <param name="StoredResponseSha256">The response hash stored with the record.</param>
public sealed record VerificationResult(Guid Id, bool Intact, string RequestSha256, string StoredRequestSha256, string ResponseSha256, string StoredResponseSha256)
{
    /// <summary>The record's place in the hash chain.</summary>
    public long? Sequence { get; init; }

    /// <summary>The record hash recomputed from every column and the stored previous hash (docs/audit.md).</summary>
    public string RecordSha256 { get; init; } = string.Empty;

    /// <summary>The record hash stored when the record was written.</summary>
    public string StoredRecordSha256 { get; init; } = string.Empty;

    /// <summary>The previous record's hash as stored with this one; the whole chain is checked by <c>GET /v1/admin/audit/verify</c>.</summary>
    public string PreviousSha256 { get; init; } = string.Empty;
}

/// <summary>A page of recorded evaluations, newest first.</summary>
/// <param name="Evaluations">The records on this page (without their bodies: read one with <c>GET /v1/evaluations/{id}</c>).</param>
/// <param name="NextCursor">Pass as <c>cursor</c> for the next page; absent on the last page.</param>
public sealed record EvaluationList(IReadOnlyList<EvaluationSummary> Evaluations, string? NextCursor);

/// <summary>One recorded evaluation in a list.</summary>
/// <param name="Id">The evaluation id.</param>
/// <param name="EvaluatedAt">When it was made (UTC).</param>
/// <param name="Caller">The key id that asked, or anonymous.</param>
/// <param name="Asset">The asset tag.</param>
/// <param name="Site">The site, when the request named one.</param>
/// <param name="Verdict">pass, review or fail.</param>
/// <param name="RuleDigest">SHA-256 of the effective rule set used.</param>
/// <param name="EngineVersion">The engine version that answered.</param>
/// <param name="ReplayOf">The evaluation this one replays, when it is a replay.</param>
public sealed record EvaluationSummary(Guid Id, DateTimeOffset EvaluatedAt, string Caller, string Asset, string? Site, string Verdict, string RuleDigest, string EngineVersion, Guid? ReplayOf);
