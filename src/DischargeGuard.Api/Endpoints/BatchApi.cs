using System.Buffers;
using System.Diagnostics;
using System.IO.Pipelines;
using System.Runtime.CompilerServices;
using System.Text.Json;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;
using DischargeGuard.Rules.Provider;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Mvc;
using Microsoft.Extensions.Options;

namespace DischargeGuard.Api.Endpoints;

/// <summary>
/// <c>POST /v1/evaluations/batch</c>: many evaluations in one request, each read, evaluated, audited and answered as if
/// posted alone (its own id, its own record, its own status), so one bad item never fails the others.
/// </summary>
internal static partial class BatchApi
{
    /// <summary>Most evaluations in one batch.</summary>
    public const int MaxItems = 10_000;

    /// <summary>Newline-delimited JSON: one document per line, in and out.</summary>
    public const string Ndjson = "application/x-ndjson";

    /// <summary>The log category of the one event per stored item (its own, so it can be turned down apart from the batch summary).</summary>
    public const string ItemLogCategory = "DischargeGuard.Evaluations.Batch.Items";

    // The endpoint tag of batch items in metrics.
    private const string Endpoint = "batch";

    // Items evaluated and committed together. The answer streams chunk by chunk, so memory stays bounded by a chunk
    // (not the batch), and every answered item was committed before its line was written.
    private const int ChunkSize = 256;

    public static RouteHandlerBuilder MapBatch(this RouteGroupBuilder group) =>
        group.MapPost("/batch", EvaluateBatchAsync)
            .WithName("CreateEvaluationBatch")
            .WithSummary("Evaluate up to 10 000 requests; each item is evaluated, recorded and answered as if posted alone.")
            .WithDescription("Body {\"evaluations\": [request, …]} as application/json, or one request per line as application/x-ndjson. "
                + "The answer is {\"results\": [{\"index\", \"status\", \"evaluation\" | \"problem\"}]} in the same order, or one such object per line "
                + "when the body was NDJSON or Accept asks for application/x-ndjson. An item's status is 200, 400, 422 or 503 (not recorded; retry it). "
                + "Items are committed in chunks and the answer streams; a 503 for the whole batch means nothing was stored.")
            .Accepts<BatchRequest>("application/json", Ndjson)
            .Produces<BatchResponse>(StatusCodes.Status200OK, "application/json", Ndjson)
            .ProducesValidationProblem()
            .ProducesProblem(StatusCodes.Status413PayloadTooLarge)
            .ProducesProblem(StatusCodes.Status415UnsupportedMediaType)
            .ProducesProblem(StatusCodes.Status503ServiceUnavailable)
            .RequireRoles(Policies.Plan);

