using System.Net;
using System.Net.Http.Headers;
using System.Text;
using DischargeGuard.Api.Infrastructure.Security;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// A service without keys, reached by a browser on the same machine: another name rebound to 127.0.0.1 (DNS rebinding),
/// a page of another origin, and cross-site forms (which a browser sends without a preflight) must change nothing.
/// The service's own page, JSON/YAML/NDJSON bodies and requests carrying the intent header go on as before.
/// </summary>
public sealed class AnonymousBrowserTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    [Theory]
    [InlineData("http://evil.example/v1/rules")]
    [InlineData("http://evil.example:5080/health/ready")]
    [InlineData("http://127.0.0.2/v1/gases")]
    [InlineData("http://localhost.evil.example/")]
    [InlineData("http://192.168.1.20:5080/v1/rules")]
    public async Task Request_WhenTheHostIsNotALoopbackName_Answers421(string url)
    {
        using var client = factory.CreateClient();
        using var response = await client.GetAsync(new Uri(url));
        await AssertEx.ProblemAsync(response, HttpStatusCode.MisdirectedRequest, "cross-site-refused");
    }

    [Theory]
    [InlineData("http://localhost/v1/rules")]
    [InlineData("http://LOCALHOST:5080/v1/rules")]
    [InlineData("http://127.0.0.1:6000/v1/rules")]
    [InlineData("http://[::1]:5080/v1/rules")]
    public async Task Request_WhenTheHostIsALoopbackNameOnAnyPort_IsAnswered(string url)
    {
        using var client = factory.CreateClient();
        using var response = await client.GetAsync(new Uri(url));
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
    }

    [Fact]
    public async Task Evaluation_WhenAnEvilHostPostsJson_IsRefusedAndRecordsNothing()
    {
        using var client = factory.CreateClient();
        using var content = new StringContent(Requests.Minimal().ToJsonString(), Encoding.UTF8, "application/json");
        using var response = await client.PostAsync(new Uri("http://evil.example:5080/v1/evaluations"), content);
        await AssertEx.ProblemAsync(response, HttpStatusCode.MisdirectedRequest, "cross-site-refused");
    }

    [Theory]
    [InlineData("https://evil.example")]
    [InlineData("http://localhost:3000")] // another local site is another origin
    [InlineData("null")] // a sandboxed frame or a file
    public async Task Post_WhenTheOriginIsForeign_Answers403EvenForJson(string origin)
    {
        using var client = factory.CreateClient();
        using var request = new HttpRequestMessage(HttpMethod.Post, new Uri("/v1/evaluations", UriKind.Relative))
        {
            Content = new StringContent(Requests.Minimal().ToJsonString(), Encoding.UTF8, "application/json"),
        };
        request.Headers.Add("Origin", origin);
        request.Headers.Add(AnonymousBrowserGuard.IntentHeader, "1"); // the header does not excuse a foreign origin

        using var response = await client.SendAsync(request);

        await AssertEx.ProblemAsync(response, HttpStatusCode.Forbidden, "cross-site-refused");
    }

    [Fact]
    public async Task Get_WhenTheOriginIsForeign_IsAnsweredWithoutCorsHeaders()
    {
        // Reading is not refused here: without CORS headers the foreign page's script cannot see the answer.
        using var client = factory.CreateClient();
        using var request = new HttpRequestMessage(HttpMethod.Get, new Uri("/v1/rules", UriKind.Relative));
        request.Headers.Add("Origin", "https://evil.example");
        using var response = await client.SendAsync(request);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.False(response.Headers.Contains("Access-Control-Allow-Origin"));
    }

    [Fact]
    public async Task Post_WhenTheOriginIsTheServicesOwn_IsAnswered()
    {
        using var client = factory.CreateClient();
        using var request = new HttpRequestMessage(HttpMethod.Post, new Uri("/v1/evaluations", UriKind.Relative))
        {
            Content = new StringContent(Requests.Minimal().ToJsonString(), Encoding.UTF8, "application/json"),
        };
        request.Headers.Add("Origin", "http://localhost");
        using var response = await client.SendAsync(request);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
    }

    [Theory]
    [InlineData("/v1/rules/reload")]
    [InlineData("/v1/evaluations/0192d5a0-0000-7000-8000-000000000000/replay")]
    public async Task Post_WhenItHasNoBodyAndNoIntentHeader_Answers403(string path)
    {
        using var client = factory.CreateClient();
        using var response = await client.PostAsync(new Uri(path, UriKind.Relative), content: null);
        await AssertEx.ProblemAsync(response, HttpStatusCode.Forbidden, "cross-site-refused");

        // The same with the header goes through to the endpoint (a reload, a replay's 404 for an unknown id).
        using var meant = await client.PostWithoutBodyAsync(path);
        Assert.True(meant.StatusCode is HttpStatusCode.OK or HttpStatusCode.NotFound, $"{(int)meant.StatusCode}");
    }

    [Theory]
    [InlineData("/v1/rules/reload", "application/x-www-form-urlencoded", "a=1")]
    [InlineData("/v1/rules/check", "text/plain", "schemaVersion: 1\n")]
    [InlineData("/v1/evaluations", "text/plain; charset=utf-8", "{}")]
    [InlineData("/v1/evaluations/batch", "multipart/form-data; boundary=x", "--x--\r\n")]
    public async Task Post_WhenTheBodyIsOfAFormContentType_Answers415(string path, string contentType, string body)
    {
        using var client = factory.CreateClient();
        using var content = new ByteArrayContent(Encoding.UTF8.GetBytes(body));
        content.Headers.ContentType = MediaTypeHeaderValue.Parse(contentType);
        using var response = await client.PostAsync(new Uri(path, UriKind.Relative), content);
        await AssertEx.ProblemAsync(response, HttpStatusCode.UnsupportedMediaType, "cross-site-refused");
    }

    [Fact]
    public async Task Check_WhenYamlIsSentAsTextPlainWithTheIntentHeader_IsChecked()
    {
        using var client = factory.CreateClient();
        using var request = new HttpRequestMessage(HttpMethod.Post, new Uri("/v1/rules/check", UriKind.Relative))
        {
            Content = new StringContent("schemaVersion: 1\n", Encoding.UTF8, "text/plain"),
        };
        request.Headers.Add(AnonymousBrowserGuard.IntentHeader, "1");
        using var response = await client.SendAsync(request);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
    }

    [Theory]
    [InlineData("/v1/evaluations", "application/json")]
    [InlineData("/v1/evaluations/batch", "application/x-ndjson")]
    [InlineData("/v1/rules/check", "application/yaml")]
    public async Task Post_WhenTheBodyIsJsonYamlOrNdjson_IsAnsweredWithoutTheHeader(string path, string contentType)
    {
        using var client = factory.CreateClient();
        var body = contentType == "application/yaml" ? File.ReadAllText(Path.Combine(factory.RulesDirectory, "default.yaml")) : Requests.Minimal().ToJsonString() + "\n";
        using var content = new StringContent(body, Encoding.UTF8, contentType);
        using var response = await client.PostAsync(new Uri(path, UriKind.Relative), content);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
    }
}

/// <summary>With keys configured the guard stays out of the way: a key is what a cross-site page lacks.</summary>
public sealed class KeyedBrowserGuardTests(KeyedServiceFactory factory) : IClassFixture<KeyedServiceFactory>
{
    [Fact]
    public async Task Reload_WhenAKeyIsSentWithoutBodyOrIntentHeader_IsAnswered()
    {
        using var admin = factory.ClientWith(factory.KeyFor(Roles.Admin));
        using var response = await admin.PostAsync(new Uri("/v1/rules/reload", UriKind.Relative), content: null);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
    }
}
