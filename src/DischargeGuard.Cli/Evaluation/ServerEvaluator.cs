using System.Globalization;
using System.Net;
using System.Net.Http.Headers;
using System.Text.Json;
using DischargeGuard.Cli.Proposals;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Cli.Evaluation;

/// <summary>
/// Evaluates through the service (<c>POST /v1/evaluations</c>), which records every evaluation in its own audit store
/// before it answers. The API key comes from an environment variable, never from the command line.
/// </summary>
public sealed class ServerEvaluator : ICaseEvaluator
{
    /// <summary>The header that carries the key.</summary>
    public const string KeyHeader = "X-Api-Key";

    private static readonly JsonSerializerOptions ReadOptions = new(EvaluationJson.Options) { UnmappedMemberHandling = System.Text.Json.Serialization.JsonUnmappedMemberHandling.Skip };

    private readonly HttpClient _http;
    private readonly ApprovedRules _approved;
    private readonly Dictionary<(string?, string?), string> _digests = [];
    private int? _stopCode;
    private string? _stopReason;

    /// <summary>Creates the evaluator.</summary>
    /// <param name="server">The service's base address (http or https).</param>
    /// <param name="apiKey">The key, or null to send none (a service without keys listens on loopback only).</param>
    /// <param name="approved">The approved rule digests.</param>
    /// <param name="timeout">Time allowed per request.</param>
    public ServerEvaluator(Uri server, string? apiKey, ApprovedRules approved, TimeSpan timeout)
    {
        ArgumentNullException.ThrowIfNull(server);
        _approved = approved;
        var handler = new SocketsHttpHandler { ConnectTimeout = TimeSpan.FromSeconds(Math.Min(10, timeout.TotalSeconds)), AllowAutoRedirect = false };
        _http = new HttpClient(handler, disposeHandler: true) { BaseAddress = server, Timeout = timeout };
        _http.DefaultRequestHeaders.Accept.Add(new MediaTypeWithQualityHeaderValue("application/json"));
        _http.DefaultRequestHeaders.UserAgent.Add(new ProductInfoHeaderValue("dischargeguard-gate", DischargeGuard.Evaluation.Pipeline.EvaluationPipeline.EngineVersion.Split('+')[0]));
        if (!string.IsNullOrEmpty(apiKey))
        {
            _http.DefaultRequestHeaders.Add(KeyHeader, apiKey);
        }

        Description = server.ToString();
    }

    /// <inheritdoc />
    public string Description { get; }