    internal static async Task<IResult> EvaluateBatchAsync(
        HttpContext http,
        [FromQuery] bool? curve,
        [FromQuery] string? detail,
        IRuleSetProvider rules,
        EvaluationRunner runner,
        IAuditStore audit,
        IOptions<ServiceOptions> options,
        IOptions<Microsoft.AspNetCore.Http.Json.JsonOptions> json,
        HistoryReader histories,
        ServiceTelemetry telemetry,
        ApiKeyRegistry keys,
        ILoggerFactory loggers)
    {
        var started = Stopwatch.GetTimestamp();
        if (!EvaluationsApi.TryDetail(detail, out var answerDetail, out var detailProblem))
        {
            return detailProblem;
        }

        var logger = loggers.CreateLogger("DischargeGuard.Evaluations.Batch");
        var contentType = http.Request.ContentType ?? string.Empty;
        var ndjsonIn = IsMediaType(contentType, Ndjson);
        if (!ndjsonIn && !IsMediaType(contentType, "application/json"))
        {
            return UnsupportedMediaType(http.Request.ContentType);
        }

        IAsyncEnumerable<BatchItem> items;
        if (ndjsonIn)
        {
            items = ReadLinesAsync(http.Request.BodyReader, options.Value.MaxRequestBodyBytes, http.RequestAborted);
        }
        else
        {
            var body = await ReadBodyAsync(http.Request.Body, options.Value.MaxBatchBodyBytes, http.RequestAborted).ConfigureAwait(false);
            var (slices, error) = SplitItems(body);
            if (error is not null)
            {
                return error;
            }

            items = AsAsync(body, slices!);
        }

        var ndjsonOut = ndjsonIn ? !AcceptsOnly(http, "application/json") : AcceptsOnly(http, Ndjson);
        var context = new BatchContext(http, rules.Current, runner, audit, EvaluationsApi.CallerOf(http), curve == true, json.Value.SerializerOptions, histories, telemetry, loggers.CreateLogger(ItemLogCategory), keys.ScopeOf(http.User), answerDetail);
        var counts = new int[6];
        var timing = new BatchTiming();
        ResultWriter? writer = null;
        try
        {
            // While one chunk's records are being committed, the next chunk is evaluated: the writer's disk time and the
            // evaluation's CPU time overlap. A chunk is written to the answer only once all its appends have completed.
            Chunk? pending = null;
            await foreach (var chunk in ChunksAsync(items, http.RequestAborted).ConfigureAwait(false))
            {
                var computed = ComputeChunk(context, chunk, timing);
                await LoadHistoriesAndRunAsync(context, computed, timing).ConfigureAwait(false);
                if (writer is null)
                {
                    await CompleteAsync(computed, timing).ConfigureAwait(false);

                    // Nothing written yet: when the store refused the whole first chunk, answer 503 for the batch.
                    if (computed.Results.All(r => r.Status == StatusCodes.Status503ServiceUnavailable))
                    {
                        LogBatchUnavailable(logger, chunk.Count);
                        telemetry.Refused(Problems.AuditUnavailable, Endpoint, chunk.Count);
                        return EvaluationsApi.Unavailable(http, options);
                    }

                    writer = new ResultWriter(http.Response, ndjsonOut, context.ProblemOptions);
                    writer.Start();
                    await WriteAsync(context, writer, computed, counts, http.RequestAborted).ConfigureAwait(false);
                    continue;
                }

                if (pending is not null)
                {
                    await CompleteAsync(pending, timing).ConfigureAwait(false);
                    await WriteAsync(context, writer, pending, counts, http.RequestAborted).ConfigureAwait(false);
                }

                pending = computed;
            }

            if (pending is not null)
            {
                await CompleteAsync(pending, timing).ConfigureAwait(false);
                await WriteAsync(context, writer!, pending, counts, http.RequestAborted).ConfigureAwait(false);
            }

            if (writer is null)
            {
                return Problems.Validation(new Dictionary<string, string[]> { [ndjsonIn ? string.Empty : "evaluations"] = ["Give at least one evaluation request."] });
            }

            writer.Finish();
            await writer.FlushAsync(http.RequestAborted).ConfigureAwait(false);
        }
        catch (BatchBodyException e)
        {
            if (writer is null)
            {
                return e.Problem;
            }

            // The body broke off after answers were sent: end the answer where the reading stopped.
            writer.Finish();
            await writer.FlushAsync(http.RequestAborted).ConfigureAwait(false);
        }

        finally
        {
            writer?.Dispose();
        }

        if (logger.IsEnabled(LogLevel.Information))
        {
            var total = counts.Sum();
            var elapsedMs = Stopwatch.GetElapsedTime(started).TotalMilliseconds;
            LogBatch(logger, total, counts[0], counts[1], counts[2], counts[3], counts[4] + counts[5], context.Caller, elapsedMs, timing.EvaluateMs, timing.CommitWaitMs);
        }

        return Results.Empty;
    }

    // ---- Reading ----

    private readonly record struct BatchItem(int Index, ReadOnlyMemory<byte> Json, RunResult? Refusal);

    private sealed class BatchBodyException(IResult problem) : Exception("The batch body could not be read.")
    {
        public IResult Problem { get; } = problem;
    }

    private static async Task<byte[]> ReadBodyAsync(Stream body, long limit, CancellationToken cancellationToken)
    {
        // Kestrel enforces the limit too (set per request for this route); this guard holds under any server.
        using var buffer = new MemoryStream();
        var chunk = ArrayPool<byte>.Shared.Rent(81920);
        try
        {
            int read;
            while ((read = await body.ReadAsync(chunk, cancellationToken).ConfigureAwait(false)) > 0)
            {
                if (buffer.Length + read > limit)
                {
                    throw new BadHttpRequestException("The request body is too large.", StatusCodes.Status413PayloadTooLarge);
                }

                buffer.Write(chunk, 0, read);
            }
        }
        finally
        {
            ArrayPool<byte>.Shared.Return(chunk);
        }

        return buffer.ToArray();
    }

