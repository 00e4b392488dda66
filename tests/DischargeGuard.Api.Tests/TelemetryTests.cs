using System.Collections.Concurrent;
using System.Diagnostics;
using System.Net;
using System.Text;
using System.Text.Json.Nodes;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using DischargeGuard.Rules.Provider;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Http;
using Microsoft.AspNetCore.TestHost;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Diagnostics.Metrics.Testing;
using Serilog.Core;
using Serilog.Events;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// What operators see: the service's instruments (read from this host's own meters), the log events it writes (captured
/// from its Serilog pipeline), and the OTLP and Prometheus exporters against real loopback endpoints.
/// </summary>
public sealed class TelemetryTests
{
    [Fact]
    public async Task Metrics_CountEvaluationsByVerdict_RecordMarginsCommitsAndReloads()
    {
        await using var factory = new TelemetryServiceFactory();
        var meters = factory.Services.GetRequiredService<System.Diagnostics.Metrics.IMeterFactory>();
        using var evaluations = new MetricCollector<long>(meters, ServiceTelemetry.MeterName, ServiceTelemetry.Evaluations);
        using var refusals = new MetricCollector<long>(meters, ServiceTelemetry.MeterName, ServiceTelemetry.Refusals);
        using var margins = new MetricCollector<double>(meters, ServiceTelemetry.MeterName, ServiceTelemetry.GoverningMargin);
        using var reloads = new MetricCollector<long>(meters, ServiceTelemetry.MeterName, ServiceTelemetry.RuleReloads);
        using var active = new MetricCollector<int>(meters, ServiceTelemetry.MeterName, ServiceTelemetry.RulesActive);
        using var commitSeconds = new MetricCollector<double>(meters, AuditMetrics.MeterName, AuditMetrics.CommitDuration);
        using var commitSizes = new MetricCollector<int>(meters, AuditMetrics.MeterName, AuditMetrics.CommitBatchSize);
        using var technician = factory.ClientWith(factory.KeyFor(Roles.Technician));
        using var planner = factory.ClientWith(factory.KeyFor(Roles.Planner));

        // The passing air stage (100 → 230 kPa(a)) and the same stage pushed to 400 kPa(a): two verdicts, two margins.
        var verdicts = new List<string>();
        var expectedMargins = new List<double>();
        foreach (var discharge in new[] { "230 kPa(a)", "400 kPa(a)" })
        {
            var request = Requests.PassingStage();
            request.Stage(0)["discharge"]!["pressure"] = discharge;
            using var response = await technician.PostAsync(Url("/v1/evaluations"), JsonBody(request));
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            var body = await Json.ReadAsync(response);
            verdicts.Add(body.At("verdict").GetString()!);
            var governing = body.At("stages").EnumerateArray().Single().At("governing");
            Assert.Equal("K", governing.At("margin.unit").GetString());
            expectedMargins.Add(governing.At("margin.value").GetDouble());
        }

        Assert.Equal(2, verdicts.Distinct().Count());

        // A batch of three: two good items and one the checks refuse (a negative absolute pressure, 422), each counted on its own.
        var batch = new JsonObject
        {
            ["evaluations"] = new JsonArray(Requests.Minimal(), Requests.Minimal(dischargePressure: "12 bara"), Requests.Minimal(suctionPressure: "-1 bara")),
        };
        string refusedCode;
        using (var response = await planner.PostAsync(Url("/v1/evaluations/batch"), JsonBody(batch)))
        {
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            var results = (await Json.ReadAsync(response)).At("results").EnumerateArray().ToArray();
            Assert.Equal([200, 200, 422], results.Select(r => r.At("status").GetInt32()));
            refusedCode = results[2].At("problem.code").GetString()!;
        }

        var single = evaluations.GetMeasurementSnapshot().Where(m => (string?)m.Tags["dischargeguard.endpoint"] == "single").ToList();
        Assert.Equal(verdicts.Order(StringComparer.Ordinal), single.Select(m => (string)m.Tags["dischargeguard.verdict"]!).Order(StringComparer.Ordinal));
        Assert.All(single, m => Assert.Equal(1, m.Value));
        Assert.Equal(2, evaluations.GetMeasurementSnapshot().Count(m => (string?)m.Tags["dischargeguard.endpoint"] == "batch"));
        var refused = Assert.Single(refusals.GetMeasurementSnapshot());
        Assert.Equal(refusedCode, refused.Tags["dischargeguard.problem"]);
        Assert.Equal("batch", refused.Tags["dischargeguard.endpoint"]);

        // The single posts' margins are the ones answered (the answer rounds to 0.001 K; the metric is the record's SI
        // summary, unrounded), in kelvin, each tagged with the quantity that governed (the
        // minimal batch items name no compressor type, so no limit governs them and they add no margin).
        var recorded = margins.GetMeasurementSnapshot();
        Assert.Equal(2, recorded.Count);
        foreach (var margin in expectedMargins)
        {
            Assert.Contains(recorded, m => Math.Abs(m.Value - margin) <= 0.0005 + 1e-9 && m.Tags.ContainsKey("dischargeguard.quantity"));
        }

        // Every committed record is in a measured commit, on the SQLite store, and each commit took some time.
        var sizes = commitSizes.GetMeasurementSnapshot();
        Assert.Equal(4, sizes.Sum(m => m.Value));
        Assert.All(sizes, m => Assert.Equal("sqlite", m.Tags["dischargeguard.audit.store"]));
        Assert.All(sizes, m => Assert.Equal("committed", m.Tags["dischargeguard.audit.outcome"]));
        Assert.Equal(sizes.Count, commitSeconds.GetMeasurementSnapshot().Count);
        Assert.All(commitSeconds.GetMeasurementSnapshot(), m => Assert.InRange(m.Value, 1e-7, 30));

        // Reloads: a good one, then a broken site file refused; the gauge names the digest in force and the degradation.
        var provider = factory.Services.GetRequiredService<IRuleSetProvider>();
        Assert.True(provider.Reload().Succeeded);
        await File.WriteAllTextAsync(Path.Combine(factory.RulesDirectory, "sites", "kestrel-ridge.yaml"), "layer:\n  id: kestrel-ridge\n  kind: site\nrules: [");
        Assert.False(provider.Reload().Succeeded);
        Assert.Equal(["loaded", "refused"], reloads.GetMeasurementSnapshot().Select(m => (string)m.Tags["dischargeguard.outcome"]!));
        active.RecordObservableInstruments();
        var gauge = active.LastMeasurement!;
        Assert.Equal(provider.Current.Digest, gauge.Tags["dischargeguard.rules.digest"]);
        Assert.Equal(true, gauge.Tags["dischargeguard.rules.degraded"]);
    }

