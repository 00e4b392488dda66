using Microsoft.AspNetCore.Http.HttpResults;

namespace DischargeGuard.Api.Infrastructure.Security;

/// <summary>
/// With no keys configured the service is anonymous and listens on loopback only, but a browser on the same machine can
/// still reach it: a page of another site may rebind its own name to 127.0.0.1 (DNS rebinding) or post a form to
/// <c>http://127.0.0.1:5080</c>. In that mode this guard accepts only loopback host names, refuses state-changing requests
/// from a foreign <c>Origin</c>, and refuses state-changing requests a browser sends cross-site without a preflight (form
/// and text bodies, no body) unless they carry <see cref="IntentHeader"/>, which a cross-site page cannot add without the
/// preflight this service never grants. JSON, YAML and NDJSON bodies need no header: a browser preflights them.
/// </summary>
internal static class AnonymousBrowserGuard
{
    /// <summary>The header that marks a bodyless or form-typed state-changing request as meant (any value, e.g. <c>1</c>).</summary>
    public const string IntentHeader = "X-DischargeGuard-Intent";

    // The content types a browser may send cross-site without asking first (the Fetch standard's CORS-safelisted ones).
    private static readonly string[] SimpleContentTypes = ["application/x-www-form-urlencoded", "multipart/form-data", "text/plain"];

    /// <summary>Adds the guard; it does nothing when keys are configured (every request then needs a key, which a
    /// cross-site page does not have).</summary>
    public static IApplicationBuilder UseAnonymousBrowserGuard(this IApplicationBuilder app) =>
        app.Use(async (context, next) =>
        {
            if (!context.RequestServices.GetRequiredService<ApiKeyRegistry>().IsOpen || Check(context.Request) is not { } refusal)
            {
                await next(context).ConfigureAwait(false);
                return;
            }

            await refusal.ExecuteAsync(context).ConfigureAwait(false);
        });

    /// <summary>The refusal of <paramref name="request"/>, or null when it may go on.</summary>
    internal static ProblemHttpResult? Check(HttpRequest request)
    {
        if (!IsLoopbackHost(request.Host))
        {
            return Refuse(
                StatusCodes.Status421MisdirectedRequest,
                "The request names a host this service does not answer to.",
                "Without API keys the service answers only to localhost, 127.0.0.1 and [::1] (any port). Another name pointing here is refused, "
                + "so a web page cannot reach it by rebinding its own name to this machine.");
        }

        if (!IsStateChanging(request.Method))
        {
            return null;
        }

        if (request.Headers.Origin is { Count: > 0 } origin && !IsSameOrigin(origin.ToString(), request))
        {
            return Refuse(
                StatusCodes.Status403Forbidden,
                "A request from another origin may not change anything here.",
                "The Origin of this request is not this service's own. Without API keys only this service's page and programs without a browser origin may post.");
        }

        if (request.Headers.ContainsKey(IntentHeader))
        {
            return null;
        }

        if (IsSimpleContentType(request.ContentType))
        {
            return Refuse(
                StatusCodes.Status415UnsupportedMediaType,
                "This content type is not accepted without the intent header.",
                $"A form or text/plain body is what a browser may send from any web page. Send JSON, YAML or NDJSON, or add the header '{IntentHeader}: 1'.");
        }

        if (!HasBody(request))
        {
            return Refuse(
                StatusCodes.Status403Forbidden,
                "A request without a body must say it is meant.",
                $"Add the header '{IntentHeader}: 1' to a POST, PUT, PATCH or DELETE without a body (a reload, a replay). A web page of another site cannot add it.");
        }

        return null;
    }

    internal static bool IsLoopbackHost(HostString host) =>
        host.HasValue
        && (string.Equals(host.Host, "localhost", StringComparison.OrdinalIgnoreCase)
            || host.Host == "127.0.0.1"
            || host.Host == "[::1]");

    private static bool IsStateChanging(string method) =>
        HttpMethods.IsPost(method) || HttpMethods.IsPut(method) || HttpMethods.IsDelete(method) || HttpMethods.IsPatch(method);

    // The Origin a same-origin fetch of this service's page sends: scheme://host[:port], as the request's own.
    private static bool IsSameOrigin(string origin, HttpRequest request) =>
        string.Equals(origin, request.Scheme + "://" + request.Host.Value, StringComparison.OrdinalIgnoreCase);

    private static bool IsSimpleContentType(string? contentType)
    {
        if (string.IsNullOrEmpty(contentType))
        {
            return false;
        }

        var mediaType = contentType.Split(';')[0].Trim();
        return SimpleContentTypes.Any(t => string.Equals(mediaType, t, StringComparison.OrdinalIgnoreCase));
    }

    private static bool HasBody(HttpRequest request) =>
        request.ContentLength > 0 || (request.ContentLength is null && request.Headers.TransferEncoding.Count > 0);

    private static ProblemHttpResult Refuse(int status, string title, string detail) => Problems.AsResult(Problems.CrossSite(status, title, detail));
}