    /// <inheritdoc />
    public async Task<CaseResult> EvaluateAsync(ProposalCase proposalCase, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(proposalCase);
        if (_stopCode is { } stop)
        {
            // After a refused key or an unreachable service, the remaining cases are not sent: they would fail the same way.
            var skipped = new CaseResult(proposalCase, stop);
            skipped.Messages.Add("Not sent: " + _stopReason);
            return skipped;
        }

        var request = proposalCase.Request ?? throw new ArgumentException("The case has no request.", nameof(proposalCase));
        if (_approved.Digests.Count > 0)
        {
            var (digest, failure) = await DigestAsync(proposalCase, request, cancellationToken).ConfigureAwait(false);
            if (failure is not null)
            {
                return failure;
            }

            if (!_approved.Approves(digest!))
            {
                var refused = new CaseResult(proposalCase, ExitCodes.InvalidInput);
                refused.Messages.Add(_approved.Mismatch(digest!, request.Site?.Id, request.Asset));
                return refused;
            }
        }

        using var content = new ByteArrayContent(proposalCase.RequestJson);
        content.Headers.ContentType = new MediaTypeHeaderValue("application/json") { CharSet = "utf-8" };
        HttpResponseMessage response;
        try
        {
            response = await _http.PostAsync(new Uri("v1/evaluations?detail=full", UriKind.Relative), content, cancellationToken).ConfigureAwait(false);
        }
        catch (Exception ex) when (ex is HttpRequestException or TaskCanceledException or IOException)
        {
            return Unreachable(proposalCase, ex);
        }

        using (response)
        {
            var body = await response.Content.ReadAsByteArrayAsync(cancellationToken).ConfigureAwait(false);
            if (response.StatusCode != HttpStatusCode.OK)
            {
                return Refusal(proposalCase, response, body);
            }

            EvaluationResponse? answer;
            try
            {
                answer = (EvaluationResponse?)JsonSerializer.Deserialize(body, ReadOptions.GetTypeInfo(typeof(EvaluationResponse)));
            }
            catch (JsonException ex)
            {
                var broken = new CaseResult(proposalCase, ExitCodes.InternalError);
                broken.Messages.Add("The service answered 200 with a body that is not an evaluation response: " + ex.Message);
                return broken;
            }

            if (answer is null)
            {
                var empty = new CaseResult(proposalCase, ExitCodes.InternalError);
                empty.Messages.Add("The service answered 200 with an empty body.");
                return empty;
            }

            var result = new CaseResult(proposalCase, ExitCodes.OfVerdict(answer.Verdict))
            {
                Response = answer,
                ResponseJson = body,
                EvaluatedBy = Description,
                ReportUrl = new Uri(_http.BaseAddress!, "v1/evaluations/" + answer.Id.ToString("D") + "/report"),
            };
            if (!_approved.Approves(answer.RuleSet.Digest))
            {
                // The rules changed between the digest check and the evaluation: the record exists, but it is not approved.
                result.ExitCode = ExitCodes.Worst(result.ExitCode, ExitCodes.InvalidInput);
                result.Messages.Add(_approved.Mismatch(answer.RuleSet.Digest, request.Site?.Id, request.Asset) + " (the service evaluated and recorded it as " + answer.Id + ".)");
            }

            return result;
        }
    }

    private async Task<(string? Digest, CaseResult? Failure)> DigestAsync(ProposalCase proposalCase, EvaluationRequest request, CancellationToken cancellationToken)
    {
        var key = (request.Site?.Id, request.Asset);
        if (_digests.TryGetValue(key, out var known))
        {
            return (known, null);
        }

        var query = "v1/rules?asset=" + Uri.EscapeDataString(request.Asset ?? string.Empty)
            + (request.Site?.Id is { } site ? "&site=" + Uri.EscapeDataString(site) : string.Empty);
        HttpResponseMessage response;
        try
        {
            response = await _http.GetAsync(new Uri(query, UriKind.Relative), cancellationToken).ConfigureAwait(false);
        }
        catch (Exception ex) when (ex is HttpRequestException or TaskCanceledException or IOException)
        {
            return (null, Unreachable(proposalCase, ex));
        }

        using (response)
        {
            var body = await response.Content.ReadAsByteArrayAsync(cancellationToken).ConfigureAwait(false);
            if (response.StatusCode != HttpStatusCode.OK)
            {
                return (null, Refusal(proposalCase, response, body));
            }

            try
            {
                using var doc = JsonDocument.Parse(body);
                var digest = doc.RootElement.GetProperty("digest").GetString()!;
                _digests[key] = digest;
                return (digest, null);
            }
            catch (Exception ex) when (ex is JsonException or KeyNotFoundException or InvalidOperationException)
            {
                var broken = new CaseResult(proposalCase, ExitCodes.InternalError);
                broken.Messages.Add("GET /v1/rules answered without a digest: " + ex.Message);
                return (null, broken);
            }
        }
    }

    private CaseResult Unreachable(ProposalCase proposalCase, Exception ex)
    {
        var reason = ex is TaskCanceledException
            ? $"the service at {Description} did not answer within {_http.Timeout.TotalSeconds.ToString(CultureInfo.InvariantCulture)} s"
            : $"the service at {Description} cannot be reached ({ex.Message})";
        _stopCode = ExitCodes.ServiceUnavailable;
        _stopReason = reason + ".";
        var r = new CaseResult(proposalCase, ExitCodes.ServiceUnavailable);
        r.Messages.Add("Not evaluated: " + reason + ". Nothing was recorded for this case.");
        return r;
    }

