using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using DischargeGuard.Audit;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// POST /v1/evaluations/batch: every item answered and audited as if posted alone (its own id and record, byte-identical
/// to the answer), in order, in JSON and NDJSON; a bad item never fails the others; limits refuse before evaluating.
/// </summary>
public abstract class BatchEndpointContract(ServiceFactory factory)
{
    private ServiceFactory _factory
    {
        get
        {
            factory.Require();
            return factory;
        }
    }

    [SkippableFact]
    public async Task Batch_WhenItemsAreGoodBadAndImpossible_AnswersEachInOrderAndAuditsOnlyTheGoodOnes()
    {
        var before = await CountAsync();
        var missingAsset = Requests.Minimal();
        missingAsset.Remove("asset");
        var items = new JsonArray(
            Requests.Minimal(),
            missingAsset,
            Requests.Minimal(dischargePressure: "0.5 bara"), // below suction: 422
            Requests.PassingStage());

        using var response = await PostJsonAsync(new JsonObject { ["evaluations"] = items }.ToJsonString());

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("application/json", response.Content.Headers.ContentType?.MediaType);
        var results = (await Json.ReadAsync(response)).GetProperty("results");
        Assert.Equal(4, results.GetArrayLength());
        Assert.Equal([0, 1, 2, 3], results.EnumerateArray().Select(r => r.GetProperty("index").GetInt32()));
        Assert.Equal([200, 400, 422, 200], results.EnumerateArray().Select(r => r.GetProperty("status").GetInt32()));

        var invalid = results[1].GetProperty("problem");
        Assert.Equal("urn:dischargeguard:problem:invalid-request", invalid.GetProperty("type").GetString());
        Assert.True(invalid.GetProperty("errors").TryGetProperty("asset", out _), invalid.ToString());
        Assert.Equal(422, results[2].GetProperty("problem").GetProperty("status").GetInt32());
        Assert.True(results[2].GetProperty("problem").GetProperty("errors").TryGetProperty("stages[0].discharge.pressure", out _), results[2].ToString());

        // Each good item has its own record, whose stored response is the batch's answer for it, byte for byte.
        var ids = new[] { results[0], results[3] }.Select(r => r.GetProperty("evaluation").GetProperty("id").GetGuid()).ToArray();
        Assert.NotEqual(ids[0], ids[1]);
        var store = _factory.Services.GetRequiredService<IAuditStore>();
        foreach (var (id, result) in ids.Zip(new[] { results[0], results[3] }))
        {
            var record = await store.GetAsync(id, CancellationToken.None);
            Assert.NotNull(record);
            Assert.Equal(result.GetProperty("evaluation").GetRawText(), Encoding.UTF8.GetString(record.Response));
            Assert.Equal(result.GetProperty("evaluation").GetProperty("verdict").GetString(), record.Verdict);
        }

        Assert.Equal(before + 2, await CountAsync());
    }

    [SkippableFact]
    public async Task Batch_WhenItemIsStored_ItsRequestIsTheItemAsSent()
    {
        const string item = """{ "asset" : "K-101A", "gas": {"preset": "dry-air"}, "stages": [{"suction": {"pressure": "1 bara", "temperature": "35 °C"}, "discharge": {"pressure": "3 bara"}, "efficiency": {"isentropic": 0.8}}] }""";

        using var response = await PostJsonAsync("{\"evaluations\": [" + item + "]}");

        var result = (await Json.ReadAsync(response)).GetProperty("results")[0];
        var record = await _factory.Services.GetRequiredService<IAuditStore>().GetAsync(result.GetProperty("evaluation").GetProperty("id").GetGuid(), CancellationToken.None);
        Assert.Equal(item, Encoding.UTF8.GetString(record!.Request));
    }

    [SkippableFact]
    public async Task Batch_WhenNdjson_AnswersOneLinePerItemAndTakesABadLineAsThatItemsProblem()
    {
        var body = string.Join('\n',
            Requests.Minimal().ToJsonString(),
            "",
            "{ this is not json",
            Requests.Minimal(suctionTemperature: "40 °C").ToJsonString() + "\r") + "\n";

        using var content = new ByteArrayContent(Encoding.UTF8.GetBytes(body));
        content.Headers.ContentType = new MediaTypeHeaderValue("application/x-ndjson");
        using var client = _factory.CreateClient();
        using var response = await client.PostAsync(new Uri("/v1/evaluations/batch", UriKind.Relative), content);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("application/x-ndjson", response.Content.Headers.ContentType?.MediaType);
        var lines = (await response.Content.ReadAsStringAsync()).Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(3, lines.Length);
        var parsed = lines.Select(l => JsonDocument.Parse(l).RootElement.Clone()).ToArray();
        Assert.Equal([0, 1, 2], parsed.Select(r => r.GetProperty("index").GetInt32()));
        Assert.Equal([200, 400, 200], parsed.Select(r => r.GetProperty("status").GetInt32()));
        Assert.Equal("invalid-request", parsed[1].GetProperty("problem").GetProperty("code").GetString());
    }

