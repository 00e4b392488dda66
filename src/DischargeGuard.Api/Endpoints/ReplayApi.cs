using System.Text.Json;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules.Provider;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.Extensions.Options;

namespace DischargeGuard.Api.Endpoints;

/// <summary>
/// <c>POST /v1/evaluations/{id}/replay</c>: the stored request evaluated again against the rules active now, recorded as
/// a new evaluation that names the one it replays, with what changed: verdict, rule digest, per stage the verdict, the
/// governing rule and its margin, the rule layers added, removed or changed, and the layer whose change moved the verdict.
/// </summary>
internal static partial class ReplayApi
{
    public static RouteHandlerBuilder MapReplay(this RouteGroupBuilder group) =>
        group.MapPost("/{id:guid}/replay", ReplayAsync)
            .WithName("ReplayEvaluation")
            .WithSummary("Evaluate a recorded request again against the rules active now; the replay is recorded and compared with the original.")
            .WithDescription("The replay's own record has `replayOf` set to the original id and stores the new evaluation as its response. "
                + "History for trend rules is read as it stood before the original evaluation. A stored request that the rules active now refuse answers 400 or 422 and records nothing.")
            .Produces<ReplayResult>(StatusCodes.Status200OK)
            .ProducesProblem(StatusCodes.Status404NotFound)
            .ProducesProblem(StatusCodes.Status413PayloadTooLarge)
            .ProducesProblem(StatusCodes.Status422UnprocessableEntity)
            .ProducesProblem(StatusCodes.Status503ServiceUnavailable)
            .RequireRoles(Policies.Plan);

    internal static async Task<Results<Utf8JsonResult<ReplayResult>, ValidationProblem, ProblemHttpResult>> ReplayAsync(
        Guid id,
        HttpContext http,
        IRuleSetProvider rules,
        EvaluationRunner runner,
        IAuditStore audit,
        IOptions<ServiceOptions> options,
        HistoryReader histories,
        ServiceTelemetry telemetry,
        ApiKeyRegistry keys,
        ILoggerFactory loggers)
    {
        var logger = loggers.CreateLogger("DischargeGuard.Evaluations.Replay");
        AuditRecord? original;
        AssetHistory? history = null;
        try
        {
            original = await audit.GetAsync(id, http.RequestAborted).ConfigureAwait(false);
            var scope = keys.ScopeOf(http.User);
            if (original is null || !scope.MayRead(original))
            {
                return Problems.AsResult(Problems.Missing($"No evaluation with id {id} is recorded."));
            }

            var (request, refusal) = runner.Read(original.Request);
            if (refusal is not null)
            {
                return ProblemOf(refusal, "The stored request is not accepted by the contract of this version; it cannot be replayed.");
            }

            history = await histories.LoadAsync(request!, original.EvaluatedAt, scope, http.RequestAborted).ConfigureAwait(false);
            var result = runner.Run(request!, original.Request, rules.Current, EvaluationsApi.CallerOf(http), curve: false, history, replayOf: original.Id, scope);
            if (result.Record is not { } record)
            {
                telemetry.Answered(result, "replay");
                EvaluationsApi.SetRetryAfter(http, result.Problem);
                return result.Status is StatusCodes.Status400BadRequest or StatusCodes.Status422UnprocessableEntity
                    ? ProblemOf(result, "The stored request is refused by the rules or data active now; nothing was recorded.")
                    : TypedResults.Problem(result.Problem!);
            }

            try
            {
                using (ServiceTelemetry.Source.StartActivity("audit.commit-wait"))
                {
                    await runner.AppendAsync(audit, result, http.RequestAborted).ConfigureAwait(false);
                }
            }
            catch (AuditStoreUnavailableException)
            {
                runner.Unreserve(record);
                throw;
            }

            telemetry.Answered(result, "replay");
            LogReplayed(logger, record.Id, original.Id, original.Verdict, record.Verdict, original.RuleDigest, record.RuleDigest);
            return new Utf8JsonResult<ReplayResult>(Write(original, record));
        }
        catch (AuditStoreUnavailableException ex)
        {
            LogReplayFailed(logger, id, ex.Message);
            telemetry.Refused(Problems.AuditUnavailable, "replay");
            return EvaluationsApi.Unavailable(http, options);
        }
    }

    private static ProblemHttpResult ProblemOf(RunResult refused, string detail)
    {
        var problem = refused.Problem!;
        problem.Detail = detail;
        return TypedResults.Problem(problem);
    }

