using System.Globalization;
using System.Text.Json;
using DischargeGuard.Evaluation.Pipeline;
using FluentValidation.Results;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Mvc;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// The problem catalogue: every RFC 9457 problem document the service answers is built here, with its stable type
/// (<c>urn:dischargeguard:problem:&lt;code&gt;</c>), its <c>code</c>, title and detail, whether an endpoint, a batch item,
/// the exception handler, the status-code pages or the security middleware answers it. Request fields are named
/// through <see cref="ContractPaths"/>.
/// </summary>
internal static class Problems
{
    public const string InvalidRequest = "invalid-request";
    public const string OutOfRange = "out-of-range";
    public const string AuditUnavailable = "audit-unavailable";
    public const string NotFound = "not-found";
    public const string MethodNotAllowed = "method-not-allowed";
    public const string NotAcceptable = "not-acceptable";
    public const string UnsupportedMediaType = "unsupported-media-type";
    public const string PayloadTooLarge = "payload-too-large";
    public const string Internal = "internal-error";
    public const string Unauthorized = "unauthorized";
    public const string Forbidden = "forbidden";
    public const string RateLimited = "rate-limited";
    public const string RulesInvalid = "rules-invalid";
    public const string CrossSiteRefused = "cross-site-refused";
    public const string TooManyBatches = "too-many-batches";
    public const string QuotaExceeded = "storage-quota-exceeded";
    public const string RecordTooLarge = "record-too-large";
    public const string StorageLow = "audit-storage-low";
    public const string Unavailable = "service-unavailable";

    private const string FieldsDetail = "See 'errors': each entry names the request field and what is accepted there.";
    private const string InvalidFieldsTitle = "The request has invalid fields.";
    private const string UnreadableBodyTitle = "The request body could not be read.";

    public static string TypeUri(string code) => "urn:dischargeguard:problem:" + code;

    // ---- The builders: every problem document of the service ----

    /// <summary>A problem with the service's type and code.</summary>
    public static ProblemDetails Of(int status, string code, string title, string detail)
    {
        var details = new ProblemDetails { Status = status, Type = TypeUri(code), Title = title, Detail = detail };
        details.Extensions["code"] = code;
        return details;
    }

    /// <summary>A 400 (or <paramref name="status"/>) whose <c>errors</c> name each field or parameter and what is accepted there.</summary>
    public static HttpValidationProblemDetails InvalidFields(
        IEnumerable<KeyValuePair<string, string[]>> errors, string title = InvalidFieldsTitle, string code = InvalidRequest, string detail = FieldsDetail, int status = StatusCodes.Status400BadRequest)
    {
        var details = new HttpValidationProblemDetails(errors.ToDictionary(e => e.Key, e => e.Value, StringComparer.Ordinal))
        {
            Status = status,
            Type = TypeUri(code),
            Title = title,
            Detail = detail,
        };
        details.Extensions["code"] = code;
        return details;
    }

    /// <summary>Query or route parameters that could not be read: each named with the form it accepts.</summary>
    public static HttpValidationProblemDetails InvalidParameters(IEnumerable<KeyValuePair<string, string[]>> errors) =>
        InvalidFields(errors, "The request has invalid parameters.", detail: "See 'errors': each entry names the query parameter and the form it accepts.");

    /// <summary>A body that is not JSON of the documented shape (400), naming the field where reading stopped.</summary>
    public static HttpValidationProblemDetails UnreadableBody(string field, string message, string title = UnreadableBodyTitle) =>
        InvalidFields(
            new Dictionary<string, string[]>(StringComparer.Ordinal) { [field] = [message] },
            title,
            detail: "The body must be a JSON document of the documented shape (UTF-8, no comments, no unknown fields); 'errors' names the field where reading stopped.");

    /// <summary>The body as the reader's <see cref="JsonException"/> left it, keyed by the contract's path of the field.</summary>
    public static HttpValidationProblemDetails UnreadableBody(JsonException json, string title = UnreadableBodyTitle) =>
        UnreadableBody(ContractPaths.FromJsonPath(json.Path), JsonMessage(json), title);