    // The item boundaries of {"evaluations": [ … ]}: each item's bytes are stored as that evaluation's request.
    private static (List<Range>? Items, IResult? Error) SplitItems(byte[] body)
    {
        var items = new List<Range>();
        var reader = new Utf8JsonReader(body, new JsonReaderOptions { MaxDepth = 64 });
        try
        {
            if (!reader.Read() || reader.TokenType != JsonTokenType.StartObject)
            {
                return (null, BodyProblem(string.Empty, "The body is a JSON object {\"evaluations\": [ … ]}."));
            }

            var sawItems = false;
            while (reader.Read() && reader.TokenType == JsonTokenType.PropertyName)
            {
                if (!reader.ValueTextEquals("evaluations"u8))
                {
                    return (null, BodyProblem(reader.GetString() ?? string.Empty, "Unknown field: a batch body has only 'evaluations'."));
                }

                if (sawItems)
                {
                    // Two arrays would both be evaluated (or, read last-wins elsewhere, one silently dropped).
                    return (null, BodyProblem("evaluations", "Duplicate member 'evaluations': give one array. Nothing was evaluated or stored."));
                }

                if (!reader.Read() || reader.TokenType != JsonTokenType.StartArray)
                {
                    return (null, BodyProblem("evaluations", "'evaluations' is an array of evaluation requests."));
                }

                sawItems = true;
                while (reader.Read() && reader.TokenType != JsonTokenType.EndArray)
                {
                    var start = (int)reader.TokenStartIndex;
                    reader.Skip();
                    items.Add(new Range(start, (int)reader.BytesConsumed));
                    if (items.Count > MaxItems)
                    {
                        return (null, TooManyItems());
                    }
                }
            }

            if (!sawItems)
            {
                return (null, BodyProblem("evaluations", "Give 'evaluations', an array of 1 to 10 000 evaluation requests."));
            }

            if (reader.Read())
            {
                return (null, BodyProblem(string.Empty, "Nothing may follow the batch object."));
            }
        }
        catch (JsonException e)
        {
            return (null, BodyProblem(string.Empty, $"The body is not valid JSON (line {e.LineNumber + 1}, byte {e.BytePositionInLine + 1})."));
        }

        return (items, null);
    }

    private static async IAsyncEnumerable<BatchItem> AsAsync(byte[] body, List<Range> slices)
    {
        for (var i = 0; i < slices.Count; i++)
        {
            yield return new BatchItem(i, body.AsMemory(slices[i]), null);
        }

        await Task.CompletedTask.ConfigureAwait(false);
    }

    // One request per line; blank lines are skipped. A line that is not JSON is that item's 400, not the batch's.
    private static async IAsyncEnumerable<BatchItem> ReadLinesAsync(PipeReader reader, long maxLineBytes, [EnumeratorCancellation] CancellationToken cancellationToken)
    {
        var index = 0;
        while (true)
        {
            var read = await reader.ReadAsync(cancellationToken).ConfigureAwait(false);
            var buffer = read.Buffer;
            var lines = new List<byte[]>();
            while (TryTakeLine(ref buffer, out var line))
            {
                if (line.Length > maxLineBytes)
                {
                    reader.AdvanceTo(buffer.Start, buffer.End);
                    throw new BatchBodyException(BodyProblem(string.Empty, $"Line {index + 1} is longer than {maxLineBytes} bytes.", StatusCodes.Status413PayloadTooLarge));
                }

                lines.Add(line);
            }

            if (read.IsCompleted && buffer.Length > 0)
            {
                lines.Add(Trim(buffer.ToArray()));
                buffer = buffer.Slice(buffer.End);
            }

            if (buffer.Length > maxLineBytes)
            {
                reader.AdvanceTo(buffer.Start, buffer.End);
                throw new BatchBodyException(BodyProblem(string.Empty, $"Line {index + 1} is longer than {maxLineBytes} bytes.", StatusCodes.Status413PayloadTooLarge));
            }

            reader.AdvanceTo(buffer.Start, buffer.End);
            foreach (var line in lines)
            {
                if (line.Length == 0)
                {
                    continue;
                }

                if (index == MaxItems)
                {
                    // The limit is known only when reached: answer this item with it and read no further.
                    yield return new BatchItem(index, default, RunResult.Refused(Problems.BatchOverLimit(MaxItems, item: true)));
                    yield break;
                }

                yield return new BatchItem(index++, line, null);
            }

            if (read.IsCompleted)
            {
                yield break;
            }
        }
    }

    private static bool TryTakeLine(ref ReadOnlySequence<byte> buffer, out byte[] line)
    {
        var newline = buffer.PositionOf((byte)'\n');
        if (newline is null)
        {
            line = [];
            return false;
        }

        line = Trim(buffer.Slice(0, newline.Value).ToArray());
        buffer = buffer.Slice(buffer.GetPosition(1, newline.Value));
        return true;
    }

