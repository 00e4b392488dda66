using System.Security.Claims;
using System.Text.Encodings.Web;
using Microsoft.AspNetCore.Authentication;
using Microsoft.AspNetCore.Mvc;
using Microsoft.Extensions.Options;

namespace DischargeGuard.Api.Infrastructure.Security;

/// <summary>
/// Scheme <c>ApiKey</c>: the key in <c>X-Api-Key</c>, matched against <see cref="ApiKeyRegistry"/>. The identity's name
/// is the key id (what the audit records as caller). Challenges and refusals are problem details; the key is never echoed.
/// </summary>
internal sealed class ApiKeyAuthenticationHandler(
    IOptionsMonitor<AuthenticationSchemeOptions> options,
    ILoggerFactory logger,
    UrlEncoder encoder,
    ApiKeyRegistry keys,
    IProblemDetailsService problems)
    : AuthenticationHandler<AuthenticationSchemeOptions>(options, logger, encoder)
{
    protected override Task<AuthenticateResult> HandleAuthenticateAsync()
    {
        // Without keys the service is anonymous (bound to loopback); a key sent anyway is ignored.
        if (keys.IsOpen || !Request.Headers.TryGetValue(AuthOptions.HeaderName, out var values))
        {
            return Task.FromResult(AuthenticateResult.NoResult());
        }

        if (values.Count != 1 || keys.Find(values[0]!) is not { } entry)
        {
            // The message reaches the framework's log: it names no key.
            return Task.FromResult(AuthenticateResult.Fail("The API key is not recognised."));
        }

        var claims = new List<Claim> { new(ClaimTypes.Name, entry.Id), new(ClaimTypes.NameIdentifier, entry.Id) };
        claims.AddRange(entry.Roles.Select(r => new Claim(ClaimTypes.Role, r)));
        var identity = new ClaimsIdentity(claims, AuthOptions.Scheme, ClaimTypes.Name, ClaimTypes.Role);
        return Task.FromResult(AuthenticateResult.Success(new AuthenticationTicket(new ClaimsPrincipal(identity), AuthOptions.Scheme)));
    }

    protected override Task HandleChallengeAsync(AuthenticationProperties properties)
    {
        Response.StatusCode = StatusCodes.Status401Unauthorized;
        Response.Headers.WWWAuthenticate = AuthOptions.Scheme;
        var sent = Request.Headers.ContainsKey(AuthOptions.HeaderName);
        return WriteAsync(Problems.KeyRequired(AuthOptions.HeaderName, sent));
    }

    protected override Task HandleForbiddenAsync(AuthenticationProperties properties)
    {
        Response.StatusCode = StatusCodes.Status403Forbidden;
        return WriteAsync(Problems.RoleMissing());
    }

    private async Task WriteAsync(ProblemDetails details)
    {
        if (!await problems.TryWriteAsync(new ProblemDetailsContext { HttpContext = Context, ProblemDetails = details }).ConfigureAwait(false))
        {
            await Response.WriteAsJsonAsync(details, options: null, contentType: "application/problem+json", Context.RequestAborted).ConfigureAwait(false);
        }
    }
}