    [Fact]
    public async Task Logs_CarryEachEvaluationIdBesideTheCallersTraceId_ForSingleAndBatch()
    {
        await using var factory = new TelemetryServiceFactory();
        using var technician = factory.ClientWith(factory.KeyFor(Roles.Technician));
        using var planner = factory.ClientWith(factory.KeyFor(Roles.Planner));
        var singleTrace = ActivityTraceId.CreateRandom();
        var batchTrace = ActivityTraceId.CreateRandom();

        using var single = new HttpRequestMessage(HttpMethod.Post, Url("/v1/evaluations")) { Content = JsonBody(Requests.PassingStage()) };
        single.Headers.Add("traceparent", $"00-{singleTrace}-{ActivitySpanId.CreateRandom()}-01");
        using var singleResponse = await technician.SendAsync(single);
        var singleBody = await Json.ReadAsync(singleResponse);
        Assert.Equal(HttpStatusCode.OK, singleResponse.StatusCode);

        using var batch = new HttpRequestMessage(HttpMethod.Post, Url("/v1/evaluations/batch"))
        {
            Content = JsonBody(new JsonObject { ["evaluations"] = new JsonArray(Requests.Minimal(), Requests.Minimal(dischargePressure: "4 bara")) }),
        };
        batch.Headers.Add("traceparent", $"00-{batchTrace}-{ActivitySpanId.CreateRandom()}-01");
        using var batchResponse = await planner.SendAsync(batch);
        var batchIds = (await Json.ReadAsync(batchResponse)).At("results").EnumerateArray().Select(r => r.At("evaluation.id").GetString()!).ToList();

        var events = await factory.Sink.WaitForAsync(e => e.Count(HasEvaluationId) >= 3);
        var singleEvent = Assert.Single(events, e => Scalar(e, "EvaluationId") == singleBody.At("id").GetString());
        Assert.Equal(singleTrace.ToString(), singleEvent.TraceId?.ToString());
        Assert.Equal(LogEventLevel.Information, singleEvent.Level);
        foreach (var id in batchIds)
        {
            var item = Assert.Single(events, e => Scalar(e, "EvaluationId") == id);
            Assert.Equal(batchTrace.ToString(), item.TraceId?.ToString());
        }
    }

