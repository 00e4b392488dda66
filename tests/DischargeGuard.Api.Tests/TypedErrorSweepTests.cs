using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;

namespace DischargeGuard.Api.Tests;

/// <summary>The service with small body limits (the batch's too), so an oversized body costs the sweep a few kilobytes.</summary>
public sealed class SweepServiceFactory : ServiceFactory
{
    public const int MaxBody = 4096;

    public SweepServiceFactory()
        : base(new Dictionary<string, string?>
        {
            ["DischargeGuard:MaxRequestBodyBytes"] = MaxBody.ToString(System.Globalization.CultureInfo.InvariantCulture),
            ["DischargeGuard:MaxBatchBodyBytes"] = MaxBody.ToString(System.Globalization.CultureInfo.InvariantCulture),
        })
    {
    }
}

/// <summary>
/// Sweeps every operation of the served OpenAPI document with the inputs a framework would refuse on its own (a bad
/// query value of each parameter's type, a bad path value, no content type, malformed JSON, an oversized body, a method
/// the path does not take, a path that does not exist): every answer is a problem with the service's type and code,
/// never a 500 and never the framework's bare one; parameter errors name the parameter and its accepted form.
/// </summary>
public sealed class TypedErrorSweepTests(SweepServiceFactory factory) : IClassFixture<SweepServiceFactory>
{
    private const string Prefix = "urn:dischargeguard:problem:";

    private sealed record Operation(string Method, string Path, JsonElement Definition);

    private async Task<(HttpClient Client, JsonElement Document)> ClientAndDocumentAsync()
    {
        var client = factory.CreateClient();
        var text = await client.GetStringAsync(new Uri("/swagger/v1/swagger.json", UriKind.Relative));
        return (client, JsonDocument.Parse(text).RootElement.Clone());
    }

    private static IEnumerable<Operation> Operations(JsonElement document) =>
        document.GetProperty("paths").EnumerateObject().SelectMany(p => p.Value.EnumerateObject().Select(o => new Operation(o.Name.ToUpperInvariant(), p.Name, o.Value)));

    private static string Concrete(string path) => path.Replace("{id}", "0197a4e2-6c1d-7b3a-9f00-2d5e8c41a7b6", StringComparison.Ordinal);

    // The problem's own checks: its content type, the service's type and the code that names it, and no server error.
    private static async Task<JsonElement> AssertTypedProblemAsync(HttpResponseMessage response, string what)
    {
        var text = await response.Content.ReadAsStringAsync();
        Assert.True((int)response.StatusCode is >= 400 and < 500, $"{what}: expected a 4xx problem, got {(int)response.StatusCode}: {text}");
        Assert.True(response.Content.Headers.ContentType?.MediaType == "application/problem+json", $"{what}: not a problem document ({response.Content.Headers.ContentType}): {text}");
        var body = JsonDocument.Parse(text).RootElement.Clone();
        var type = body.GetProperty("type").GetString()!;
        Assert.True(type.StartsWith(Prefix, StringComparison.Ordinal), $"{what}: framework type '{type}': {text}");
        Assert.Equal(type[Prefix.Length..], body.GetProperty("code").GetString());
        Assert.Equal((int)response.StatusCode, body.GetProperty("status").GetInt32());
        Assert.False(string.IsNullOrWhiteSpace(body.GetProperty("title").GetString()), what);
        return body;
    }

    private static HttpRequestMessage Request(string method, string path, string? body = null, string? contentType = null)
    {
        var request = new HttpRequestMessage(new HttpMethod(method), new Uri(path, UriKind.Relative));
        // Past the browser guard of a service without keys: these requests are meant.
        request.Headers.Add(Intent.Header, "1");
        if (body is not null)
        {
            request.Content = new ByteArrayContent(Encoding.UTF8.GetBytes(body));
            if (contentType is not null)
            {
                request.Content.Headers.ContentType = MediaTypeHeaderValue.Parse(contentType);
            }
        }

        return request;
    }

    // A value the parameter's schema refuses, and a word its message must contain to say what is accepted instead.
    private static (string Value, string Accepted)? BadValue(JsonElement parameter, JsonElement document)
    {
        var schema = parameter.GetProperty("schema");
        if (schema.TryGetProperty("$ref", out var reference))
        {
            var component = document.GetProperty("components").GetProperty("schemas").GetProperty(reference.GetString()!.Split('/')[^1]);
            var words = component.GetProperty("enum").EnumerateArray().Select(w => w.GetString()!).ToArray();
            return ("no-such-word", string.Join(", ", words));
        }

        var type = schema.TryGetProperty("type", out var t) ? t.GetString() : null;
        var format = schema.TryGetProperty("format", out var f) ? f.GetString() : null;
        return (type, format) switch
        {
            ("boolean", _) => ("maybe", "true or false"),
            ("integer", _) when schema.TryGetProperty("minimum", out var min) => ("abc", $"from {min.GetRawText()} to {schema.GetProperty("maximum").GetRawText()}"),
            ("integer", _) => ("abc", "integer"),
            ("string", "date-time") => ("yesterday", "ISO 8601"),
            ("string", "uuid") => ("not-a-uuid", "UUID"),
            _ => null,
        };
    }

