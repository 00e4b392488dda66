using System.Globalization;
using System.Security.Claims;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Mvc;
using Microsoft.Extensions.Options;

namespace DischargeGuard.Api.Endpoints;

/// <summary>
/// <c>/v1/admin</c>: operations that change the audit store. Retention is the only way records leave it, and it is
/// explicit: an admin names the cut-off and the reason, the store keeps that grant for ever, and the run is logged.
/// </summary>
internal static partial class AdminApi
{
    public static RouteGroupBuilder MapAdmin(this IEndpointRouteBuilder routes)
    {
        var group = routes.MapGroup("/v1/admin").WithTags("Administration").RequireKey();
        group.MapPost("/retention", ApplyRetentionAsync)
            .WithName("ApplyRetention")
            .WithSummary("Delete the audit records evaluated before a cut-off, with a stated reason; the grant itself is kept. Use dryRun to count first.")
            .WithDescription("The cut-off must be at least DischargeGuard:MinimumRetentionDays (730 by default) in the past. "
                + "The grant (when, cut-off, admin key, reason) and the deletion commit in one transaction; nothing else can delete a record.")
            .Accepts<RetentionRequest>("application/json")
            .ProducesValidationProblem()
            .ProducesProblem(StatusCodes.Status422UnprocessableEntity)
            .ProducesProblem(StatusCodes.Status503ServiceUnavailable)
            .RequireRoles(Policies.Admin);
        group.MapGet("/audit/head", GetChainHeadAsync)
            .WithName("GetAuditChainHead")
            .WithSummary("The newest link of the audit hash chain: sequence, record id and hash. Keep copies outside the database host.")
            .ProducesProblem(StatusCodes.Status503ServiceUnavailable)
            .RequireRoles(Policies.Admin);
        group.MapGet("/audit/verify", VerifyChainAsync)
            .WithName("VerifyAuditChain")
            .WithSummary("Walk the whole audit hash chain (grants, every record in order, the head) and report the first broken link.")
            .WithDescription("Records are streamed from the store, not held in memory. `intact` is false at the first record whose body hashes, previous hash "
                + "or record hash do not match, at a gap in the sequence, or when the chain does not end at the stored head. Compare `head` with a copy kept elsewhere.")
            .ProducesProblem(StatusCodes.Status503ServiceUnavailable)
            .RequireRoles(Policies.Admin);
        return group;
    }

    internal static async Task<Results<Ok<AuditChainHead>, ProblemHttpResult>> GetChainHeadAsync(HttpContext http, IAuditStore audit, IOptions<ServiceOptions> options)
    {
        try
        {
            return TypedResults.Ok(await audit.GetChainHeadAsync(http.RequestAborted).ConfigureAwait(false));
        }
        catch (AuditStoreUnavailableException)
        {
            return EvaluationsApi.Unavailable(http, options);
        }
    }

    internal static async Task<Results<Ok<AuditChainVerification>, ProblemHttpResult>> VerifyChainAsync(
        HttpContext http, IAuditStore audit, IOptions<ServiceOptions> options, ILogger<AuditChainVerification> logger)
    {
        try
        {
            var result = await audit.VerifyChainAsync(http.RequestAborted).ConfigureAwait(false);
            if (!result.Intact)
            {
                LogChainBroken(logger, result.FirstBreak!.Sequence, result.FirstBreak.Reason);
            }

            return TypedResults.Ok(result);
        }
        catch (AuditStoreUnavailableException)
        {
            return EvaluationsApi.Unavailable(http, options);
        }
    }

    [LoggerMessage(EventId = 41, Level = LogLevel.Error, Message = "Audit chain broken at sequence {Sequence}: {Reason}")]
    private static partial void LogChainBroken(ILogger logger, long sequence, string reason);

