using System.Net;
using DischargeGuard.Api.Infrastructure;

namespace DischargeGuard.Api.Tests;

/// <summary>Security headers on every answer: the strict policy for the API and the page, inline styles only for Swagger UI.</summary>
public sealed class SecurityHeaderTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    [Theory]
    [InlineData("/v1/gases")]
    [InlineData("/health/live")]
    [InlineData("/v1/evaluations/00000000-0000-7000-8000-000000000000")]
    public async Task Answer_CarriesTheStrictPolicyAndNoSniff(string path)
    {
        using var client = factory.CreateClient();
        using var response = await client.GetAsync(new Uri(path, UriKind.Relative));

        Assert.Equal(HostingExtensions.ContentSecurityPolicy, Assert.Single(response.Headers.GetValues("Content-Security-Policy")));
        Assert.DoesNotContain("unsafe", HostingExtensions.ContentSecurityPolicy, StringComparison.Ordinal);
        Assert.Equal("nosniff", Assert.Single(response.Headers.GetValues("X-Content-Type-Options")));
        Assert.Equal("no-referrer", Assert.Single(response.Headers.GetValues("Referrer-Policy")));
    }

    [Fact]
    public async Task SwaggerUi_AllowsInlineStylesButNeverInlineScript()
    {
        using var client = factory.CreateClient();
        using var response = await client.GetAsync(new Uri("/swagger/index.html", UriKind.Relative));

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var policy = Assert.Single(response.Headers.GetValues("Content-Security-Policy"));
        Assert.Contains("style-src 'self' 'unsafe-inline'", policy, StringComparison.Ordinal);
        Assert.Contains("script-src 'self';", policy, StringComparison.Ordinal);
    }
}