    /// <summary>A well-formed request that is physically impossible or outside the data's range (422, or the problem's own code).</summary>
    public static ProblemDetails Unprocessable(RequestProblem problem)
    {
        ArgumentNullException.ThrowIfNull(problem);
        var details = Of(StatusCodes.Status422UnprocessableEntity, problem.Code, problem.Title, "See 'errors': each entry names the request field and the allowed range.");
        details.Extensions["errors"] = problem.Errors;
        return details;
    }

    /// <summary>The evaluation's refusal as the catalogue words it: a 400 with fields, or a 422.</summary>
    public static ProblemDetails Refusal(RequestProblem problem) =>
        problem.Kind == ProblemKind.InvalidRequest ? InvalidFields(problem.Errors, problem.Title, problem.Code) : Unprocessable(problem);

    public static ProblemDetails AuditStoreUnavailable(bool item = false) =>
        Of(StatusCodes.Status503ServiceUnavailable, AuditUnavailable, "The audit store is unavailable.", item
            ? "This item was computed but could not be recorded, so no result is given. Retry it later; nothing was stored for it."
            : "The evaluation was computed but could not be recorded in the audit store, so no result is given. Retry later; nothing was stored for this request.");

    public static ProblemDetails Missing(string what) => Of(StatusCodes.Status404NotFound, NotFound, "Not found.", what);

    public static ProblemDetails NoSuchRoute(string method, string path) =>
        Of(StatusCodes.Status404NotFound, NotFound, "Not found.",
            $"Nothing answers {method} {path}. The endpoints are listed in the OpenAPI document (/swagger/v1/swagger.json); an evaluation id is a UUID.");

    public static ProblemDetails WrongMethod(string method, string path, string? allowed)
    {
        var details = Of(StatusCodes.Status405MethodNotAllowed, MethodNotAllowed, "The method is not allowed here.",
            string.IsNullOrEmpty(allowed)
                ? $"{path} does not answer {method}; see the OpenAPI document for its methods."
                : $"{path} does not answer {method}; it answers {allowed} (the Allow header).");
        return details;
    }

    public static ProblemDetails WrongAccept(string accept, string produces) =>
        Of(StatusCodes.Status406NotAcceptable, NotAcceptable, "No answer in an accepted media type.",
            $"The Accept header asks for '{accept}'; this endpoint answers {produces}. Accept one of those (or */*).");

    /// <summary>A body in a media type the endpoint does not read (415); <c>errors</c> keys the header.</summary>
    public static HttpValidationProblemDetails WrongContentType(string? received, string accepted) =>
        InvalidFields(
            new Dictionary<string, string[]>(StringComparer.Ordinal)
            {
                ["Content-Type"] = [string.IsNullOrEmpty(received) ? $"Missing: send Content-Type {accepted}." : $"'{received}' is not read here: send {accepted}."],
            },
            "The request's content type is not accepted.",
            UnsupportedMediaType,
            "Send the body with the Content-Type this endpoint reads (the OpenAPI document lists it); nothing was evaluated or stored.",
            StatusCodes.Status415UnsupportedMediaType);

    public static ProblemDetails TooLarge(string detail, string title = "The request body is too large.") =>
        Of(StatusCodes.Status413PayloadTooLarge, PayloadTooLarge, title, detail);

    public static ProblemDetails BodyTooLarge() => TooLarge("Send a smaller body, or split a batch. Nothing was evaluated or stored.");

    public static ProblemDetails BatchOverLimit(int limit, bool item) => item
        ? TooLarge($"A batch holds at most {limit} evaluations; this item and any after it were not read. Send them in another batch.", "The batch has more items than one batch may hold.")
        : TooLarge($"A batch holds at most {limit} evaluations; split it. Nothing was evaluated or stored.", "The batch has more items than one batch may hold.");

    public static ProblemDetails Unexpected(bool item = false) =>
        Of(StatusCodes.Status500InternalServerError, Internal, "An unexpected error occurred.", item
            ? "The error was logged; no result was given for this item."
            : "The error was logged with the trace id below; no result was given for this request.");