    [SkippableFact]
    public async Task Batch_WhenJsonButAcceptAsksForNdjson_AnswersNdjson()
    {
        using var client = _factory.CreateClient();
        using var request = new HttpRequestMessage(HttpMethod.Post, new Uri("/v1/evaluations/batch", UriKind.Relative))
        {
            Content = new StringContent(new JsonObject { ["evaluations"] = new JsonArray(Requests.Minimal(), Requests.Minimal()) }.ToJsonString(), Encoding.UTF8, "application/json"),
        };
        request.Headers.Accept.Add(new MediaTypeWithQualityHeaderValue("application/x-ndjson"));

        using var response = await client.SendAsync(request);

        Assert.Equal("application/x-ndjson", response.Content.Headers.ContentType?.MediaType);
        Assert.Equal(2, (await response.Content.ReadAsStringAsync()).Split('\n', StringSplitOptions.RemoveEmptyEntries).Length);
    }

    [SkippableFact]
    public async Task Batch_WhenTenThousandItems_AnswersAndAuditsEveryOne()
    {
        var before = await CountAsync();
        var item = Requests.Minimal().ToJsonString();
        var body = "{\"evaluations\":[" + string.Join(',', Enumerable.Repeat(item, 10_000)) + "]}";

        using var response = await PostJsonAsync(body);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var results = (await Json.ReadAsync(response)).GetProperty("results");
        Assert.Equal(10_000, results.GetArrayLength());
        Assert.All(results.EnumerateArray(), r => Assert.Equal(200, r.GetProperty("status").GetInt32()));
        Assert.Equal(10_000, results.EnumerateArray().Select(r => r.GetProperty("evaluation").GetProperty("id").GetGuid()).Distinct().Count());
        Assert.Equal(before + 10_000, await CountAsync());
    }

    [SkippableFact]
    public async Task Batch_WhenMoreThanTenThousandItems_Answers413AndStoresNothing()
    {
        var before = await CountAsync();
        var body = "{\"evaluations\":[" + string.Join(',', Enumerable.Repeat(Requests.Minimal().ToJsonString(), 10_001)) + "]}";

        using var response = await PostJsonAsync(body);

        await AssertEx.ProblemAsync(response, HttpStatusCode.RequestEntityTooLarge, "payload-too-large");
        Assert.Equal(before, await CountAsync());
    }

    [SkippableTheory]
    [InlineData("[]", "")]
    [InlineData("{\"evaluations\": {}}", "evaluations")]
    [InlineData("{\"items\": []}", "items")]
    [InlineData("{\"evaluations\": []}", "evaluations")]
    [InlineData("{\"evaluations\": [{\"asset\": \"K-101A\"}", "")]
    public async Task Batch_WhenBodyIsNotABatch_Answers400NamingTheField(string body, string field)
    {
        var before = await CountAsync();

        using var response = await PostJsonAsync(body);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        AssertEx.Error(problem, field);
        Assert.Equal(before, await CountAsync());
    }

    [SkippableFact]
    public async Task Batch_WhenMediaTypeIsNeitherJsonNorNdjson_Answers415()
    {
        using var content = new StringContent("asset,stage\nK-101A,1\n", Encoding.UTF8, "text/csv");
        using var client = _factory.CreateClient();

        using var response = await client.PostAsync(new Uri("/v1/evaluations/batch", UriKind.Relative), content);

        Assert.Equal(HttpStatusCode.UnsupportedMediaType, response.StatusCode);
    }

    private async Task<HttpResponseMessage> PostJsonAsync(string body)
    {
        using var client = _factory.CreateClient();
        using var content = new StringContent(body, Encoding.UTF8, "application/json");
        return await client.PostAsync(new Uri("/v1/evaluations/batch", UriKind.Relative), content);
    }

    private async Task<int> CountAsync()
    {
        var store = _factory.Services.GetRequiredService<IAuditStore>();
        var n = 0;
        await foreach (var _ in store.QueryAsync(new AuditQuery(), CancellationToken.None))
        {
            n++;
        }

        return n;
    }
}

/// <summary>The batch contract on the default SQLite audit file.</summary>
public sealed class BatchEndpointTests(ServiceFactory factory) : BatchEndpointContract(factory), IClassFixture<ServiceFactory>;

/// <summary>The batch contract with the audit store on a real PostgreSQL server.</summary>
public sealed class PostgresBatchEndpointTests(PostgresServiceFactory factory) : BatchEndpointContract(factory), IClassFixture<PostgresServiceFactory>;