    // {"original": {…}, "replay": <the new evaluation, as recorded>, "changes": {…}}
    private static byte[] Write(AuditRecord original, AuditRecord replay)
    {
        using var before = JsonDocument.Parse(original.Response);
        using var after = JsonDocument.Parse(replay.Response);
        using var buffer = new MemoryStream(replay.Response.Length + 1024);
        using (var w = new Utf8JsonWriter(buffer, new JsonWriterOptions { Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping }))
        {
            w.WriteStartObject();
            w.WriteStartObject("original");
            w.WriteString("id", original.Id);
            w.WriteString("evaluatedAt", original.EvaluatedAt);
            w.WriteString("verdict", original.Verdict);
            w.WriteString("ruleDigest", original.RuleDigest);
            w.WriteString("engineVersion", original.EngineVersion);
            w.WriteEndObject();
            w.WritePropertyName("replay");
            w.WriteRawValue(replay.Response, skipInputValidation: true);

            w.WriteStartObject("changes");
            var changed = false;
            changed |= WriteChange(w, "verdict", original.Verdict, replay.Verdict);
            changed |= WriteChange(w, "ruleDigest", original.RuleDigest, replay.RuleDigest);
            changed |= WriteChange(w, "engineVersion", original.EngineVersion, replay.EngineVersion);
            w.WriteStartArray("stages");
            var stagesBefore = Stages(before.RootElement);
            var stagesAfter = Stages(after.RootElement);
            for (var i = 0; i < Math.Max(stagesBefore.Count, stagesAfter.Count); i++)
            {
                var b = i < stagesBefore.Count ? stagesBefore[i] : default;
                var a = i < stagesAfter.Count ? stagesAfter[i] : default;
                w.WriteStartObject();
                w.WriteNumber("index", i);
                var stageChanged = WriteChange(w, "verdict", Text(b, "verdict"), Text(a, "verdict"));
                stageChanged |= WriteChange(w, "governingRule", Text(Member(b, "governing"), "ruleId"), Text(Member(a, "governing"), "ruleId"));
                stageChanged |= WriteMargin(w, Member(Member(b, "governing"), "margin"), Member(Member(a, "governing"), "margin"));
                w.WriteBoolean("changed", stageChanged);
                w.WriteEndObject();
                changed |= stageChanged;
            }

            w.WriteEndArray();
            var layers = LayerChanges(before.RootElement, after.RootElement);
            WriteLayerChanges(w, layers);
            WriteVerdictCause(w, original, replay, layers, stagesBefore, stagesAfter);
            w.WriteBoolean("changed", changed || layers.Count > 0);
            w.WriteEndObject();
            w.WriteEndObject();
        }

        return buffer.ToArray();
    }

    private sealed record LayerChange(string Name, string Change, string? From, string? To);

    // The layers of the two answers compared by name: a layer added, removed, or with another digest. Answers recorded
    // before the layer list existed have none, and every layer then reads as added.
    private static List<LayerChange> LayerChanges(JsonElement before, JsonElement after)
    {
        static Dictionary<string, string?> Layers(JsonElement root) =>
            root.TryGetProperty("ruleSet", out var rs) && rs.TryGetProperty("layers", out var ls) && ls.ValueKind == JsonValueKind.Array
                ? ls.EnumerateArray().Where(l => Text(l, "name") is not null).ToDictionary(l => Text(l, "name")!, l => Text(l, "digest"), StringComparer.Ordinal)
                : new Dictionary<string, string?>(StringComparer.Ordinal);
        var from = Layers(before);
        var to = Layers(after);
        var changes = new List<LayerChange>();
        foreach (var (name, digest) in from)
        {
            if (!to.TryGetValue(name, out var now))
            {
                changes.Add(new LayerChange(name, "removed", digest, null));
            }
            else if (!string.Equals(digest, now, StringComparison.Ordinal))
            {
                changes.Add(new LayerChange(name, "changed", digest, now));
            }
        }

        changes.AddRange(to.Where(kv => !from.ContainsKey(kv.Key)).Select(kv => new LayerChange(kv.Key, "added", null, kv.Value)));
        return changes;
    }

    private static void WriteLayerChanges(Utf8JsonWriter w, List<LayerChange> layers)
    {
        w.WriteStartArray("layers");
        foreach (var l in layers)
        {
            w.WriteStartObject();
            w.WriteString("name", l.Name);
            w.WriteString("change", l.Change);
            WriteNullable(w, "from", l.From);
            WriteNullable(w, "to", l.To);
            w.WriteEndObject();
        }

        w.WriteEndArray();
    }