    [Fact]
    public async Task Logs_UnderHostileAndFaultyTraffic_HoldNoKeyNoHashNoExceptionAndNoStackTrace()
    {
        await using var factory = new TelemetryServiceFactory();
        var wrongKey = KeyedServiceFactory.NewKey();
        using var wrong = factory.ClientWith(wrongKey);
        using var anonymous = factory.ClientWith(null);
        using var technician = factory.ClientWith(factory.KeyFor(Roles.Technician));
        using var admin = factory.ClientWith(factory.KeyFor(Roles.Admin));

        // Refused keys, a forbidden role, bodies that cannot be read, a refused value, and an evaluation the store refuses.
        Assert.Equal(HttpStatusCode.Unauthorized, (await wrong.PostAsync(Url("/v1/evaluations"), JsonBody(Requests.PassingStage()))).StatusCode);
        Assert.Equal(HttpStatusCode.Unauthorized, (await anonymous.GetAsync(Url("/v1/evaluations"))).StatusCode);
        Assert.Equal(HttpStatusCode.Forbidden, (await technician.PostAsync(Url("/v1/rules/reload"), null)).StatusCode);
        foreach (var body in new[] { "{\"asset\": \"K-101A\", \"stages\": [", "{\"asset\": 12}", "[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[]" })
        {
            using var raw = new ByteArrayContent(Encoding.UTF8.GetBytes(body));
            raw.Headers.ContentType = new("application/json");
            Assert.Equal(HttpStatusCode.BadRequest, (await technician.PostAsync(Url("/v1/evaluations"), raw)).StatusCode);
        }

        using (var utf8 = new ByteArrayContent([0x7B, 0x22, 0xC3, 0x28, 0x22, 0x3A, 0x31, 0x7D]))
        {
            utf8.Headers.ContentType = new("application/json");
            Assert.Equal(HttpStatusCode.BadRequest, (await technician.PostAsync(Url("/v1/evaluations"), utf8)).StatusCode);
        }

        Assert.Equal(HttpStatusCode.BadRequest, (await technician.PostAsync(Url("/v1/evaluations"), JsonBody(Requests.Minimal(dischargePressure: "1e308 bar")))).StatusCode);
        await File.WriteAllTextAsync(Path.Combine(factory.RulesDirectory, "sites", "kestrel-ridge.yaml"), "layer: {id: kestrel-ridge, kind: site}\nrules: [");
        Assert.Equal(HttpStatusCode.UnprocessableEntity, (await admin.PostAsync(Url("/v1/rules/reload"), null)).StatusCode);
        File.Delete(Path.Combine(factory.RulesDirectory, "sites", "kestrel-ridge.yaml"));

        var store = Assert.IsType<DischargeGuard.Audit.Sqlite.SqliteAuditStore>(factory.Services.GetRequiredService<IAuditStore>());
        await store.SetMaxPageCountForTestingAsync(1);
        var full = await technician.PostAsync(Url("/v1/evaluations?curve=true"), JsonBody(Requests.PassingStage()));
        Assert.Equal(HttpStatusCode.ServiceUnavailable, full.StatusCode);
        await store.SetMaxPageCountForTestingAsync(null);

        var events = await factory.Sink.WaitForAsync(e =>
            e.Any(x => x.MessageTemplate.Text.Contains("audit store refused", StringComparison.Ordinal))
            && e.Any(x => x.MessageTemplate.Text.Contains("refused with", StringComparison.Ordinal)));
        var secrets = factory.KeyOf.Values.Append(wrongKey)
            .SelectMany(k => new[] { k, ApiKeyRegistry.HashOf(k) })
            .ToList();
        foreach (var e in events)
        {
            Assert.Null(e.Exception);
            var text = Render(e);
            Assert.DoesNotContain("   at ", text, StringComparison.Ordinal);
            Assert.DoesNotContain("--- End of", text, StringComparison.Ordinal);
            foreach (var secret in secrets)
            {
                Assert.DoesNotContain(secret, text, StringComparison.Ordinal);
            }
        }

        // The faults were logged, with their reasons (just not their stacks).
        Assert.Contains(events, e => e.Level == LogEventLevel.Error && e.Properties.ContainsKey("Reason"));
    }