    private CaseResult Refusal(ProposalCase proposalCase, HttpResponseMessage response, byte[] body)
    {
        var status = (int)response.StatusCode;
        var problem = ProblemOf(body);
        var detail = problem.Detail ?? problem.Title ?? response.ReasonPhrase ?? string.Empty;
        CaseResult r;
        switch (response.StatusCode)
        {
            case HttpStatusCode.Unauthorized or HttpStatusCode.Forbidden:
                r = new CaseResult(proposalCase, ExitCodes.KeyRefused);
                var why = status == 401 ? "the key is missing or unknown" : "the key lacks a role that may evaluate (gate or technician)";
                r.Messages.Add($"The service refused the key ({status}): {why}. {detail}".TrimEnd());
                _stopCode = ExitCodes.KeyRefused;
                _stopReason = $"the service refused the key ({status}).";
                break;
            case HttpStatusCode.TooManyRequests:
                r = new CaseResult(proposalCase, ExitCodes.RateLimited);
                var retry = response.Headers.RetryAfter?.Delta is { } delta ? $" Retry after {delta.TotalSeconds.ToString(CultureInfo.InvariantCulture)} s." : string.Empty;
                r.Messages.Add($"The service's rate limit refused the request (429); nothing was evaluated.{retry}");
                break;
            case HttpStatusCode.BadRequest or HttpStatusCode.UnprocessableEntity or HttpStatusCode.RequestEntityTooLarge:
                r = new CaseResult(proposalCase, ExitCodes.InvalidInput);
                foreach (var (path, messages) in problem.Errors)
                {
                    foreach (var m in messages)
                    {
                        r.Errors.Add(proposalCase.ErrorAt(path, m));
                    }
                }

                r.Messages.Add($"The service refused the case ({status}): {problem.Title ?? detail}");
                break;
            case HttpStatusCode.ServiceUnavailable:
                r = new CaseResult(proposalCase, ExitCodes.ServiceUnavailable);
                var after = response.Headers.RetryAfter?.Delta is { } d ? $" Retry after {d.TotalSeconds.ToString(CultureInfo.InvariantCulture)} s." : string.Empty;
                r.Messages.Add($"The service is unavailable (503): {detail} Nothing was recorded, so no result is reported.{after}");
                break;
            default:
                r = new CaseResult(proposalCase, ExitCodes.ServiceUnavailable);
                r.Messages.Add($"The service answered {status} {response.ReasonPhrase}: {detail} Is {Description} a DischargeGuard service?");
                break;
        }

        return r;
    }

    private static (string? Title, string? Detail, List<(string Path, string[] Messages)> Errors) ProblemOf(byte[] body)
    {
        var errors = new List<(string, string[])>();
        try
        {
            using var doc = JsonDocument.Parse(body);
            var root = doc.RootElement;
            string? Text(string name) => root.TryGetProperty(name, out var v) && v.ValueKind == JsonValueKind.String ? v.GetString() : null;
            if (root.TryGetProperty("errors", out var e) && e.ValueKind == JsonValueKind.Object)
            {
                foreach (var p in e.EnumerateObject())
                {
                    var messages = p.Value.ValueKind == JsonValueKind.Array
                        ? p.Value.EnumerateArray().Select(x => x.ToString()).ToArray()
                        : [p.Value.ToString()];
                    errors.Add((p.Name, messages));
                }
            }

            return (Text("title"), Text("detail"), errors);
        }
        catch (JsonException)
        {
            return (null, null, errors);
        }
    }

    /// <inheritdoc />
    public ValueTask DisposeAsync()
    {
        _http.Dispose();
        return ValueTask.CompletedTask;
    }
}