    // Which changed layer moved the verdict: among the layers added, removed or changed, the ones named by a finding whose
    // severity moved (the layer that set its limit before or after). When no finding names one, every changed layer is
    // named: the change is in one of them, and the answer says it could not tell which.
    private static void WriteVerdictCause(Utf8JsonWriter w, AuditRecord original, AuditRecord replay, List<LayerChange> layers, List<JsonElement> stagesBefore, List<JsonElement> stagesAfter)
    {
        var moved = !string.Equals(original.Verdict, replay.Verdict, StringComparison.Ordinal)
            || Enumerable.Range(0, Math.Max(stagesBefore.Count, stagesAfter.Count)).Any(i =>
                !string.Equals(Text(i < stagesBefore.Count ? stagesBefore[i] : default, "verdict"), Text(i < stagesAfter.Count ? stagesAfter[i] : default, "verdict"), StringComparison.Ordinal));
        if (!moved)
        {
            w.WriteNull("verdictMovedBy");
            return;
        }

        var changedNames = layers.Select(l => l.Name).ToHashSet(StringComparer.Ordinal);
        var named = new SortedSet<string>(StringComparer.Ordinal);
        for (var i = 0; i < Math.Max(stagesBefore.Count, stagesAfter.Count); i++)
        {
            var b = Findings(i < stagesBefore.Count ? stagesBefore[i] : default);
            var a = Findings(i < stagesAfter.Count ? stagesAfter[i] : default);
            foreach (var rule in b.Keys.Union(a.Keys, StringComparer.Ordinal))
            {
                b.TryGetValue(rule, out var fb);
                a.TryGetValue(rule, out var fa);
                if (!string.Equals(fb.Severity, fa.Severity, StringComparison.Ordinal))
                {
                    foreach (var layer in new[] { fb.Layer, fa.Layer }.Where(l => l is not null && changedNames.Contains(l)))
                    {
                        named.Add(layer!);
                    }
                }
            }
        }

        var names = named.Count > 0 ? named.ToList() : layers.Select(l => l.Name).ToList();
        var verdict = $"The verdict moved from {original.Verdict} to {replay.Verdict}";
        string message;
        if (layers.Count == 0)
        {
            message = string.Equals(original.EngineVersion, replay.EngineVersion, StringComparison.Ordinal)
                ? verdict + "; no rule layer changed (the stored request's history or data did)."
                : verdict + $"; no rule layer changed, the engine did ({original.EngineVersion} → {replay.EngineVersion}).";
        }
        else
        {
            var described = string.Join(", ", layers.Where(l => names.Contains(l.Name)).Select(l => $"{l.Name} ({l.Change})"));
            message = named.Count > 0
                ? verdict + $" because of the change to {described}."
                : verdict + $"; no finding names the changed layer, so the change is in one of: {described}.";
        }

        w.WriteStartObject("verdictMovedBy");
        w.WriteStartArray("layers");
        foreach (var n in layers.Count == 0 ? [] : names)
        {
            w.WriteStringValue(n);
        }

        w.WriteEndArray();
        w.WriteString("message", message);
        w.WriteEndObject();
    }

    private static Dictionary<string, (string? Severity, string? Layer)> Findings(JsonElement stage)
    {
        var result = new Dictionary<string, (string?, string?)>(StringComparer.Ordinal);
        if (stage.ValueKind == JsonValueKind.Object && stage.TryGetProperty("findings", out var fs) && fs.ValueKind == JsonValueKind.Array)
        {
            foreach (var f in fs.EnumerateArray())
            {
                if (Text(f, "ruleId") is { } id)
                {
                    // The compact answer names a finding's layer only when it is not the default one.
                    result[id] = (Text(f, "severity"), Text(f, "layer") ?? "default");
                }
            }
        }

        return result;
    }

    private static bool WriteChange(Utf8JsonWriter w, string name, string? from, string? to)
    {
        w.WriteStartObject(name);
        WriteNullable(w, "from", from);
        WriteNullable(w, "to", to);
        var changed = !string.Equals(from, to, StringComparison.Ordinal);
        w.WriteBoolean("changed", changed);
        w.WriteEndObject();
        return changed;
    }

    // Margins in the answer's units (both answers use the stored request's units); the change is to − from.
    private static bool WriteMargin(Utf8JsonWriter w, JsonElement from, JsonElement to)
    {
        w.WriteStartObject("governingMargin");
        WriteQuantity(w, "from", from);
        WriteQuantity(w, "to", to);
        var changed = from.ValueKind != to.ValueKind;
        if (from.ValueKind == JsonValueKind.Object && to.ValueKind == JsonValueKind.Object
            && from.GetProperty("value").TryGetDouble(out var f) && to.GetProperty("value").TryGetDouble(out var t)
            && Text(from, "unit") == Text(to, "unit"))
        {
            w.WriteStartObject("change");
            w.WriteNumber("value", Math.Round(t - f, 3));
            w.WriteString("unit", Text(to, "unit"));
            w.WriteEndObject();
            changed = Math.Round(t - f, 3) != 0;
        }
        else if (from.ValueKind == JsonValueKind.Object || to.ValueKind == JsonValueKind.Object)
        {
            changed = true;
        }

        w.WriteBoolean("changed", changed);
        w.WriteEndObject();
        return changed;
    }

