using DischargeGuard.Evaluation.Pipeline;
using FluentValidation.Results;
using Microsoft.AspNetCore.Http.HttpResults;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>RFC 9457 problem details with stable types and error codes.</summary>
internal static class Problems
{
    public const string InvalidRequest = "invalid-request";
    public const string OutOfRange = "out-of-range";
    public const string AuditUnavailable = "audit-unavailable";
    public const string NotFound = "not-found";
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

    public static string TypeUri(string code) => "urn:dischargeguard:problem:" + code;

    public static ValidationProblem Validation(IEnumerable<ValidationFailure> failures) => Validation(ErrorsOf(failures));

    /// <summary>FluentValidation failures as the contract's errors: camelCase paths, each with its distinct messages.</summary>
    public static Dictionary<string, string[]> ErrorsOf(IEnumerable<ValidationFailure> failures) =>
        failures
            .GroupBy(f => CamelPath(f.PropertyName), StringComparer.Ordinal)
            .ToDictionary(g => g.Key, g => g.Select(f => f.ErrorMessage).Distinct(StringComparer.Ordinal).ToArray(), StringComparer.Ordinal);

    public static ValidationProblem Validation(IDictionary<string, string[]> errors, string code = InvalidRequest, string title = "The request has invalid fields.") =>
        TypedResults.ValidationProblem(
            errors,
            detail: "See 'errors': each entry names the request field and what is accepted there.",
            type: TypeUri(code),
            title: title,
            extensions: new Dictionary<string, object?> { ["code"] = code });

    public static ProblemHttpResult Unprocessable(RequestProblem problem) =>
        TypedResults.Problem(
            detail: "See 'errors': each entry names the request field and the allowed range.",
            statusCode: StatusCodes.Status422UnprocessableEntity,
            title: problem.Title,
            type: TypeUri(problem.Code),
            extensions: new Dictionary<string, object?> { ["code"] = problem.Code, ["errors"] = problem.Errors });

    public static ProblemHttpResult AuditStoreUnavailable() =>
        TypedResults.Problem(
            detail: "The evaluation was computed but could not be recorded in the audit store, so no result is given. Retry later; nothing was stored for this request.",
            statusCode: StatusCodes.Status503ServiceUnavailable,
            title: "The audit store is unavailable.",
            type: TypeUri(AuditUnavailable),
            extensions: new Dictionary<string, object?> { ["code"] = AuditUnavailable });

    public static ProblemHttpResult Missing(string what) =>
        TypedResults.Problem(
            detail: what,
            statusCode: StatusCodes.Status404NotFound,
            title: "Not found.",
            type: TypeUri(NotFound),
            extensions: new Dictionary<string, object?> { ["code"] = NotFound });

    // FluentValidation writes "Stages[0].Suction.Pressure"; the contract's paths are camelCase like the JSON (one translator, shared with the gate).
    public static string CamelPath(string path) => DischargeGuard.Evaluation.Pipeline.ContractPaths.FromValidator(path);
}