    private static byte[] Trim(byte[] line)
    {
        var span = line.AsSpan().Trim("\r \t"u8);
        return span.Length == line.Length ? line : span.ToArray();
    }

    private static async IAsyncEnumerable<List<BatchItem>> ChunksAsync(IAsyncEnumerable<BatchItem> items, [EnumeratorCancellation] CancellationToken cancellationToken)
    {
        var chunk = new List<BatchItem>(ChunkSize);
        await foreach (var item in items.WithCancellation(cancellationToken).ConfigureAwait(false))
        {
            chunk.Add(item);
            if (chunk.Count == ChunkSize)
            {
                yield return chunk;
                chunk = new List<BatchItem>(ChunkSize);
            }
        }

        if (chunk.Count > 0)
        {
            yield return chunk;
        }
    }

    // ---- Evaluating ----

    private sealed record BatchContext(
        HttpContext Http,
        RuleSetSnapshot Rules,
        EvaluationRunner Runner,
        IAuditStore Audit,
        string Caller,
        bool Curve,
        JsonSerializerOptions ProblemOptions,
        HistoryReader Histories,
        ServiceTelemetry Telemetry,
        ILogger Logger,
        KeyScope Scope,
        AnswerDetail Detail);

    private sealed class BatchTiming
    {
        public double EvaluateMs { get; set; }

        public double CommitWaitMs { get; set; }
    }

    private sealed record Chunk(List<BatchItem> Items, RunResult[] Results, EvaluationRequest?[] Requests, Task?[] Appends);

    // Reading and validating is CPU work: spread it over the cores.
    private static Chunk ComputeChunk(BatchContext c, List<BatchItem> items, BatchTiming timing)
    {
        var started = Stopwatch.GetTimestamp();
        var chunk = new Chunk(items, new RunResult[items.Count], new EvaluationRequest?[items.Count], new Task?[items.Count]);
        Parallel.For(0, items.Count, i =>
        {
            if (items[i].Refusal is { } refused)
            {
                chunk.Results[i] = refused;
                return;
            }

            try
            {
                var (request, refusal) = c.Runner.Read(items[i].Json);
                chunk.Requests[i] = request;
                if (refusal is not null)
                {
                    chunk.Results[i] = refusal;
                }
            }
            catch (Exception e) when (e is not OperationCanceledException)
            {
                chunk.Results[i] = ItemFailed(c, items[i].Index, e);
            }
        });
        timing.EvaluateMs += Stopwatch.GetElapsedTime(started).TotalMilliseconds;
        return chunk;
    }

    // History for trend rules (read once per asset and site of the chunk, only for items with a measurement), then the
    // evaluations, then the appends, which are started together so the store's writer commits them in few transactions.
    private static async Task LoadHistoriesAndRunAsync(BatchContext c, Chunk chunk, BatchTiming timing)
    {
        var histories = new AssetHistory?[chunk.Items.Count];
        var byAsset = new Dictionary<(string, string?), AssetHistory?>();
        for (var i = 0; i < chunk.Items.Count; i++)
        {
            if (chunk.Requests[i] is not { } request || !AssetHistory.IsUseful(request))
            {
                continue;
            }

            var key = (request.Asset!, request.Site?.Id);
            try
            {
                if (!byAsset.TryGetValue(key, out var history))
                {
                    history = await c.Histories.LoadAsync(request, null, c.Scope, c.Http.RequestAborted).ConfigureAwait(false);
                    byAsset[key] = history;
                }

                histories[i] = history;
            }
            catch (AuditStoreUnavailableException)
            {
                chunk.Results[i] = RunResult.Refused(Problems.AuditStoreUnavailable(item: true));
                chunk.Requests[i] = null;
            }
        }

        var started = Stopwatch.GetTimestamp();
        using var span = ServiceTelemetry.Source.StartActivity("evaluate-chunk");
        span?.SetTag("dischargeguard.batch.items", chunk.Items.Count);
        Parallel.For(0, chunk.Items.Count, i =>
        {
            if (chunk.Requests[i] is { } request)
            {
                // Evaluating touches no store, so whatever it throws is this item's failure alone (the appends, and
                // their failures, come after).
                try
                {
                    chunk.Results[i] = c.Runner.Run(request, chunk.Items[i].Json.ToArray(), c.Rules, c.Caller, c.Curve, histories[i], scope: c.Scope, detail: c.Detail);
                }
                catch (Exception e) when (e is not OperationCanceledException)
                {
                    chunk.Results[i] = ItemFailed(c, chunk.Items[i].Index, e);
                }
            }
        });
        timing.EvaluateMs += Stopwatch.GetElapsedTime(started).TotalMilliseconds;

        for (var i = 0; i < chunk.Items.Count; i++)
        {
            if (chunk.Results[i].Record is { } record)
            {
                chunk.Appends[i] = c.Runner.AppendAsync(c.Audit, chunk.Results[i], c.Http.RequestAborted);
            }
        }
    }

