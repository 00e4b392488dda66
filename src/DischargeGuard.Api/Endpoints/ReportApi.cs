using System.Security.Claims;
using System.Text;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using Microsoft.AspNetCore.Http.HttpResults;

namespace DischargeGuard.Api.Endpoints;

/// <summary>
/// <c>GET /v1/evaluations/{id}/report</c>: a recorded evaluation as a printable management-of-change record (HTML with
/// print styles). The same key, scope and Content-Security-Policy as <c>GET /v1/evaluations/{id}</c>; the page fetches it
/// with the key it holds and shows it at <c>/report.html?evaluation={id}</c>, so a key never goes into a URL.
/// </summary>
public static class ReportApi
{
    /// <summary>The report's path for an evaluation, relative to the service's base address.</summary>
    /// <param name="id">The evaluation id.</param>
    /// <returns><c>v1/evaluations/{id}/report</c>.</returns>
    public static string PathOf(Guid id) => "v1/evaluations/" + id.ToString("D") + "/report";

    /// <summary>Maps <c>/{id}/report</c> on the evaluations group.</summary>
    /// <param name="group">The <c>/v1/evaluations</c> group (keys required).</param>
    /// <returns>The group.</returns>
    public static RouteGroupBuilder MapReport(this RouteGroupBuilder group)
    {
        ArgumentNullException.ThrowIfNull(group);
        group.MapGet("/{id:guid}/report", GetReport)
            .WithName("GetEvaluationReport")
            .WithSummary("A recorded evaluation as a printable management-of-change record (HTML with print styles).")
            .WithDescription("Built from the stored request and response only: asset, site, time, id, rule digest and layers, every input as sent, "
                + "per-stage results, findings with limit, margin and basis, the envelope chart as inline SVG, the cautions and a review and sign-off block. "
                + "The same access rules as GET /v1/evaluations/{id} (others answer 404). Send the key as X-Api-Key; the page at /report.html?evaluation={id} fetches it with the key it holds.")
            .Produces<string>(StatusCodes.Status200OK, "text/html")
            .RequireRoles(Policies.ReadEvaluation)
            .ProducesProblem(StatusCodes.Status404NotFound);
        return group;
    }

    internal static async Task<Results<ContentHttpResult, ProblemHttpResult>> GetReport(
        Guid id, ClaimsPrincipal user, ApiKeyRegistry keys, IAuditStore audit, CancellationToken cancellationToken)
    {
        var record = await audit.GetAsync(id, cancellationToken).ConfigureAwait(false);

        // A record outside the key's scope answers as missing, exactly as the record itself does.
        if (record is null || !keys.ScopeOf(user).MayRead(record))
        {
            return Problems.AsResult(Problems.Missing($"No evaluation with id {id} is recorded."));
        }

        var html = EvaluationReport.Write(record);
        return TypedResults.Content(html, "text/html; charset=utf-8", Encoding.UTF8, StatusCodes.Status200OK);
    }
}
