using System.Text.Json;
using Microsoft.AspNetCore.Diagnostics;
using Microsoft.AspNetCore.Mvc;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// Turns what escapes an endpoint into problem details: a malformed or oversized body into 400/413 naming the JSON path,
/// anything else into a 500 with no internals (the exception is logged, never sent).
/// </summary>
internal sealed partial class ProblemExceptionHandler(IProblemDetailsService problems, ILogger<ProblemExceptionHandler> logger) : IExceptionHandler
{
    public async ValueTask<bool> TryHandleAsync(HttpContext httpContext, Exception exception, CancellationToken cancellationToken)
    {
        ProblemDetails details;
        if (exception is BadHttpRequestException bad)
        {
            var status = bad.StatusCode;
            var code = status == StatusCodes.Status413PayloadTooLarge ? Problems.PayloadTooLarge : Problems.InvalidRequest;
            var validation = new HttpValidationProblemDetails
            {
                Status = status,
                Type = Problems.TypeUri(code),
                Title = status == StatusCodes.Status413PayloadTooLarge ? "The request body is too large." : "The request body could not be read.",
                Detail = status == StatusCodes.Status413PayloadTooLarge
                    ? "Send a smaller body, or split a batch."
                    : "The body must be a JSON document of the documented shape (UTF-8, no comments, no unknown fields).",
            };
            validation.Extensions["code"] = code;
            if (FindJsonException(bad) is { } json)
            {
                validation.Errors[JsonPathToField(json.Path)] = [CleanJsonMessage(json)];
            }

            details = validation;
        }
        else
        {
            // At the default levels the log holds what failed and where, not the stack: logs leave the host and are read
            // by more people than the code. Turning this category to Debug adds the full exception for a developer.
            LogUnhandled(logger, exception.GetType().Name, httpContext.Request.Path, exception.Message);
            LogUnhandledDetail(logger, exception, httpContext.Request.Path);
            details = new ProblemDetails
            {
                Status = StatusCodes.Status500InternalServerError,
                Type = Problems.TypeUri(Problems.Internal),
                Title = "An unexpected error occurred.",
                Detail = "The error was logged with the trace id below; no result was given for this request.",
            };
            details.Extensions["code"] = Problems.Internal;
        }

        httpContext.Response.StatusCode = details.Status!.Value;
        return await problems.TryWriteAsync(new ProblemDetailsContext { HttpContext = httpContext, ProblemDetails = details, Exception = null }).ConfigureAwait(false);
    }

    // "$.stages[0].suction.pressure" → "stages[0].suction.pressure".
    internal static string JsonPathToField(string? path) =>
        string.IsNullOrEmpty(path) || path == "$" ? string.Empty : path.StartsWith("$.", StringComparison.Ordinal) ? path[2..] : path.TrimStart('$');

    private static JsonException? FindJsonException(Exception? e)
    {
        for (; e is not null; e = e.InnerException)
        {
            if (e is JsonException json)
            {
                return json;
            }
        }

        return null;
    }

    // The serializer's messages name .NET types; say what the contract expects instead.
    internal static string CleanJsonMessage(JsonException json)
    {
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

    [LoggerMessage(EventId = 90, Level = LogLevel.Error, Message = "Unhandled {ExceptionType} on {Path}: {Reason}")]
    private static partial void LogUnhandled(ILogger logger, string exceptionType, PathString path, string reason);

    [LoggerMessage(EventId = 91, Level = LogLevel.Debug, Message = "Unhandled exception on {Path}, in full")]
    private static partial void LogUnhandledDetail(ILogger logger, Exception exception, PathString path);
}
