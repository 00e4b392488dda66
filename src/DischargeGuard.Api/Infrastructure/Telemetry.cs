using System.Diagnostics;
using System.Diagnostics.Metrics;
using DischargeGuard.Api.Endpoints;
using DischargeGuard.Audit;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules.Provider;
using Microsoft.AspNetCore.Mvc;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// The service's own instruments (meter <see cref="MeterName"/>) and spans (source <see cref="SourceName"/>). Every
/// number carries its unit in the instrument; tags are low-cardinality (no ids, assets or callers: those are in the
/// audit store and the logs).
/// </summary>
public sealed class ServiceTelemetry
{
    /// <summary>The meter's name, for an exporter's allow-list.</summary>
    public const string MeterName = "DischargeGuard";

    /// <summary>The activity source's name, for a tracer's allow-list.</summary>
    public const string SourceName = "DischargeGuard";

    /// <summary>Evaluations answered 200 (each recorded first), by verdict and endpoint.</summary>
    public const string Evaluations = "dischargeguard.evaluations";

    /// <summary>Evaluations refused after the request was read (400 or 422 from the checks, 503 from the store), by code and endpoint.</summary>
    public const string Refusals = "dischargeguard.evaluations.refused";

    /// <summary>Each stage's margin to its governing limit, in kelvin (temperature limits only).</summary>
    public const string GoverningMargin = "dischargeguard.stage.governing_margin";

    /// <summary>Rule reloads (file watch or request), by outcome.</summary>
    public const string RuleReloads = "dischargeguard.rules.reloads";

    /// <summary>1 for the rule set in force (tagged with its digest), and whether the last reload failed.</summary>
    public const string RulesActive = "dischargeguard.rules.active";

    /// <summary>The spans: one per evaluation, one for the wait on the audit commit.</summary>
    internal static readonly ActivitySource Source = new(SourceName, typeof(ServiceTelemetry).Assembly.GetName().Version?.ToString());

    // Kelvin either side of a limit: the band where a reviewer's attention belongs is a few tens of kelvin wide.
    private static readonly double[] MarginBuckets = [-50, -20, -10, -5, 0, 5, 10, 15, 20, 30, 50, 75, 100, 150];

    private readonly Counter<long> _evaluations;
    private readonly Counter<long> _refusals;
    private readonly Histogram<double> _margin;
    private readonly Counter<long> _reloads;

    /// <summary>Creates the instruments on the host's meter factory.</summary>
    /// <param name="meters">The host's meter factory.</param>
    /// <param name="rules">The rule provider, read by the active-rules gauge.</param>
    public ServiceTelemetry(IMeterFactory meters, IRuleSetProvider rules)
    {
        ArgumentNullException.ThrowIfNull(meters);
        ArgumentNullException.ThrowIfNull(rules);
        var meter = meters.Create(MeterName);
        _evaluations = meter.CreateCounter<long>(Evaluations, "{evaluation}", "Evaluations answered 200 after their audit record was committed.");
        _refusals = meter.CreateCounter<long>(Refusals, "{evaluation}", "Evaluations refused with a problem after their request was read; nothing was recorded for them.");
        _margin = meter.CreateHistogram(
            GoverningMargin,
            unit: "K",
            description: "Margin of each evaluated stage to its governing temperature limit (limit minus value; negative is beyond it).",
            advice: new InstrumentAdvice<double> { HistogramBucketBoundaries = MarginBuckets });
        _reloads = meter.CreateCounter<long>(RuleReloads, "{reload}", "Rule reload attempts; a failed one leaves the last good set in force.");
        meter.CreateObservableGauge(
            RulesActive,
            () => new Measurement<int>(1, new("dischargeguard.rules.digest", rules.Current.Digest), new("dischargeguard.rules.degraded", rules.LastError is not null)),
            "{rule_set}",
            "The rule set in force, tagged with its digest and whether the last reload failed.");
    }

    /// <summary>Counts one evaluation's outcome as it is answered.</summary>
    /// <param name="result">The evaluation's result; a 200 must have been committed.</param>
    /// <param name="endpoint">single, batch or replay.</param>
    internal void Answered(RunResult result, string endpoint)
    {
        if (result.Response is { } response && result.Record is { } record)
        {
            Evaluated(response, record, endpoint);
        }
        else
        {
            Refused(result.Problem, endpoint);
        }
    }

    /// <summary>Counts a committed evaluation and records each stage's governing margin.</summary>
    internal void Evaluated(EvaluationResponse response, Audit.AuditRecord record, string endpoint)
    {
        _evaluations.Add(1, new("dischargeguard.verdict", response.Verdict), new("dischargeguard.endpoint", endpoint));

        // Margins from the record's SI summary (kelvin whatever units the answer was written in); the quantity's name is
        // unit-free and read from the answer.
        foreach (var stage in record.Stages)
        {
            if (stage.MarginKelvin is { } margin)
            {
                var quantity = stage.Index < response.Stages.Count ? response.Stages[stage.Index].Governing?.Quantity : null;
                _margin.Record(margin, new("dischargeguard.quantity", quantity ?? "unknown"), new("dischargeguard.verdict", stage.Verdict));
            }
        }
    }

    /// <summary>Counts a refused evaluation by its problem code.</summary>
    internal void Refused(ProblemDetails? problem, string endpoint) =>
        _refusals.Add(1, new("dischargeguard.problem", CodeOf(problem)), new("dischargeguard.endpoint", endpoint));

    /// <summary>Counts a refusal whose code is known without a problem object.</summary>
    internal void Refused(string code, string endpoint, int count = 1) =>
        _refusals.Add(count, new("dischargeguard.problem", code), new("dischargeguard.endpoint", endpoint));

    /// <summary>Counts a rule reload attempt.</summary>
    internal void Reloaded(ReloadResult result) =>
        _reloads.Add(1, new KeyValuePair<string, object?>("dischargeguard.outcome", result.Succeeded ? "loaded" : "refused"));

    private static string CodeOf(ProblemDetails? problem) =>
        problem?.Extensions.TryGetValue("code", out var code) == true && code is string s ? s : "unknown";
}

/// <summary>Logs and counts every rule reload, whether the file watcher or a request started it.</summary>
internal sealed partial class RuleReloadReporter(IRuleSetProvider rules, ServiceTelemetry telemetry, ILogger<RuleReloadReporter> logger) : IHostedService
{
    public Task StartAsync(CancellationToken cancellationToken)
    {
        rules.Reloaded += OnReloaded;
        return Task.CompletedTask;
    }

    public Task StopAsync(CancellationToken cancellationToken)
    {
        rules.Reloaded -= OnReloaded;
        return Task.CompletedTask;
    }

    private void OnReloaded(object? sender, ReloadResult result)
    {
        telemetry.Reloaded(result);
        if (result.Succeeded)
        {
            LogLoaded(logger, result.Digest);
        }
        else
        {
            // The first errors only: each names file, line and key, never file contents beyond the offending key.
            LogRefused(logger, result.Errors.Count, result.Digest, string.Join("; ", result.Errors.Take(3).Select(e => e.ToString())));
        }
    }

    [LoggerMessage(EventId = 40, Level = LogLevel.Information, Message = "Rule set reloaded: digest {RuleDigest} in force")]
    private static partial void LogLoaded(ILogger logger, string ruleDigest);

    [LoggerMessage(EventId = 41, Level = LogLevel.Warning, Message = "Rule reload refused with {ErrorCount} errors; {RuleDigest} stays in force: {Errors}")]
    private static partial void LogRefused(ILogger logger, int errorCount, string ruleDigest, string errors);
}