    [Fact]
    public async Task Otlp_WhenTheEndpointIsSet_ExportsTheInstrumentsAndTheEvaluationSpansToIt()
    {
        await using var collector = await OtlpReceiver.StartAsync();
        await using var factory = new TelemetryServiceFactory(new Dictionary<string, string?>
        {
            [TelemetrySetup.OtlpEndpointKey] = collector.Endpoint.ToString(),
            ["OTEL_EXPORTER_OTLP_PROTOCOL"] = "http/protobuf",
            ["OTEL_METRIC_EXPORT_INTERVAL"] = "300",
            ["OTEL_BSP_SCHEDULE_DELAY"] = "200",
        });

        using var gate = factory.ClientWith(factory.KeyFor(Roles.Gate));
        var trace = ActivityTraceId.CreateRandom();
        using var request = new HttpRequestMessage(HttpMethod.Post, Url("/v1/evaluations")) { Content = JsonBody(Requests.PassingStage()) };
        request.Headers.Add("traceparent", $"00-{trace}-{ActivitySpanId.CreateRandom()}-01");
        using var response = await gate.SendAsync(request);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);

        // OTLP/HTTP bodies are protobuf: names are UTF-8 strings in them, the trace id its 16 raw bytes.
        var traceBytes = Convert.FromHexString(trace.ToString());
        await collector.WaitForAsync("/v1/traces", body => body.AsSpan().IndexOf(traceBytes) >= 0 && Contains(body, "evaluate") && Contains(body, "audit.commit-wait"));
        await collector.WaitForAsync("/v1/metrics", body =>
            Contains(body, ServiceTelemetry.Evaluations) && Contains(body, ServiceTelemetry.GoverningMargin)
            && Contains(body, AuditMetrics.CommitDuration) && Contains(body, "http.server.request.duration"));
    }

    [Fact]
    public async Task Prometheus_WhenEnabled_ServesTheInstrumentsToAnAdminKeyOnly()
    {
        await using var factory = new TelemetryServiceFactory(new Dictionary<string, string?> { [TelemetrySetup.PrometheusKey] = "true" });
        using var planner = factory.ClientWith(factory.KeyFor(Roles.Planner));
        using var admin = factory.ClientWith(factory.KeyFor(Roles.Admin));
        using var gate = factory.ClientWith(factory.KeyFor(Roles.Gate));
        Assert.Equal(HttpStatusCode.OK, (await gate.PostAsync(Url("/v1/evaluations"), JsonBody(Requests.PassingStage()))).StatusCode);

        Assert.Equal(HttpStatusCode.Unauthorized, (await factory.ClientWith(null).GetAsync(Url("/metrics"))).StatusCode);
        Assert.Equal(HttpStatusCode.Unauthorized, (await factory.ClientWith(KeyedServiceFactory.NewKey()).GetAsync(Url("/metrics"))).StatusCode);
        Assert.Equal(HttpStatusCode.Forbidden, (await planner.GetAsync(Url("/metrics"))).StatusCode);
        string text = string.Empty;
        var deadline = DateTime.UtcNow.AddSeconds(30);
        while (DateTime.UtcNow < deadline && !text.Contains("dischargeguard_evaluations", StringComparison.Ordinal))
        {
            using var scrape = await admin.GetAsync(Url("/metrics"));
            Assert.Equal(HttpStatusCode.OK, scrape.StatusCode);
            text = await scrape.Content.ReadAsStringAsync();
            await Task.Delay(100);
        }

        Assert.Contains("dischargeguard_evaluations_total{", text, StringComparison.Ordinal);
        Assert.Contains("dischargeguard_stage_governing_margin_K_bucket{", text, StringComparison.Ordinal);
        Assert.Contains("dischargeguard_audit_commit_duration_seconds_bucket{", text, StringComparison.Ordinal);
    }

    private static Uri Url(string path) => new(path, UriKind.Relative);

    private static StringContent JsonBody(JsonNode body) => new(body.ToJsonString(), Encoding.UTF8, "application/json");

    private static bool Contains(byte[] body, string text) => body.AsSpan().IndexOf(Encoding.UTF8.GetBytes(text)) >= 0;

    private static bool HasEvaluationId(LogEvent e) => e.Properties.ContainsKey("EvaluationId");

    private static string? Scalar(LogEvent e, string name) =>
        e.Properties.TryGetValue(name, out var value) && value is ScalarValue { Value: var v } ? v?.ToString() : null;

    private static string Render(LogEvent e)
    {
        using var writer = new StringWriter();
        e.RenderMessage(writer, System.Globalization.CultureInfo.InvariantCulture);
        foreach (var (name, value) in e.Properties)
        {
            writer.Write($" {name}=");
            value.Render(writer, formatProvider: System.Globalization.CultureInfo.InvariantCulture);
        }

        return writer.ToString();
    }
}