    [Fact]
    public async Task EveryQueryParameter_WhenGivenAValueOfTheWrongForm_Answers400NamingItAndItsAcceptedForm()
    {
        var (client, document) = await ClientAndDocumentAsync();
        using var owned = client;
        var swept = 0;
        foreach (var op in Operations(document))
        {
            if (!op.Definition.TryGetProperty("parameters", out var parameters))
            {
                continue;
            }

            foreach (var parameter in parameters.EnumerateArray().Where(p => p.GetProperty("in").GetString() == "query"))
            {
                if (BadValue(parameter, document) is not { } bad)
                {
                    continue;
                }

                var name = parameter.GetProperty("name").GetString()!;
                var what = $"{op.Method} {op.Path}?{name}={bad.Value}";
                var json = op.Definition.TryGetProperty("requestBody", out _) ? "{}" : null;
                using var response = await client.SendAsync(Request(op.Method, Concrete(op.Path) + "?" + name + "=" + bad.Value, json, json is null ? null : "application/json"));

                var problem = await AssertTypedProblemAsync(response, what);
                Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
                Assert.Equal("invalid-request", problem.GetProperty("code").GetString());
                var message = AssertEx.Error(problem, name);
                Assert.Contains(bad.Accepted, message, StringComparison.Ordinal);
                swept++;
            }
        }

        // from, to and limit of the list; from and to of the export; curve and detail of the single and batch posts; verdict twice.
        Assert.True(swept >= 11, $"only {swept} query parameters had a checkable form");
    }

    [Fact]
    public async Task EveryOperation_WhenSentWhatTheFrameworkRefuses_AnswersTheServicesTypedProblem()
    {
        var (client, document) = await ClientAndDocumentAsync();
        using var owned = client;
        foreach (var op in Operations(document))
        {
            var path = Concrete(op.Path);
            var bodyTypes = op.Definition.TryGetProperty("requestBody", out var requestBody)
                ? requestBody.GetProperty("content").EnumerateObject().Select(c => c.Name).ToArray()
                : [];
            var json = bodyTypes.Contains("application/json");

            // A path value of the wrong form does not match the route: a typed 404.
            if (op.Path.Contains("{id}", StringComparison.Ordinal))
            {
                using var badId = await client.SendAsync(Request(op.Method, op.Path.Replace("{id}", "not-a-uuid", StringComparison.Ordinal), json ? "{}" : null, json ? "application/json" : null));
                var problem = await AssertTypedProblemAsync(badId, $"{op.Method} {op.Path} with id not-a-uuid");
                Assert.Equal("not-found", problem.GetProperty("code").GetString());
            }

            // A method the path does not take: a typed 405 naming the ones it does.
            using (var wrongMethod = await client.SendAsync(Request("PATCH", path, "{}", "application/json")))
            {
                var problem = await AssertTypedProblemAsync(wrongMethod, $"PATCH {op.Path}");
                Assert.Equal(HttpStatusCode.MethodNotAllowed, wrongMethod.StatusCode);
                Assert.Equal("method-not-allowed", problem.GetProperty("code").GetString());
            }

            // Below the path, nothing: a typed 404.
            using (var nowhere = await client.SendAsync(Request(op.Method, path + "/no-such-thing", json ? "{}" : null, json ? "application/json" : null)))
            {
                await AssertTypedProblemAsync(nowhere, $"{op.Method} {op.Path}/no-such-thing");
            }

            if (!json)
            {
                continue;
            }

            // A JSON body without its content type: a typed 415 keyed by the header.
            using (var noType = await client.SendAsync(Request(op.Method, path, "{}")))
            {
                var problem = await AssertTypedProblemAsync(noType, $"{op.Method} {op.Path} without Content-Type");
                Assert.Equal(HttpStatusCode.UnsupportedMediaType, noType.StatusCode);
                Assert.Equal("unsupported-media-type", problem.GetProperty("code").GetString());
                Assert.Contains("application/json", AssertEx.Error(problem, "Content-Type"), StringComparison.Ordinal);
            }

            // Malformed JSON: a typed 400.
            using (var malformed = await client.SendAsync(Request(op.Method, path, "{\"asset\": ", "application/json")))
            {
                var problem = await AssertTypedProblemAsync(malformed, $"{op.Method} {op.Path} with malformed JSON");
                Assert.Equal(HttpStatusCode.BadRequest, malformed.StatusCode);
                Assert.Equal("invalid-request", problem.GetProperty("code").GetString());
            }

            // A declared length over the limit: a typed 413, before the body is read.
            using (var large = await client.SendAsync(Request(op.Method, path, "{\"asset\": \"" + new string('a', SweepServiceFactory.MaxBody) + "\"}", "application/json")))
            {
                var problem = await AssertTypedProblemAsync(large, $"{op.Method} {op.Path} with an oversized body");
                Assert.Equal(HttpStatusCode.RequestEntityTooLarge, large.StatusCode);
                Assert.Equal("payload-too-large", problem.GetProperty("code").GetString());
            }
        }
    }