    // An item whose reading or evaluation failed unexpectedly: its own 500 problem (nothing recorded), logged like an
    // unhandled error of a single request (type and message, the stack only at Debug); the other items go on.
    private static RunResult ItemFailed(BatchContext c, int index, Exception e)
    {
        LogItemFailed(c.Logger, index, e.GetType().Name, e.Message);
        LogItemFailedDetail(c.Logger, e, index);
        return RunResult.Refused(Problems.Unexpected(item: true));
    }

    // Each item is answered only once its record is committed; one the store refused is that item's 503.
    private static async Task CompleteAsync(Chunk chunk, BatchTiming timing)
    {
        var started = Stopwatch.GetTimestamp();
        using var span = ServiceTelemetry.Source.StartActivity("audit.commit-wait");
        for (var i = 0; i < chunk.Items.Count; i++)
        {
            if (chunk.Appends[i] is not { } append)
            {
                continue;
            }

            try
            {
                await append.ConfigureAwait(false);
            }
            catch (AuditStoreUnavailableException)
            {
                chunk.Results[i] = RunResult.Refused(Problems.AuditStoreUnavailable(item: true));
            }
            catch (ArgumentException)
            {
                chunk.Results[i] = RunResult.Refused(Problems.Unexpected(item: true));
            }
        }

        timing.CommitWaitMs += Stopwatch.GetElapsedTime(started).TotalMilliseconds;
    }

    private static async Task WriteAsync(BatchContext c, ResultWriter writer, Chunk chunk, int[] counts, CancellationToken cancellationToken)
    {
        var log = c.Logger.IsEnabled(LogLevel.Information);
        for (var i = 0; i < chunk.Items.Count; i++)
        {
            var result = chunk.Results[i];
            writer.Write(chunk.Items[i].Index, result);
            counts[Bucket(result.Status)]++;
            c.Telemetry.Answered(result, Endpoint);
            if (log && result.Record is { } record)
            {
                // One line per stored item, like a single evaluation: its id beside the batch request's trace id.
                LogItem(c.Logger, chunk.Items[i].Index, record.Id, record.Asset, record.Verdict, record.RuleDigest);
            }
        }

        await writer.FlushAsync(cancellationToken).ConfigureAwait(false);
    }

    private static int Bucket(int status) => status switch
    {
        200 => 0,
        400 => 1,
        422 => 2,
        503 => 3,
        413 => 4,
        _ => 5,
    };

    // ---- Writing ----

    private sealed class ResultWriter(HttpResponse response, bool ndjson, JsonSerializerOptions problemOptions) : IDisposable
    {
        private readonly Utf8JsonWriter _json = new(response.BodyWriter, new JsonWriterOptions { SkipValidation = true, Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping });

        public void Start()
        {
            response.StatusCode = StatusCodes.Status200OK;
            response.ContentType = ndjson ? Ndjson + "; charset=utf-8" : "application/json; charset=utf-8";
            if (!ndjson)
            {
                _json.WriteStartObject();
                _json.WriteStartArray("results");
            }
        }

        public void Write(int index, RunResult result)
        {
            _json.WriteStartObject();
            _json.WriteNumber("index", index);
            _json.WriteNumber("status", result.Status);
            if (result.Record is { } record)
            {
                // The exact bytes recorded as this evaluation's response.
                _json.WritePropertyName("evaluation");
                _json.WriteRawValue(record.Response, skipInputValidation: true);
            }
            else
            {
                _json.WritePropertyName("problem");
                // The runtime type, so a validation problem keeps its errors.
                JsonSerializer.Serialize(_json, result.Problem!, result.Problem!.GetType(), problemOptions);
            }

            _json.WriteEndObject();
            if (ndjson)
            {
                _json.Flush();
                response.BodyWriter.Write("\n"u8);
                _json.Reset(response.BodyWriter);
            }
        }