/// <summary>The keyed service at the shipped log levels, every Serilog event also captured in <see cref="Sink"/>.</summary>
internal sealed class TelemetryServiceFactory : KeyedServiceFactory
{
    public TelemetryServiceFactory(IDictionary<string, string?>? extra = null)
        : base(With(extra)) =>
        Set("Serilog:MinimumLevel:Default", "Information");

    public CapturingSink Sink { get; } = new();

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        base.ConfigureWebHost(builder);
        builder.ConfigureServices(services => services.AddSingleton<ILogEventSink>(Sink));
    }

    private static Dictionary<string, string?> With(IDictionary<string, string?>? extra)
    {
        var settings = new Dictionary<string, string?>(extra ?? new Dictionary<string, string?>())
        {
            ["RateLimits:PermitsPerSecond"] = "100000",
            ["RateLimits:Burst"] = "100000",
        };
        return settings;
    }
}

/// <summary>Keeps every event the host logs.</summary>
internal sealed class CapturingSink : ILogEventSink
{
    private readonly ConcurrentQueue<LogEvent> _events = new();

    public void Emit(LogEvent logEvent) => _events.Enqueue(logEvent);

    /// <summary>Waits (the sinks are asynchronous) until the events so far satisfy <paramref name="done"/>; fails after 30 s.</summary>
    public async Task<IReadOnlyList<LogEvent>> WaitForAsync(Func<IReadOnlyList<LogEvent>, bool> done)
    {
        var deadline = DateTime.UtcNow.AddSeconds(30);
        while (true)
        {
            var events = _events.ToArray();
            if (done(events))
            {
                return events;
            }

            if (DateTime.UtcNow > deadline)
            {
                Assert.Fail($"the expected log events did not arrive; {events.Length} events: "
                    + string.Join(" | ", events.Select(e => e.MessageTemplate.Text)));
            }

            await Task.Delay(50);
        }
    }
}

/// <summary>A loopback OTLP/HTTP receiver: keeps every body posted to /v1/traces and /v1/metrics.</summary>
internal sealed class OtlpReceiver : IAsyncDisposable
{
    private readonly WebApplication _app;
    private readonly ConcurrentQueue<(string Path, byte[] Body)> _posts;

    private OtlpReceiver(WebApplication app, ConcurrentQueue<(string Path, byte[] Body)> posts)
    {
        _app = app;
        _posts = posts;
        Endpoint = new Uri(app.Urls.Single());
    }

    public Uri Endpoint { get; }

    public static async Task<OtlpReceiver> StartAsync()
    {
        var builder = WebApplication.CreateSlimBuilder();
        builder.WebHost.UseKestrel().UseUrls("http://127.0.0.1:0");
        var app = builder.Build();
        var posts = new ConcurrentQueue<(string Path, byte[] Body)>();
        app.MapPost("/v1/{signal}", async (string signal, HttpContext http) =>
        {
            using var copy = new MemoryStream();
            await http.Request.Body.CopyToAsync(copy);
            posts.Enqueue(("/v1/" + signal, copy.ToArray()));
            return Results.Ok();
        });
        await app.StartAsync();
        return new OtlpReceiver(app, posts);
    }

    public async Task WaitForAsync(string path, Func<byte[], bool> done)
    {
        var deadline = DateTime.UtcNow.AddSeconds(45);
        while (DateTime.UtcNow < deadline)
        {
            if (_posts.Any(p => p.Path == path && done(p.Body)))
            {
                return;
            }

            await Task.Delay(100);
        }

        Assert.Fail($"no OTLP post to {path} held what was expected; posts: {string.Join(", ", _posts.Select(p => $"{p.Path} ({p.Body.Length} B)"))}");
    }

    public async ValueTask DisposeAsync()
    {
        await _app.StopAsync();
        await _app.DisposeAsync();
    }
}
