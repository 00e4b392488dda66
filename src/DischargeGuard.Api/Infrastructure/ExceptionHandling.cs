using System.Text.Json;
using Microsoft.AspNetCore.Diagnostics;
using Microsoft.AspNetCore.Mvc;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// Turns what escapes an endpoint into the catalogue's problem details (<see cref="Problems"/>): a malformed, oversized
/// or wrongly typed body into 400/413/415 naming the JSON path, a parameter that did not bind into 400 naming it,
/// anything else into a 500 with no internals (the exception is logged, never sent).
/// </summary>
internal sealed partial class ProblemExceptionHandler(IProblemDetailsService problems, ILogger<ProblemExceptionHandler> logger) : IExceptionHandler
{
    public async ValueTask<bool> TryHandleAsync(HttpContext httpContext, Exception exception, CancellationToken cancellationToken)
    {
        ProblemDetails details;
        if (exception is BadHttpRequestException bad)
        {
            details = Refusal(httpContext, bad);
        }
        else
        {
            // At the default levels the log holds what failed and where, not the stack: logs leave the host and are read
            // by more people than the code. Turning this category to Debug adds the full exception for a developer.
            LogUnhandled(logger, exception.GetType().Name, httpContext.Request.Path, exception.Message);
            LogUnhandledDetail(logger, exception, httpContext.Request.Path);
            details = Problems.Unexpected();
        }

        httpContext.Response.StatusCode = details.Status!.Value;
        return await problems.TryWriteAsync(new ProblemDetailsContext { HttpContext = httpContext, ProblemDetails = details, Exception = null }).ConfigureAwait(false);
    }

    // What the framework refused while reading the request, as the catalogue words it: the body's size, its media type,
    // the JSON path where reading stopped, or the parameters that did not bind.
    private static ProblemDetails Refusal(HttpContext http, BadHttpRequestException bad)
    {
        if (bad.StatusCode == StatusCodes.Status413PayloadTooLarge || FindTooLarge(bad))
        {
            return Problems.BodyTooLarge();
        }

        if (bad.StatusCode == StatusCodes.Status415UnsupportedMediaType)
        {
            return Problems.WrongContentType(http.Request.ContentType, "application/json");
        }

        if (FindJsonException(bad) is { } json)
        {
            return Problems.UnreadableBody(json);
        }

        // A query value that does not bind is normally answered by the query check before the endpoint; this is the
        // fallback for one it did not foresee (a required parameter left out, a type it does not know).
        if (QueryParameters.ErrorsOf(http) is { Count: > 0 } errors)
        {
            return Problems.InvalidParameters(errors);
        }

        return bad.Message.StartsWith("Required parameter", StringComparison.Ordinal) || bad.Message.StartsWith("Failed to bind parameter", StringComparison.Ordinal)
            ? Problems.InvalidParameters(new Dictionary<string, string[]>(StringComparer.Ordinal) { [ParameterName(bad.Message)] = ["Give this parameter in the form the OpenAPI document states."] })
            : Problems.UnreadableBody(string.Empty, "The body could not be read as a JSON document.");
    }

    // The framework's binding messages quote "<Type> <name>" first: 'Failed to bind parameter "int? limit" from "x".'
    private static string ParameterName(string message)
    {
        var open = message.IndexOf('"', StringComparison.Ordinal);
        var close = open < 0 ? -1 : message.IndexOf('"', open + 1);
        if (close < 0)
        {
            return string.Empty;
        }

        var quoted = message[(open + 1)..close];
        var space = quoted.LastIndexOf(' ');
        return space < 0 ? quoted : quoted[(space + 1)..];
    }

    // Kestrel's own limit is met while the body is read, wrapped in the reader's exception.
    private static bool FindTooLarge(Exception? e)
    {
        for (; e is not null; e = e.InnerException)
        {
            if (e is BadHttpRequestException { StatusCode: StatusCodes.Status413PayloadTooLarge })
            {
                return true;
            }
        }

        return false;
    }

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

    [LoggerMessage(EventId = 90, Level = LogLevel.Error, Message = "Unhandled {ExceptionType} on {Path}: {Reason}")]
    private static partial void LogUnhandled(ILogger logger, string exceptionType, PathString path, string reason);

    [LoggerMessage(EventId = 91, Level = LogLevel.Debug, Message = "Unhandled exception on {Path}, in full")]
    private static partial void LogUnhandledDetail(ILogger logger, Exception exception, PathString path);
}