    private static void WriteQuantity(Utf8JsonWriter w, string name, JsonElement q)
    {
        if (q.ValueKind == JsonValueKind.Object)
        {
            w.WritePropertyName(name);
            q.WriteTo(w);
        }
        else
        {
            w.WriteNull(name);
        }
    }

    private static void WriteNullable(Utf8JsonWriter w, string name, string? value)
    {
        if (value is null)
        {
            w.WriteNull(name);
        }
        else
        {
            w.WriteString(name, value);
        }
    }

    private static List<JsonElement> Stages(JsonElement root) =>
        root.TryGetProperty("stages", out var s) && s.ValueKind == JsonValueKind.Array ? [.. s.EnumerateArray()] : [];

    private static JsonElement Member(JsonElement e, string name) =>
        e.ValueKind == JsonValueKind.Object && e.TryGetProperty(name, out var v) ? v : default;

    private static string? Text(JsonElement e, string name) =>
        e.ValueKind == JsonValueKind.Object && e.TryGetProperty(name, out var v) && v.ValueKind == JsonValueKind.String ? v.GetString() : null;

    [LoggerMessage(EventId = 30, Level = LogLevel.Information,
        Message = "Replay {EvaluationId} of {OriginalId}: verdict {OriginalVerdict} -> {Verdict}, rules {OriginalRuleDigest} -> {RuleDigest}")]
    private static partial void LogReplayed(ILogger logger, Guid evaluationId, Guid originalId, string originalVerdict, string verdict, string originalRuleDigest, string ruleDigest);

    [LoggerMessage(EventId = 31, Level = LogLevel.Error, Message = "Replay of {OriginalId} not answered: the audit store could not be read or written ({Reason})")]
    private static partial void LogReplayFailed(ILogger logger, Guid originalId, string reason);
}

/// <summary>The answer of <c>POST /v1/evaluations/{id}/replay</c>.</summary>
/// <param name="Original">The replayed record.</param>
/// <param name="Replay">The new evaluation, byte-identical to its own audit record's response.</param>
/// <param name="Changes">What differs between the two.</param>
public sealed record ReplayResult(ReplayOriginal Original, EvaluationResponse Replay, ReplayChanges Changes);

/// <summary>The replayed record's identity and outcome.</summary>
public sealed record ReplayOriginal(Guid Id, DateTimeOffset EvaluatedAt, string Verdict, string RuleDigest, string EngineVersion);

/// <summary>A value before and after.</summary>
public sealed record ReplayChange(string? From, string? To, bool Changed);

/// <summary>A margin before and after, and to − from when both exist in the same unit.</summary>
public sealed record ReplayMarginChange(QuantityDto? From, QuantityDto? To, QuantityDto? Change, bool Changed);

/// <summary>One stage before and after.</summary>
public sealed record ReplayStageChange(int Index, ReplayChange Verdict, ReplayChange GoverningRule, ReplayMarginChange GoverningMargin, bool Changed);

/// <summary>A rule layer that differs between the original and the replay, compared by name.</summary>
/// <param name="Name">"default", "site:&lt;id&gt;" or "asset:&lt;tag&gt;".</param>
/// <param name="Change">added, removed or changed.</param>
/// <param name="From">The layer's digest in the original (null when added).</param>
/// <param name="To">Its digest now (null when removed).</param>
public sealed record ReplayLayerChange(string Name, string Change, string? From, string? To);

/// <summary>The layer change that moved the verdict.</summary>
/// <param name="Layers">The changed layers named by a finding whose severity moved (all changed layers when none is; empty when no layer changed).</param>
/// <param name="Message">The plain sentence.</param>
public sealed record ReplayVerdictCause(IReadOnlyList<string> Layers, string Message);

/// <summary>Everything that differs.</summary>
/// <param name="Verdict">The verdict before and after.</param>
/// <param name="RuleDigest">The merged rule digest before and after.</param>
/// <param name="EngineVersion">The engine version before and after.</param>
/// <param name="Stages">Per stage.</param>
/// <param name="Layers">The rule layers added, removed or changed (by name and digest).</param>
/// <param name="VerdictMovedBy">When a verdict moved: the layer whose change moved it; null when no verdict moved.</param>
/// <param name="Changed">Whether anything differs.</param>
public sealed record ReplayChanges(ReplayChange Verdict, ReplayChange RuleDigest, ReplayChange EngineVersion, IReadOnlyList<ReplayStageChange> Stages,
    IReadOnlyList<ReplayLayerChange> Layers, ReplayVerdictCause? VerdictMovedBy, bool Changed);
