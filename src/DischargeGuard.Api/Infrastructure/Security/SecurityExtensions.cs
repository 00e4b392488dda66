using Microsoft.Extensions.Options;

namespace DischargeGuard.Api.Infrastructure.Security;

/// <summary>API keys, roles, rate limits and the loopback-only default, as one piece of the host's composition.</summary>
public static class SecurityExtensions
{
    /// <summary>Registers the key registry, the <c>ApiKey</c> scheme, the role policies and the per-caller limiter; applies the loopback rule.</summary>
    public static WebApplicationBuilder AddDischargeGuardSecurity(this WebApplicationBuilder builder)
    {
        ArgumentNullException.ThrowIfNull(builder);
        builder.Services.AddOptions<AuthOptions>().BindConfiguration(AuthOptions.SectionName).ValidateOnStart();
        builder.Services.AddSingleton<IValidateOptions<AuthOptions>, AuthOptionsValidator>();
        builder.Services.AddOptions<RateLimitOptions>().BindConfiguration(RateLimitOptions.SectionName).ValidateDataAnnotations().ValidateOnStart();
        builder.Services.AddSingleton<ApiKeyRegistry>();
        builder.Services.AddAuthentication(AuthOptions.Scheme)
            .AddScheme<Microsoft.AspNetCore.Authentication.AuthenticationSchemeOptions, ApiKeyAuthenticationHandler>(AuthOptions.Scheme, null);
        builder.Services.AddSingleton<Microsoft.AspNetCore.Authorization.IAuthorizationHandler, KeyRoleHandler>();
        builder.Services.AddAuthorization(Policies.Add);
        builder.Services.AddRateLimiter(RateLimiting.Configure);
        builder.Services.AddSingleton(LoopbackBinding.Apply(builder));
        builder.Services.AddHostedService<SecurityStartupReport>();
        return builder;
    }

    /// <summary>Authentication, then the limiter (so it partitions by key id), then authorization.</summary>
    public static WebApplication UseDischargeGuardSecurity(this WebApplication app)
    {
        ArgumentNullException.ThrowIfNull(app);
        app.UseAuthentication();
        app.UseRateLimiter();
        app.UseAuthorization();
        return app;
    }

    /// <summary>
    /// Every endpoint of a <c>/v1</c> group: a valid key (any role) and the per-caller limiter. Endpoints narrow the roles
    /// with <see cref="RequireRoles"/>; an endpoint added without it still needs a key.
    /// </summary>
    public static RouteGroupBuilder RequireKey(this RouteGroupBuilder group)
    {
        ArgumentNullException.ThrowIfNull(group);
        return group.RequireAuthorization(Policies.ReadCatalogue).RequireRateLimiting(RateLimiting.PerCaller)
            .ProducesProblem(StatusCodes.Status401Unauthorized)
            .ProducesProblem(StatusCodes.Status429TooManyRequests);
    }

    /// <summary>An endpoint open only to the roles of <paramref name="policy"/> (see <see cref="Policies"/>).</summary>
    public static RouteHandlerBuilder RequireRoles(this RouteHandlerBuilder endpoint, string policy)
    {
        ArgumentNullException.ThrowIfNull(endpoint);
        return endpoint.RequireAuthorization(policy).ProducesProblem(StatusCodes.Status403Forbidden);
    }
}

/// <summary>Says at start how callers are identified; without keys, that the service listens on loopback only.</summary>
internal sealed partial class SecurityStartupReport(ApiKeyRegistry keys, BindingDecision binding, ILogger<SecurityStartupReport> logger) : IHostedService
{
    public Task StartAsync(CancellationToken cancellationToken)
    {
        if (!keys.IsOpen)
        {
            LogKeys(logger, keys.Count);
        }
        else if (binding.Overridden)
        {
            LogLoopbackOverridden(logger, LoopbackBinding.Describe(binding.Configured), LoopbackBinding.Describe(binding.Effective));
        }
        else
        {
            LogLoopback(logger, LoopbackBinding.Describe(binding.Effective));
        }

        return Task.CompletedTask;
    }

    public Task StopAsync(CancellationToken cancellationToken) => Task.CompletedTask;

    [LoggerMessage(EventId = 20, Level = LogLevel.Information, Message = "{KeyCount} API keys configured: every /v1 endpoint requires a key in X-Api-Key")]
    private static partial void LogKeys(ILogger logger, int keyCount);

    [LoggerMessage(EventId = 21, Level = LogLevel.Warning, Message = "no API keys configured: listening on loopback only ({Urls}); callers are recorded as anonymous")]
    private static partial void LogLoopback(ILogger logger, string urls);

    [LoggerMessage(EventId = 22, Level = LogLevel.Warning, Message = "no API keys configured: listening on loopback only; {Configured} replaced by {Effective}")]
    private static partial void LogLoopbackOverridden(ILogger logger, string configured, string effective);
}