    internal static async Task<Results<Ok<RetentionAnswer>, ValidationProblem, ProblemHttpResult>> ApplyRetentionAsync(
        [FromBody] RetentionRequest request,
        ClaimsPrincipal user,
        HttpContext http,
        IAuditStore audit,
        TimeProvider time,
        IOptions<ServiceOptions> options,
        ILogger<RetentionRequest> logger)
    {
        var errors = new Dictionary<string, string[]>(StringComparer.Ordinal);
        if (request.DeleteBefore is null)
        {
            errors["deleteBefore"] = ["Give the cut-off as an ISO 8601 instant with its offset, e.g. \"2024-01-01T00:00:00Z\"."];
        }

        if (string.IsNullOrWhiteSpace(request.Reason) || request.Reason.Length > RetentionGrant.MaxReasonLength)
        {
            errors["reason"] = [$"State why (the retention policy or change reference), 1 to {RetentionGrant.MaxReasonLength} characters; it is stored with the grant."];
        }

        if (errors.Count > 0)
        {
            return Problems.Validation(errors);
        }

        var now = time.GetUtcNow();
        var minimumDays = options.Value.MinimumRetentionDays;
        var latest = now.AddDays(-minimumDays);
        var cutoff = request.DeleteBefore!.Value.ToUniversalTime();
        if (cutoff > latest)
        {
            return Problems.AsResult(Problems.Unprocessable(new Evaluation.Pipeline.RequestProblem(
                Evaluation.Pipeline.ProblemKind.Unprocessable,
                "retention-too-recent",
                "The cut-off is more recent than the service's minimum retention.",
                new Dictionary<string, string[]>
                {
                    ["deleteBefore"] = [string.Create(CultureInfo.InvariantCulture, $"Records are kept at least {minimumDays} days: the cut-off must be {latest:yyyy'-'MM'-'dd'T'HH':'mm':'ss'Z'} or earlier.")],
                })));
        }

        var admin = EvaluationsApi.CallerOf(http);
        try
        {
            if (request.DryRun)
            {
                var count = await audit.CountBeforeAsync(cutoff, http.RequestAborted).ConfigureAwait(false);
                return TypedResults.Ok(new RetentionAnswer(cutoff, true, count, null, admin, request.Reason!));
            }

            var result = await audit.ApplyRetentionAsync(new RetentionGrant(cutoff, admin, request.Reason!, now), http.RequestAborted).ConfigureAwait(false);
            LogRetention(logger, result.Deleted, cutoff, admin, request.Reason!, result.GrantId);
            return TypedResults.Ok(new RetentionAnswer(cutoff, false, result.Deleted, result.GrantId, admin, request.Reason!));
        }
        catch (AuditStoreUnavailableException)
        {
            return EvaluationsApi.Unavailable(http, options);
        }
    }

    [LoggerMessage(EventId = 40, Level = LogLevel.Warning,
        Message = "Retention: {Deleted} audit records evaluated before {DeleteBefore:O} deleted by {Admin} (grant {GrantId}): {Reason}")]
    private static partial void LogRetention(ILogger logger, long deleted, DateTimeOffset deleteBefore, string admin, string reason, long grantId);
}

/// <summary>The body of <c>POST /v1/admin/retention</c>.</summary>
/// <param name="DeleteBefore">Records evaluated strictly before this instant are deleted.</param>
/// <param name="Reason">Why: the retention policy or change reference (stored with the grant).</param>
/// <param name="DryRun">Count only; delete nothing and store no grant.</param>
public sealed record RetentionRequest(DateTimeOffset? DeleteBefore, string? Reason, bool DryRun = false);

/// <summary>What a retention request did (or, for a dry run, would do).</summary>
/// <param name="DeleteBefore">The cut-off (UTC).</param>
/// <param name="DryRun">Whether nothing was deleted.</param>
/// <param name="Records">Records deleted, or that a run would delete.</param>
/// <param name="GrantId">The stored grant (absent for a dry run).</param>
/// <param name="GrantedBy">The admin key id.</param>
/// <param name="Reason">The stated reason.</param>
public sealed record RetentionAnswer(DateTimeOffset DeleteBefore, bool DryRun, long Records, long? GrantId, string GrantedBy, string Reason);