    [Theory]
    [InlineData("/v1/evaluations?from=yesterday", "from", "ISO 8601")]
    [InlineData("/v1/evaluations?limit=abc", "limit", "an integer from 1 to 1000")]
    [InlineData("/v1/evaluations?limit=0", "limit", "from 1 to 1000")]
    [InlineData("/v1/evaluations?verdict=maybe", "verdict", "pass, review, fail")]
    [InlineData("/v1/evaluations/export?to=soon", "to", "ISO 8601")]
    public async Task List_WhenAQueryValueIsOfTheWrongForm_Answers400WithTheParametersForm(string path, string name, string accepted)
    {
        using var client = factory.CreateClient();
        using var response = await client.GetAsync(new Uri(path, UriKind.Relative));

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains(accepted, AssertEx.Error(problem, name), StringComparison.Ordinal);
    }

    [Fact]
    public async Task List_WhenSeveralQueryValuesAreBad_NamesEveryOne()
    {
        using var client = factory.CreateClient();
        using var response = await client.GetAsync(new Uri("/v1/evaluations?from=yesterday&limit=abc&verdict=meh", UriKind.Relative));

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Equal(["from", "limit", "verdict"], problem.GetProperty("errors").EnumerateObject().Select(e => e.Name).Order(StringComparer.Ordinal));
    }

    [Fact]
    public async Task Evaluate_WhenDetailIsUnknownAndTheBodyInvalid_NamesTheParameterBeforeTheBody()
    {
        // The query is checked before the body is validated, so the caller sees the parameter it mistyped.
        using var response = await factory.EvaluateAsync(new System.Text.Json.Nodes.JsonObject(), "?curve=maybe&detail=short");

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        var errors = problem.GetProperty("errors");
        Assert.Contains("compact, full", errors.GetProperty("detail")[0].GetString(), StringComparison.Ordinal);
        Assert.Contains("true or false", errors.GetProperty("curve")[0].GetString(), StringComparison.Ordinal);
        Assert.False(errors.TryGetProperty("stages", out _));
    }

    [Fact]
    public async Task Evaluate_WhenTheFieldOfAMalformedValueHasASpeciesName_NamesItAsTheValidatorDoes()
    {
        // A malformed fraction of n-butane and an invalid one must name the same field: gas.composition.n-C4H10.
        using var response = await factory.EvaluateRawAsync("""{"asset": "K-101A", "gas": {"composition": {"n-C4H10": "half"}}}""");

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        AssertEx.Error(problem, "gas.composition.n-C4H10");
    }

    [Fact]
    public async Task OpenApi_WhenServed_PublishesClosedQueryVocabulariesAsEnumsAndTheLimitsRange()
    {
        var (client, document) = await ClientAndDocumentAsync();
        using var owned = client;
        JsonElement Parameter(string path, string method, string name) =>
            document.GetProperty("paths").GetProperty(path).GetProperty(method).GetProperty("parameters").EnumerateArray().Single(p => p.GetProperty("name").GetString() == name);

        foreach (var path in new[] { "/v1/evaluations", "/v1/evaluations/batch" })
        {
            Assert.Equal("#/components/schemas/AnswerDetail", Parameter(path, "post", "detail").GetProperty("schema").GetProperty("$ref").GetString());
        }

        foreach (var path in new[] { "/v1/evaluations", "/v1/evaluations/export" })
        {
            Assert.Equal("#/components/schemas/Verdict", Parameter(path, "get", "verdict").GetProperty("schema").GetProperty("$ref").GetString());
        }

        var detail = document.GetProperty("components").GetProperty("schemas").GetProperty("AnswerDetail");
        Assert.Equal(["compact", "full"], detail.GetProperty("enum").EnumerateArray().Select(e => e.GetString()));
        var limit = Parameter("/v1/evaluations", "get", "limit").GetProperty("schema");
        Assert.Equal(1, limit.GetProperty("minimum").GetInt32());
        Assert.Equal(Audit.AuditQuery.MaxPageSize, limit.GetProperty("maximum").GetInt32());
    }
}
