using DischargeGuard.Api.Endpoints;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Evaluation.Validation;
using DischargeGuard.Rules.Provider;
using FluentValidation;
using Microsoft.Extensions.Options;
using Serilog;
using Serilog.Formatting.Compact;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>The host's composition: services, middleware and endpoints.</summary>
public static class HostingExtensions
{
    /// <summary>The policy of every answer: no inline script or style, nothing from another origin, no framing.</summary>
    public const string ContentSecurityPolicy =
        "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data:; connect-src 'self'; frame-ancestors 'none'; base-uri 'none'; form-action 'self'";

    /// <summary>The same for the Swagger UI pages, whose bundle sets inline styles.</summary>
    public const string SwaggerContentSecurityPolicy =
        "default-src 'self'; script-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data:; connect-src 'self'; frame-ancestors 'none'; base-uri 'none'; form-action 'self'";

    /// <summary>Registers options, logging, rules, the audit store, the pipeline, validators, problem details and OpenAPI.</summary>
    public static WebApplicationBuilder AddDischargeGuard(this WebApplicationBuilder builder)
    {
        ArgumentNullException.ThrowIfNull(builder);
        builder.Services.AddOptions<ServiceOptions>().BindConfiguration(ServiceOptions.SectionName).ValidateDataAnnotations().ValidateOnStart();
        builder.Services.AddOptions<AuditSettings>().BindConfiguration(AuditSettings.SectionName).ValidateDataAnnotations().ValidateOnStart();

        // preserveStaticLogger: each host builds its own logger instead of freezing the static bootstrap logger, which can be
        // frozen only once per process (a second host in the same process, as in the in-process tests, would fail to start).
        builder.Services.AddSerilog(
            (services, logger) => logger
            .ReadFrom.Configuration(builder.Configuration)
            // Sinks registered as services (an operator's extra sink; the tests' capture) join the configured ones.
            .ReadFrom.Services(services)
            .Enrich.FromLogContext()
            // Log events are not the audit trail (that is the store), so they may be written in the background;
            // blockWhenFull keeps them from being dropped under load.
            .WriteTo.Async(a => a.Console(new RenderedCompactJsonFormatter()), blockWhenFull: true)
            .WriteTo.Async(
                a => a.File(
                    new CompactJsonFormatter(),
                    Path.Combine(builder.Environment.ContentRootPath, "data", "logs", "dischargeguard-.log"),
                    rollingInterval: RollingInterval.Day,
                    retainedFileCountLimit: 14),
                blockWhenFull: true),
            preserveStaticLogger: true);

        builder.WebHost.ConfigureKestrel((context, kestrel) =>
            kestrel.Limits.MaxRequestBodySize = context.Configuration.GetValue<long?>($"{ServiceOptions.SectionName}:MaxRequestBodyBytes") ?? 1024 * 1024);

        builder.Services.ConfigureHttpJsonOptions(o => EvaluationJson.Configure(o.SerializerOptions));

        // A body that cannot be bound (malformed JSON, an unknown field, a wrong type, too large) throws, so
        // ProblemExceptionHandler answers with the field's path; by default that happens only in Development, and
        // elsewhere the framework answers a bare 400 with no 'errors'.
        builder.Services.Configure<RouteHandlerOptions>(o => o.ThrowOnBadRequest = true);
        builder.Services.AddSingleton(TimeProvider.System);
        builder.Services.AddSingleton<IRuleSetProvider>(sp =>
        {
            var o = sp.GetRequiredService<IOptions<ServiceOptions>>().Value;
            // A broken rule file throws here, which stops start-up with file, line and reason.
            return FileRuleSetProvider.Open(o.ResolvedRulesDirectory, o.RulesWatch);
        });
        builder.Services.AddSingleton<IAuditStore>(sp =>
        {
            var settings = sp.GetRequiredService<IOptions<AuditSettings>>().Value;
            var replicas = sp.GetRequiredService<IOptions<ServiceOptions>>().Value.Replicas;
            if (replicas > 1 && settings.Provider != "postgresql")
            {
                throw new InvalidOperationException(
                    $"DischargeGuard:Replicas is {replicas}, but Audit:Provider is '{settings.Provider}': several replicas cannot share a SQLite audit file. "
                    + "Set Audit:Provider=postgresql with Audit:ConnectionString, or run one replica.");
            }

            // The one place the backend is chosen (Audit:Provider); a relative SQLite path is under the content root.
            // Opening migrates the schema; it runs once at start-up (the store is resolved eagerly below).
            var sqlitePath = Path.IsPathRooted(settings.SqlitePath) ? settings.SqlitePath : Path.Combine(builder.Environment.ContentRootPath, settings.SqlitePath);
            return AuditStore.OpenAsync(
                new AuditStoreSettings
                {
                    Provider = settings.Provider,
                    SqlitePath = sqlitePath,
                    ConnectionString = settings.ConnectionString,
                    MaxBatchSize = settings.MaxBatchSize,
                    MeterFactory = sp.GetRequiredService<System.Diagnostics.Metrics.IMeterFactory>(),
                },
                CancellationToken.None).GetAwaiter().GetResult();
        });
        builder.Services.AddSingleton<EvaluationPipeline>();
        builder.Services.AddSingleton<DischargeGuard.Evaluation.Service.EvaluationService>();
        builder.Services.AddSingleton<EvaluationRunner>();
        builder.Services.AddSingleton<HistoryReader>();
        builder.Services.AddOptions<QuotaOptions>().BindConfiguration(QuotaOptions.SectionName).ValidateDataAnnotations()
            .Validate(q => q.BytesPerDay.Values.All(v => v >= 0), "Quotas:BytesPerDay values must be 0 or more.").ValidateOnStart();
        builder.Services.AddSingleton<StorageQuota>();
        builder.Services.AddSingleton<StorageGuard>();
        builder.Services.AddSingleton<IValidator<EvaluationRequest>, EvaluationRequestValidator>();
        builder.Services.AddHostedService<StartupWarmup>();

        builder.Services.AddProblemDetails(o => o.CustomizeProblemDetails = c =>
            c.ProblemDetails.Extensions["traceId"] = System.Diagnostics.Activity.Current?.TraceId.ToString() ?? c.HttpContext.TraceIdentifier);
        builder.Services.AddExceptionHandler<ProblemExceptionHandler>();
        builder.Services.AddHealthChecks()
            .AddCheck<RuleSetHealthCheck>("rules")
            .AddCheck<AuditStoreHealthCheck>("audit");
        builder.Services.AddEndpointsApiExplorer();
        builder.Services.AddSwaggerGen(OpenApiSetup.Configure);
        builder.AddDischargeGuardSecurity();
        builder.AddDischargeGuardTelemetry();
        return builder;
    }

