using System.Reflection;
using Microsoft.AspNetCore.Http.Metadata;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// A 200 whose body is pre-serialised UTF-8 JSON of <typeparamref name="T"/>: the exact bytes that were written to the
/// audit store, so a later read returns them unchanged. Declares <typeparamref name="T"/> as the response schema.
/// </summary>
internal sealed class Utf8JsonResult<T>(ReadOnlyMemory<byte> utf8Json) : IResult, IEndpointMetadataProvider, IStatusCodeHttpResult, IContentTypeHttpResult
{
    public int? StatusCode => StatusCodes.Status200OK;

    public string ContentType => "application/json; charset=utf-8";

    public ReadOnlyMemory<byte> Body => utf8Json;

    public static void PopulateMetadata(MethodInfo method, EndpointBuilder builder)
    {
        ArgumentNullException.ThrowIfNull(builder);
        builder.Metadata.Add(new ProducesResponseTypeMetadata(StatusCodes.Status200OK, typeof(T), ["application/json"]));
    }

    public async Task ExecuteAsync(HttpContext httpContext)
    {
        ArgumentNullException.ThrowIfNull(httpContext);
        httpContext.Response.StatusCode = StatusCodes.Status200OK;
        httpContext.Response.ContentType = ContentType;
        httpContext.Response.ContentLength = utf8Json.Length;
        await httpContext.Response.Body.WriteAsync(utf8Json, httpContext.RequestAborted).ConfigureAwait(false);
    }
}
