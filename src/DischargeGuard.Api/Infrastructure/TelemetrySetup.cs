using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using OpenTelemetry.Metrics;
using OpenTelemetry.Resources;
using OpenTelemetry.Trace;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// OpenTelemetry for operators. The instruments always exist (they cost nothing unlistened); the SDK is started only
/// when something reads it: the OTLP exporter when <c>OTEL_EXPORTER_OTLP_ENDPOINT</c> is set (the standard variables
/// configure it: protocol, headers, export interval), and Prometheus scraping at <c>/metrics</c> when
/// <c>Telemetry:Prometheus</c> is true.
/// </summary>
internal static class TelemetrySetup
{
    /// <summary>The standard OTLP endpoint setting (an environment variable or any configuration source).</summary>
    public const string OtlpEndpointKey = "OTEL_EXPORTER_OTLP_ENDPOINT";

    /// <summary>Serve Prometheus text at <c>/metrics</c> (admin key, or anyone on loopback when no keys are configured).</summary>
    public const string PrometheusKey = "Telemetry:Prometheus";

    /// <summary>The scraping path.</summary>
    public const string PrometheusPath = "/metrics";

    public static WebApplicationBuilder AddDischargeGuardTelemetry(this WebApplicationBuilder builder)
    {
        builder.Services.AddSingleton<ServiceTelemetry>();
        builder.Services.AddHostedService<RuleReloadReporter>();

        var otlp = !string.IsNullOrWhiteSpace(builder.Configuration[OtlpEndpointKey]);
        var prometheus = builder.Configuration.GetValue<bool>(PrometheusKey);
        if (!otlp && !prometheus)
        {
            return builder;
        }

        var version = typeof(TelemetrySetup).Assembly.GetName().Version?.ToString();
        builder.Services.AddOpenTelemetry()
            .ConfigureResource(r => r.AddService("dischargeguard", serviceVersion: version, serviceInstanceId: Environment.MachineName))
            .WithMetrics(metrics =>
            {
                metrics.AddMeter(ServiceTelemetry.MeterName, AuditMetrics.MeterName)
                    .AddAspNetCoreInstrumentation()
                    .AddRuntimeInstrumentation();
                if (otlp)
                {
                    metrics.AddOtlpExporter();
                }

                if (prometheus)
                {
                    metrics.AddPrometheusExporter();
                }
            })
            .WithTracing(tracing =>
            {
                tracing.AddSource(ServiceTelemetry.SourceName)
                    .AddAspNetCoreInstrumentation(o =>
                    {
                        // Probes and scrapes every few seconds would drown the evaluations.
                        o.Filter = http => !http.Request.Path.StartsWithSegments("/health", StringComparison.Ordinal)
                            && !http.Request.Path.StartsWithSegments(PrometheusPath, StringComparison.Ordinal);
                        // Query strings can hold asset tags; the route is enough.
                        o.EnrichWithHttpRequest = (activity, _) => activity.SetTag("url.query", null);
                    });
                if (otlp)
                {
                    tracing.AddOtlpExporter();
                }
            });
        return builder;
    }

    public static WebApplication MapDischargeGuardTelemetry(this WebApplication app)
    {
        if (app.Configuration.GetValue<bool>(PrometheusKey))
        {
            app.MapPrometheusScrapingEndpoint(PrometheusPath).RequireAuthorization(Policies.Admin);
        }

        return app;
    }
}
