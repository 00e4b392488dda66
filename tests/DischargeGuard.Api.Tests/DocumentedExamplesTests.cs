using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;
using System.Text.RegularExpressions;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Every example the README and the OpenAPI document show runs as shown: the README's curl bodies (and its two-stage
/// variant) and the OpenAPI request examples are evaluated 200, and the README's GET examples answer 200. The README's
/// two-stage example and the Swagger example were once refused 422 ("water partial pressure … is above its saturation
/// pressure") at a saturated intercooler outlet.
/// </summary>
public sealed partial class DocumentedExamplesTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    private static string Readme => File.ReadAllText(Path.Combine(RepositoryRoot.Path, "README.md"));

    [GeneratedRegex(@"curl -s http://127\.0\.0\.1:5080(?<path>/v1/evaluations[^\s']*) -H 'Content-Type: application/json' -d '(?<body>\{.*?\n\})'", RegexOptions.Singleline)]
    private static partial Regex CurlPost();

    [GeneratedRegex(@"A two-stage version adds a second stage[^`]*`(?<stage>\{.*?\})`\.", RegexOptions.Singleline)]
    private static partial Regex TwoStageVariant();

    [GeneratedRegex(@"curl -s '?http://127\.0\.0\.1:5080(?<path>/v1/rules[^\s'`]*)'?`")]
    private static partial Regex CurlGet();

    /// <summary>The README's first curl body: the one-stage example a new user runs first.</summary>
    internal static string ReadmeOneStageBody() => CurlPost().Match(Readme).Groups["body"].Value;

    public static TheoryData<string> ReadmeBodies()
    {
        var data = new TheoryData<string>();
        foreach (Match m in CurlPost().Matches(Readme))
        {
            data.Add(m.Groups["body"].Value);
        }

        return data;
    }

    [Fact]
    public void Readme_HasItsExamples()
    {
        Assert.NotEmpty(CurlPost().Matches(Readme));
        Assert.True(TwoStageVariant().IsMatch(Readme), "the two-stage variant sentence is gone from the README");
    }

    [Theory]
    [MemberData(nameof(ReadmeBodies))]
    public async Task ReadmeExample_AsShown_Evaluates(string body)
    {
        var response = await factory.EvaluateRawAsync(body);
        Assert.True(response.StatusCode == HttpStatusCode.OK, await response.Content.ReadAsStringAsync());
    }

    [Fact]
    public async Task ReadmeTwoStageExample_WithItsSaturatedIntercoolerOutlet_Evaluates()
    {
        var body = JsonNode.Parse(CurlPost().Match(Readme).Groups["body"].Value)!.AsObject();
        var second = JsonNode.Parse(TwoStageVariant().Match(Readme).Groups["stage"].Value)!.AsObject();
        if (body["stages"]![0]!["equipment"] is { } equipment)
        {
            second["equipment"] = equipment.DeepClone();
        }

        body["stages"]!.AsArray().Add(second);
        var response = await factory.EvaluateRawAsync(body.ToJsonString());
        var text = await response.Content.ReadAsStringAsync();

        Assert.True(response.StatusCode == HttpStatusCode.OK, text);
        var answer = JsonDocument.Parse(text).RootElement;
        Assert.Equal(2, answer.At("stages").GetArrayLength());
    }

    [Fact]
    public async Task ReadmeGetExamples_Answer200()
    {
        var paths = CurlGet().Matches(Readme).Select(m => m.Groups["path"].Value).Distinct().ToList();
        Assert.NotEmpty(paths);
        foreach (var path in paths)
        {
            var (response, body) = await factory.GetJsonAsync(path);
            Assert.True(response.StatusCode == HttpStatusCode.OK, path + ": " + body);
        }
    }

    [Fact]
    public async Task OpenApiRequestExamples_AsShown_Evaluate()
    {
        var (_, document) = await factory.GetJsonAsync("/swagger/v1/swagger.json");
        var examples = new List<(string Path, string Body)>();
        foreach (var path in document.At("paths").EnumerateObject())
        {
            if (!path.Value.TryGetProperty("post", out var post) || !post.TryGetProperty("requestBody", out var requestBody))
            {
                continue;
            }

            foreach (var media in requestBody.At("content").EnumerateObject().Where(m => m.Name == "application/json"))
            {
                if (media.Value.TryGetProperty("example", out var example))
                {
                    examples.Add((path.Name, example.GetRawText()));
                }

                if (media.Value.TryGetProperty("schema", out var schema) && schema.TryGetProperty("$ref", out var reference))
                {
                    var name = reference.GetString()!.Split('/')[^1];
                    if (document.At("components").At("schemas").TryGetProperty(name, out var component))
                    {
                        if (component.TryGetProperty("example", out var one))
                        {
                            examples.Add((path.Name, one.GetRawText()));
                        }

                        if (component.TryGetProperty("examples", out var list))
                        {
                            examples.AddRange(list.EnumerateArray().Select(e => (path.Name, e.GetRawText())));
                        }
                    }
                }
            }
        }

        var evaluations = examples.Where(e => e.Path == "/v1/evaluations").ToList();
        Assert.NotEmpty(evaluations);
        foreach (var (_, body) in evaluations)
        {
            var response = await factory.EvaluateRawAsync(body);
            Assert.True(response.StatusCode == HttpStatusCode.OK, await response.Content.ReadAsStringAsync());
        }
    }
}
