using System.Globalization;
using System.Threading.RateLimiting;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.RateLimiting;
using Microsoft.Extensions.Options;

namespace DischargeGuard.Api.Infrastructure.Security;

/// <summary>A token bucket per caller: the key id when authenticated, the remote address otherwise (so wrong keys are limited too).</summary>
internal static class RateLimiting
{
    /// <summary>The policy the <c>/v1</c> groups use.</summary>
    public const string PerCaller = "per-caller";

    public static void Configure(RateLimiterOptions options)
    {
        options.RejectionStatusCode = StatusCodes.Status429TooManyRequests;
        options.AddPolicy(PerCaller, http =>
        {
            var settings = http.RequestServices.GetRequiredService<IOptions<RateLimitOptions>>().Value;
            return RateLimitPartition.GetTokenBucketLimiter(PartitionOf(http), _ => Bucket(settings));
        });
        options.OnRejected = OnRejectedAsync;
    }

    internal static string PartitionOf(HttpContext http) =>
        http.User.Identity?.IsAuthenticated == true && http.User.Identity.Name is { } id
            ? "key:" + id
            : "ip:" + (http.Connection.RemoteIpAddress?.ToString() ?? "unknown");

    internal static TokenBucketRateLimiterOptions Bucket(RateLimitOptions settings)
    {
        // Whole permits per second, or one permit per 1/rate seconds below one a second.
        var (tokens, period) = settings.PermitsPerSecond >= 1
            ? ((int)Math.Round(settings.PermitsPerSecond), TimeSpan.FromSeconds(1))
            : (1, TimeSpan.FromSeconds(1 / settings.PermitsPerSecond));
        return new TokenBucketRateLimiterOptions
        {
            TokenLimit = settings.Burst,
            TokensPerPeriod = tokens,
            ReplenishmentPeriod = period,
            QueueLimit = 0,
            AutoReplenishment = true,
        };
    }

    private static async ValueTask OnRejectedAsync(OnRejectedContext context, CancellationToken cancellationToken)
    {
        var http = context.HttpContext;
        var seconds = context.Lease.TryGetMetadata(MetadataName.RetryAfter, out var retryAfter) ? Math.Max(1, (int)Math.Ceiling(retryAfter.TotalSeconds)) : 1;
        http.Response.StatusCode = StatusCodes.Status429TooManyRequests;
        http.Response.Headers.RetryAfter = seconds.ToString(CultureInfo.InvariantCulture);
        var details = Problems.TooManyRequests(seconds);
        var problems = http.RequestServices.GetRequiredService<IProblemDetailsService>();
        await problems.WriteAsync(new ProblemDetailsContext { HttpContext = http, ProblemDetails = details }).ConfigureAwait(false);
    }
}