    /// <summary>Middleware and endpoints.</summary>
    public static WebApplication UseDischargeGuard(this WebApplication app)
    {
        ArgumentNullException.ThrowIfNull(app);
        // Outermost, so the one event per request carries the status the client received.
        app.UseSerilogRequestLogging(o =>
        {
            o.MessageTemplate = "HTTP {RequestMethod} {RequestPath} responded {StatusCode} in {Elapsed:0.0} ms";
            o.Logger = app.Services.GetRequiredService<Serilog.ILogger>();
        });
        // Security headers on every response (the page and the API alike). Set when the response starts, so answers the
        // exception handler writes after clearing the response carry them too. The CSP allows no inline script or style.
        app.Use((context, next) =>
        {
            context.Response.OnStarting(
                static state =>
                {
                    var http = (HttpContext)state;
                    var headers = http.Response.Headers;

                    // The bundled Swagger UI sets inline styles; only its pages get 'unsafe-inline' for styles (never for scripts).
                    headers.ContentSecurityPolicy = http.Request.Path.StartsWithSegments("/swagger", StringComparison.Ordinal)
                        ? SwaggerContentSecurityPolicy
                        : ContentSecurityPolicy;
                    headers.XContentTypeOptions = "nosniff";
                    headers["Referrer-Policy"] = "no-referrer";
                    return Task.CompletedTask;
                },
                context);
            return next(context);
        });
        app.UseExceptionHandler();
        // A status set without a body (an unknown route, a method or media type the route does not take) gets the
        // catalogue's problem with the service's type and code, never the framework's bare one.
        app.UseStatusCodePages(context =>
        {
            var http = context.HttpContext;
            var problems = http.RequestServices.GetRequiredService<IProblemDetailsService>();
            return problems.WriteAsync(new ProblemDetailsContext { HttpContext = http, ProblemDetails = Problems.ForStatus(http) }).AsTask();
        });
        // Without keys: loopback host names only, and nothing state-changing a web page of another site could send.
        app.UseAnonymousBrowserGuard();
        app.Use((context, next) =>
        {
            // The Kestrel limit does not apply under other servers; a declared length over the limit is refused
            // everywhere, before the body is read. A JSON batch has its own, larger limit (NDJSON is read line by line).
            var service = context.RequestServices.GetRequiredService<IOptions<ServiceOptions>>().Value;
            var post = HttpMethods.IsPost(context.Request.Method);
            var batch = post && context.Request.Path.Equals("/v1/evaluations/batch", StringComparison.Ordinal);
            var limit = batch ? Math.Max(service.MaxBatchBodyBytes, service.MaxRequestBodyBytes) : service.MaxRequestBodyBytes;
            if (context.Request.ContentLength > limit)
            {
                throw new BadHttpRequestException("The request body is too large.", StatusCodes.Status413PayloadTooLarge);
            }

            if (batch)
            {
                var isNdjson = context.Request.ContentType?.StartsWith(BatchApi.Ndjson, StringComparison.OrdinalIgnoreCase) == true;
                if (context.Features.Get<Microsoft.AspNetCore.Http.Features.IHttpMaxRequestBodySizeFeature>() is { IsReadOnly: false } size)
                {
                    // NDJSON streams, so its total is bounded by the item count and each line by MaxRequestBodyBytes.
                    size.MaxRequestBodySize = isNdjson ? null : limit;
                }
            }
            else if (post && context.Request.Path.StartsWithSegments("/v1/evaluations", StringComparison.Ordinal))
            {
                // Evaluations record the request exactly as received, so its body is kept for a second read.
                context.Request.EnableBuffering();
            }

            return next(context);
        });
        // The technicians' page (wwwroot, "/" serves index.html) before authentication: the page holds no data and needs
        // no key; every /v1 call it makes sends one.
        app.UseDefaultFiles();
        app.UseStaticFiles();
        app.UseDischargeGuardSecurity();
        // After authentication, so a caller without a key learns nothing of the parameters; before the endpoint binds them.
        app.UseQueryParameterCheck();
        app.UseSwagger();
        app.UseSwaggerUI(o => o.DocumentTitle = "DischargeGuard API");

        app.MapEvaluations();
        app.MapRules();
        app.MapAdmin();
        app.MapGases();
        app.MapHealth();
        app.MapDischargeGuardTelemetry();
        return app;
    }
}

/// <summary>Resolves the rule provider and the audit store at start-up so a broken rule file or store stops the host before it listens.</summary>
internal sealed partial class StartupWarmup(IRuleSetProvider rules, IAuditStore audit, IOptions<ServiceOptions> options, ILogger<StartupWarmup> logger) : IHostedService
{
    public Task StartAsync(CancellationToken cancellationToken)
    {
        LogStarted(logger, options.Value.ResolvedRulesDirectory, rules.Current.Digest, audit.GetType().Name);
        return Task.CompletedTask;
    }

    public Task StopAsync(CancellationToken cancellationToken) => Task.CompletedTask;

    [LoggerMessage(Level = LogLevel.Information, Message = "Rules from {RulesDirectory} (digest {RuleDigest}); audit store {AuditStore}")]
    private static partial void LogStarted(Microsoft.Extensions.Logging.ILogger logger, string rulesDirectory, string ruleDigest, string auditStore);
}
