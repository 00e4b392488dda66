using System.Text.Json;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using DischargeGuard.Rules.Provider;
using Microsoft.AspNetCore.Diagnostics.HealthChecks;
using Microsoft.Extensions.Diagnostics.HealthChecks;

namespace DischargeGuard.Api.Endpoints;

/// <summary>Liveness and readiness.</summary>
public static class HealthApi
{
    /// <summary>Maps <c>/health/live</c> (the process answers) and <c>/health/ready</c> (rules loaded, audit store writable).</summary>
    public static IEndpointRouteBuilder MapHealth(this IEndpointRouteBuilder routes)
    {
        routes.MapHealthChecks("/health/live", new HealthCheckOptions { Predicate = _ => false, ResponseWriter = WriteAsync })
            .WithTags("Health").WithName("Live").WithSummary("The process is up.");
        routes.MapHealthChecks("/health/ready", new HealthCheckOptions
        {
            ResponseWriter = WriteAsync,
            ResultStatusCodes =
            {
                [HealthStatus.Healthy] = StatusCodes.Status200OK,
                [HealthStatus.Degraded] = StatusCodes.Status200OK,
                [HealthStatus.Unhealthy] = StatusCodes.Status503ServiceUnavailable,
            },
        }).WithTags("Health").WithName("Ready").WithSummary("Ready with a loaded rule set and a writable audit store; Degraded when the last rule reload failed.");
        return routes;
    }

    private static Task WriteAsync(HttpContext http, HealthReport report)
    {
        http.Response.ContentType = "application/json; charset=utf-8";

        // Probes send no key, and the detail (a refused rule file's errors quote its keys and values) is not theirs to
        // read: without an admin key each check says only its status and a fixed sentence. With no keys configured the
        // service is loopback-only and every endpoint is open, so the detail is too.
        var detail = ShowsDetail(http);
        var doc = new Dictionary<string, object?>
        {
            ["status"] = report.Status.ToString(),
            ["checks"] = report.Entries.ToDictionary(
                e => e.Key,
                e =>
                {
                    var check = new Dictionary<string, object?> { ["status"] = e.Value.Status.ToString(), ["description"] = e.Value.Description };
                    if (detail && e.Value.Data.Count > 0)
                    {
                        check["data"] = e.Value.Data;
                    }

                    return (object?)check;
                }),
        };
        return http.Response.WriteAsync(JsonSerializer.Serialize(doc, HealthJson), http.RequestAborted);
    }

    /// <summary>Whether the caller may read the checks' data: an admin key, or no keys configured at all.</summary>
    internal static bool ShowsDetail(HttpContext http) =>
        http.RequestServices.GetRequiredService<ApiKeyRegistry>().IsOpen
        || (http.User.Identity?.IsAuthenticated == true && http.User.IsInRole(Roles.Admin));

    private static readonly JsonSerializerOptions HealthJson = new() { PropertyNamingPolicy = JsonNamingPolicy.CamelCase, WriteIndented = false };
}

/// <summary>Rule set loaded; Degraded (still serving the last good set) when the last reload failed.</summary>
internal sealed class RuleSetHealthCheck(IRuleSetProvider rules) : IHealthCheck
{
    public Task<HealthCheckResult> CheckHealthAsync(HealthCheckContext context, CancellationToken cancellationToken = default)
    {
        var data = new Dictionary<string, object> { ["digest"] = rules.Current.Digest, ["loadedAt"] = rules.Current.LoadedAt };
        if (rules.LastError is { } error)
        {
            data["lastReloadErrors"] = error.Errors.Select(e => e.ToString()).ToArray();
            return Task.FromResult(HealthCheckResult.Degraded("The last rule reload failed; the last good rule set is still in force.", data: data));
        }

        return Task.FromResult(HealthCheckResult.Healthy("Rule set loaded.", data));
    }
}

/// <summary>Audit store reachable, writable, guarded, and with room.</summary>
internal sealed class AuditStoreHealthCheck(IAuditStore audit, DischargeGuard.Api.Infrastructure.StorageGuard storage) : IHealthCheck
{
    public async Task<HealthCheckResult> CheckHealthAsync(HealthCheckContext context, CancellationToken cancellationToken = default)
    {
        var health = await audit.CheckHealthAsync(cancellationToken).ConfigureAwait(false);
        var room = await storage.CheckAsync(cancellationToken).ConfigureAwait(false);
        if (health.MissingGuards.Count > 0)
        {
            return HealthCheckResult.Unhealthy(
                "The audit store's guards are missing or altered: " + string.Join(", ", health.MissingGuards) + ". Its records can no longer be trusted to be append-only; restore the guards (or the store) and verify the chain.",
                data: new Dictionary<string, object> { ["missingGuards"] = health.MissingGuards.ToArray() });
        }

        if (!health.IsHealthy)
        {
            return HealthCheckResult.Unhealthy("The audit store cannot take writes; evaluations are refused with 503 until it recovers.");
        }

        var data = new Dictionary<string, object> { ["storage"] = room.Description };
        return room.Level switch
        {
            DischargeGuard.Api.Infrastructure.StorageLevel.Full => HealthCheckResult.Unhealthy(
                "The audit store is nearly full (" + room.Description + "): evaluations are refused with 503 until room is made.", data: data),
            DischargeGuard.Api.Infrastructure.StorageLevel.Low => HealthCheckResult.Degraded(
                "The audit store is running out of room (" + room.Description + "); evaluations stop below the threshold.", data: data),
            _ => HealthCheckResult.Healthy("Audit store writable.", data),
        };
    }
}
