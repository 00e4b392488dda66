using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using DischargeGuard.Audit;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// A JSON member named twice in its object is refused (400 naming the member's path) wherever a request is read: a
/// single evaluation, a JSON batch's items and its own <c>evaluations</c>, an NDJSON line, a gas composition and a
/// quantity object. Read last-wins, the evaluated value and the audited bytes would disagree; nothing is recorded.
/// </summary>
public sealed class DuplicateMemberTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    // The minimal request with a hole where a test puts its duplicate.
    private static string Request(string suction = "\"pressure\": \"1.0 bara\"", string gas = "\"preset\": \"dry-air\"", string top = "") =>
        "{\"asset\": \"K-101A\"," + top + " \"gas\": {" + gas + "}, \"stages\": [{\"suction\": {" + suction + ", \"temperature\": \"35 °C\"}, "
        + "\"discharge\": {\"pressure\": \"3 bara\"}, \"efficiency\": {\"isentropic\": 0.8}}]}";

    public static TheoryData<string, string> Duplicates => new()
    {
        { Request(suction: "\"pressure\": \"1.0 bara\", \"pressure\": \"2.6 bara\""), "stages[0].suction.pressure" },
        { Request(top: " \"asset\": \"C-204B\","), "asset" },
        { Request(gas: "\"composition\": {\"N2\": 0.79, \"O2\": 0.21, \"N2\": 0.5}"), "gas.composition.N2" },
        { Request(suction: "\"pressure\": {\"value\": 1.0, \"unit\": \"bara\", \"value\": 2.6}"), "stages[0].suction.pressure" },
    };

    [Theory]
    [MemberData(nameof(Duplicates))]
    public async Task Evaluate_WhenAMemberIsNamedTwice_Answers400NamingItsPathAndRecordsNothing(string body, string path)
    {
        var before = await CountAsync();

        using var response = await factory.EvaluateRawAsync(body);

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains("Duplicate", AssertEx.Error(problem, path), StringComparison.Ordinal);
        Assert.Equal(before, await CountAsync());
    }

    [Fact]
    public async Task Evaluate_WhenEveryMemberIsNamedOnce_StillAnswers200()
    {
        // The same documents with the duplicates taken out: the refusal is about the duplicate, not the shape.
        using var response = await factory.EvaluateRawAsync(Request(suction: "\"pressure\": {\"value\": 1.0, \"unit\": \"bara\"}", gas: "\"composition\": {\"N2\": 0.79, \"O2\": 0.21}"));
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
    }

    [Fact]
    public async Task JsonBatch_WhenEvaluationsIsNamedTwice_Answers400AndEvaluatesNeitherArray()
    {
        var before = await CountAsync();
        var body = "{\"evaluations\": [" + Request() + "], \"evaluations\": [" + Request() + ", " + Request() + "]}";

        using var response = await PostBatchAsync(body, "application/json");

        var problem = await AssertEx.ProblemAsync(response, HttpStatusCode.BadRequest, "invalid-request");
        Assert.Contains("Duplicate", AssertEx.Error(problem, "evaluations"), StringComparison.Ordinal);
        Assert.Equal(before, await CountAsync());
    }

    [Theory]
    [InlineData("application/json")]
    [InlineData("application/x-ndjson")]
    public async Task Batch_WhenOneItemNamesAMemberTwice_AnswersThatItem400WithItsPathAndRecordsOnlyTheOthers(string mediaType)
    {
        var before = await CountAsync();
        string[] items = [Request(), Request(suction: "\"pressure\": \"1.0 bara\", \"pressure\": \"2.6 bara\""), Request()];
        var body = mediaType == "application/json" ? "{\"evaluations\": [" + string.Join(',', items) + "]}" : string.Join('\n', items) + "\n";

        using var response = await PostBatchAsync(body, mediaType);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var text = await response.Content.ReadAsStringAsync();
        var results = mediaType == "application/json"
            ? JsonDocument.Parse(text).RootElement.GetProperty("results").EnumerateArray().ToArray()
            : text.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(l => JsonDocument.Parse(l).RootElement).ToArray();
        Assert.Equal([200, 400, 200], results.Select(r => r.GetProperty("status").GetInt32()));
        Assert.Contains("Duplicate", AssertEx.Error(results[1].GetProperty("problem"), "stages[0].suction.pressure"), StringComparison.Ordinal);
        Assert.Equal(before + 2, await CountAsync());
    }

    private async Task<HttpResponseMessage> PostBatchAsync(string body, string mediaType)
    {
        using var client = factory.CreateClient();
        using var content = new ByteArrayContent(Encoding.UTF8.GetBytes(body));
        content.Headers.ContentType = new MediaTypeHeaderValue(mediaType);
        return await client.PostAsync(new Uri("/v1/evaluations/batch", UriKind.Relative), content);
    }

    private async Task<int> CountAsync()
    {
        var n = 0;
        await foreach (var _ in factory.Services.GetRequiredService<IAuditStore>().QueryAsync(new AuditQuery(), CancellationToken.None))
        {
            n++;
        }

        return n;
    }
}