    public static ProblemDetails KeyRequired(string header, bool sent) =>
        Of(StatusCodes.Status401Unauthorized, Unauthorized, "An API key is required.", sent
            ? $"The key in the {header} header is not recognised. Ask the administrator for a valid key."
            : $"Send the API key in the {header} header.");

    public static ProblemDetails RoleMissing() =>
        Of(StatusCodes.Status403Forbidden, Forbidden, "The API key does not allow this.",
            "The key is valid but none of its roles may call this endpoint; see docs/security.md for the roles of each endpoint.");

    public static ProblemDetails OutOfScope(string? asset, string? site) =>
        Of(StatusCodes.Status403Forbidden, Forbidden, "The API key is not bound to this site or asset.",
            $"The key may evaluate only the sites (and assets) it is bound to in its configuration; this request names site '{site ?? "(none)"}' and asset '{asset}'. Nothing was evaluated or stored.");

    public static ProblemDetails TooManyRequests(int retryAfterSeconds) =>
        Of(StatusCodes.Status429TooManyRequests, RateLimited, "Too many requests.",
            $"This caller's request rate is over its limit; retry after {retryAfterSeconds} s (the Retry-After header). Nothing was evaluated or stored for this request.");

    public static ProblemDetails CrossSite(int status, string title, string detail) => Of(status, CrossSiteRefused, title, detail);

    public static ProblemDetails RuleSetInvalid(string activeDigest, object errors)
    {
        var details = Of(StatusCodes.Status422UnprocessableEntity, RulesInvalid, "The rule set is invalid.",
            "The rule directory does not load; nothing changed and the last good rule set (digest below) is still in force. See 'errors' for file, line and key.");
        details.Extensions["activeDigest"] = activeDigest;
        details.Extensions["errors"] = errors;
        return details;
    }

    public static ProblemDetails StorageQuotaSpent(string caller, long used, long quota, int retryAfterSeconds)
    {
        var details = Of(StatusCodes.Status429TooManyRequests, QuotaExceeded, "The API key's storage quota for today is spent.",
            string.Create(CultureInfo.InvariantCulture,
                $"Key '{caller}' has stored {used} of its {quota} bytes for this UTC day, and this evaluation would exceed it; nothing was stored. The quota renews at 00:00 UTC (retry after {retryAfterSeconds} s), or ask the administrator for a larger one (Quotas:BytesPerDay or the key's bytesPerDay)."));
        details.Extensions["retryAfterSeconds"] = retryAfterSeconds;
        return details;
    }

    public static ProblemDetails RecordOverLimit(long bytes, long limit) =>
        Of(StatusCodes.Status413PayloadTooLarge, RecordTooLarge, "The evaluation's record would be larger than one record may store.",
            string.Create(CultureInfo.InvariantCulture,
                $"Request and answer together are {bytes} bytes; one audit record may hold {limit} (Quotas:MaxRecordBytes). Nothing was stored. Ask without ?curve=true, or split the train or the batch."));

    public static ProblemDetails StorageNearlyFull(string description, int retryAfterSeconds)
    {
        var details = Of(StatusCodes.Status503ServiceUnavailable, StorageLow, "The audit store is nearly full.",
            $"Evaluations are refused before the audit store fills up ({description}); nothing was evaluated or stored. Retry later; operators: free or grow the volume, or run retention.");
        details.Extensions["retryAfterSeconds"] = retryAfterSeconds;
        return details;
    }