        public void Finish()
        {
            if (!ndjson)
            {
                _json.WriteEndArray();
                _json.WriteEndObject();
            }
        }

        public void Dispose() => _json.Dispose();

        public async Task FlushAsync(CancellationToken cancellationToken)
        {
            _json.Flush();
            await response.BodyWriter.FlushAsync(cancellationToken).ConfigureAwait(false);
        }
    }

    // ---- Problems and media types ----

    private static bool IsMediaType(string contentType, string mediaType) =>
        contentType.StartsWith(mediaType, StringComparison.OrdinalIgnoreCase)
        && (contentType.Length == mediaType.Length || contentType[mediaType.Length] is ';' or ' ');

    private static bool AcceptsOnly(HttpContext http, string mediaType)
    {
        var accept = http.Request.Headers.Accept.ToString();
        return accept.Length > 0 && accept.Split(',').Select(a => a.Trim()).All(a => IsMediaType(a, mediaType));
    }

    private static IResult BodyProblem(string field, string message, int status = StatusCodes.Status400BadRequest) =>
        status == StatusCodes.Status413PayloadTooLarge
            ? Problems.AsResult(Problems.TooLarge(message))
            : Problems.AsResult(Problems.UnreadableBody(field, message, "The batch body could not be read."));

    private static ProblemHttpResult TooManyItems() => Problems.AsResult(Problems.BatchOverLimit(MaxItems, item: false));

    private static ProblemHttpResult UnsupportedMediaType(string? received) =>
        Problems.AsResult((ProblemDetails)Problems.WrongContentType(received, "application/json ({\"evaluations\": [ … ]}) or application/x-ndjson (one request per line)"));

    [LoggerMessage(EventId = 20, Level = LogLevel.Information,
        Message = "Batch of {Items} by {Caller}: {Ok} evaluated, {Invalid} invalid, {Unprocessable} out of range, {Unavailable} not recorded, {Other} other, {DurationMs:0.0} ms ({EvaluateMs:0.0} ms evaluating, {CommitWaitMs:0.0} ms waiting for commits)")]
    private static partial void LogBatch(ILogger logger, int items, int ok, int invalid, int unprocessable, int unavailable, int other, string caller, double durationMs, double evaluateMs, double commitWaitMs);

    [LoggerMessage(EventId = 22, Level = LogLevel.Information, Message = "Batch item {Index}: evaluation {EvaluationId} of {Asset}: {Verdict}, rules {RuleDigest}")]
    private static partial void LogItem(ILogger logger, int index, Guid evaluationId, string asset, string verdict, string ruleDigest);

    [LoggerMessage(EventId = 23, Level = LogLevel.Error, Message = "Batch item {Index} not evaluated: unhandled {ExceptionType}: {Reason}")]
    private static partial void LogItemFailed(ILogger logger, int index, string exceptionType, string reason);

    [LoggerMessage(EventId = 24, Level = LogLevel.Debug, Message = "Batch item {Index} not evaluated, in full")]
    private static partial void LogItemFailedDetail(ILogger logger, Exception exception, int index);

    [LoggerMessage(EventId = 21, Level = LogLevel.Error, Message = "Batch not answered: the audit store refused the first {Items} items")]
    private static partial void LogBatchUnavailable(ILogger logger, int items);
}

/// <summary>The JSON body of <c>POST /v1/evaluations/batch</c>.</summary>
/// <param name="Evaluations">1 to 10 000 evaluation requests, each as for <c>POST /v1/evaluations</c>.</param>
public sealed record BatchRequest(IReadOnlyList<EvaluationRequest> Evaluations);

/// <summary>The JSON answer of <c>POST /v1/evaluations/batch</c>.</summary>
/// <param name="Results">One result per item, in the order of the items.</param>
public sealed record BatchResponse(IReadOnlyList<BatchItemResult> Results);

/// <summary>One item's answer.</summary>
/// <param name="Index">0-based position of the item in the batch (the line number − 1 for NDJSON, blank lines not counted).</param>
/// <param name="Status">The status it would have had alone: 200, 400, 413 (beyond the batch limit), 422 or 503.</param>
/// <param name="Evaluation">The evaluation (status 200), byte-identical to its audit record's response.</param>
/// <param name="Problem">Why the item has no evaluation (any other status): RFC 9457 problem details.</param>
public sealed record BatchItemResult(int Index, int Status, EvaluationResponse? Evaluation, ProblemDetails? Problem);