    /// <summary>
    /// The problem for a status the framework set without a body (an unknown route, a method the route does not take, a
    /// content type or Accept it cannot serve, a refusal by a middleware), so no answer leaves with the framework's bare
    /// type.
    /// </summary>
    public static ProblemDetails ForStatus(HttpContext http)
    {
        ArgumentNullException.ThrowIfNull(http);
        var request = http.Request;
        var path = request.Path.Value ?? "/";
        return http.Response.StatusCode switch
        {
            StatusCodes.Status404NotFound => NoSuchRoute(request.Method, path),
            StatusCodes.Status405MethodNotAllowed => WrongMethod(request.Method, path, http.Response.Headers.Allow.ToString()),
            StatusCodes.Status406NotAcceptable => WrongAccept(request.Headers.Accept.ToString(), "application/json"),
            StatusCodes.Status415UnsupportedMediaType => WrongContentType(request.ContentType, "application/json"),
            StatusCodes.Status413PayloadTooLarge => BodyTooLarge(),
            StatusCodes.Status401Unauthorized => KeyRequired(Security.AuthOptions.HeaderName, request.Headers.ContainsKey(Security.AuthOptions.HeaderName)),
            StatusCodes.Status403Forbidden => RoleMissing(),
            StatusCodes.Status429TooManyRequests => Of(StatusCodes.Status429TooManyRequests, RateLimited, "Too many requests.", "Retry later (the Retry-After header, when present, says when)."),
            StatusCodes.Status400BadRequest => InvalidFields(new Dictionary<string, string[]>(StringComparer.Ordinal), "The request could not be read.", detail: "The request does not match the endpoint's contract (see the OpenAPI document)."),
            >= 500 and var status => Of(status, status == StatusCodes.Status503ServiceUnavailable ? Unavailable : Internal, "The service could not answer.", "No result was given for this request; retry later."),
            var status => Of(status, InvalidRequest, "The request was refused.", "See the OpenAPI document for what this endpoint accepts."),
        };
    }

    // ---- Typed results of the endpoints (the OpenAPI document reads their types) ----

    public static ValidationProblem Validation(IEnumerable<ValidationFailure> failures) => Validation(ErrorsOf(failures));

    public static ValidationProblem Validation(IDictionary<string, string[]> errors, string code = InvalidRequest, string title = InvalidFieldsTitle) =>
        AsResult(InvalidFields(errors, title, code));

    public static ValidationProblem AsResult(HttpValidationProblemDetails details)
    {
        ArgumentNullException.ThrowIfNull(details);
        return TypedResults.ValidationProblem(details.Errors, details.Detail, details.Instance, details.Title, details.Type, details.Extensions);
    }

    public static ProblemHttpResult AsResult(ProblemDetails details) => TypedResults.Problem(details);

    // ---- Field names and messages ----

    /// <summary>FluentValidation failures as the contract's errors: camelCase paths, each with its distinct messages.</summary>
    public static Dictionary<string, string[]> ErrorsOf(IEnumerable<ValidationFailure> failures) =>
        failures
            .GroupBy(f => ContractPaths.FromValidator(f.PropertyName), StringComparer.Ordinal)
            .ToDictionary(g => g.Key, g => g.Select(f => f.ErrorMessage).Distinct(StringComparer.Ordinal).ToArray(), StringComparer.Ordinal);

    /// <summary>The reader's message in the contract's words (the serializer's name .NET types).</summary>
    public static string JsonMessage(JsonException json)
    {
        ArgumentNullException.ThrowIfNull(json);
        var m = json.Message;
        if (m.StartsWith("Duplicate propert", StringComparison.Ordinal))
        {
            // The serializer's wording names .NET types (a converter's "Duplicate member …" is already the contract's).
            return "Duplicate member: this member is named more than once in its object; name it once. Nothing was evaluated or stored.";
        }

        if (m.Contains("could not be mapped", StringComparison.Ordinal) || m.Contains("unmapped", StringComparison.OrdinalIgnoreCase))
        {
            return "Unknown field: the contract has no field of this name here (check the spelling and the OpenAPI document).";
        }

        if (json.InnerException is null && !m.Contains("System.", StringComparison.Ordinal) && !m.Contains("DischargeGuard.", StringComparison.Ordinal))
        {
            return m.Split(" Path:", StringSplitOptions.None)[0];
        }

        return "This value has the wrong type or is malformed JSON here (quantities are strings such as \"1.5 barg\" or {\"value\": 1.5, \"unit\": \"barg\"}; fractions and efficiencies are numbers).";
    }
}
