using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Input nested far deeper than any real document: 40 000 '[' (80 KB with the closing ones) had overflowed the stack
/// while the rule file's tree was built — no handler can catch that, so the process died, on a check, on a watched
/// reload and at every start. Each is now a located error; the same depth in JSON bodies is a 400.
/// </summary>
public sealed class DeepNestingTests
{
    private const int Depth = 40_000;

    private static string DeepYaml() => new string('[', Depth) + new string(']', Depth) + "\n";

    [Fact]
    public async Task Check_WhenTheCandidateNests40000Deep_AnswersInvalidWithLineAndColumn()
    {
        await using var factory = new ServiceFactory();
        using var client = factory.CreateClient();
        using var content = new StringContent(DeepYaml(), Encoding.UTF8, "application/yaml");

        using var response = await client.PostAsync(new Uri("/v1/rules/check?name=deep.yaml", UriKind.Relative), content);

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var body = await Json.ReadAsync(response);
        Assert.False(body.At("valid").GetBoolean());
        var error = Assert.Single(body.At("errors").EnumerateArray());
        Assert.Equal("deep.yaml", error.At("file").GetString());
        Assert.Equal(1, error.At("line").GetInt64());
        Assert.Equal(33, error.At("column").GetInt64()); // the 33rd '[' opens level 33, one beyond the limit of 32
        Assert.Contains("nests deeper than 32", error.At("message").GetString(), StringComparison.Ordinal);

        // The service is still there.
        var (ready, _) = await factory.GetJsonAsync("/health/ready");
        Assert.Equal(HttpStatusCode.OK, ready.StatusCode);
    }

    [Fact]
    public async Task WatchedDirectory_WhenA40000DeepFileIsDropped_StaysUpAndKeepsTheLastGoodSet()
    {
        await using var factory = ServiceFactory.WatchingRules();
        var (_, before) = await factory.GetJsonAsync("/v1/rules");
        var digest = before.At("digest").GetString();

        await File.WriteAllTextAsync(Path.Combine(factory.RulesDirectory, "sites", "marlow-fen.yaml"), DeepYaml());

        var refused = await PollRulesAsync(factory, b => b.At("lastReloadErrors").GetArrayLength() > 0);
        var error = Assert.Single(refused.At("lastReloadErrors").EnumerateArray());
        Assert.Equal("sites/marlow-fen.yaml", error.At("file").GetString());
        Assert.Equal(1, error.At("line").GetInt64());
        Assert.Equal(digest, refused.At("digest").GetString());
        using var evaluated = await factory.EvaluateAsync(Requests.PassingStage());
        Assert.Equal(HttpStatusCode.OK, evaluated.StatusCode);
        Assert.Equal(digest, (await Json.ReadAsync(evaluated)).At("ruleSet.digest").GetString());
    }

    [Fact]
    public async Task StartUp_WhenARuleFileNests40000Deep_IsRefusedWithALogLineNamingFileLineAndReason()
    {
        using var folder = new TempFolder();
        var rules = Path.Combine(folder.Path, "service", "rules");
        Directory.CreateDirectory(rules);
        foreach (var file in Directory.EnumerateFiles(Path.Combine(RepoPaths.Root, "rules"), "*", SearchOption.AllDirectories))
        {
            var target = Path.Combine(rules, Path.GetRelativePath(Path.Combine(RepoPaths.Root, "rules"), file));
            Directory.CreateDirectory(Path.GetDirectoryName(target)!);
            File.Copy(file, target);
        }

        await File.WriteAllTextAsync(Path.Combine(rules, "assets", "C-204B.yaml"), "schemaVersion: 1\nlayer:\n  kind: " + DeepYaml());

        // The process ends instead of becoming ready; its fatal log line says which file, where and why.
        var refused = await Assert.ThrowsAsync<InvalidOperationException>(() => ServiceProcess.StartAsync(folder.Path, "service", new Dictionary<string, string>()));
        Assert.Contains("stopped during start-up", refused.Message, StringComparison.Ordinal);
        Assert.Contains("assets/C-204B.yaml", refused.Message, StringComparison.Ordinal);
        Assert.Contains(":3:", refused.Message, StringComparison.Ordinal);
        Assert.Contains("nests deeper than 32", refused.Message, StringComparison.Ordinal);
        Assert.DoesNotContain("Stack overflow", refused.Message, StringComparison.OrdinalIgnoreCase);
    }

    [Theory]
    [InlineData("/v1/evaluations", "application/json")]
    [InlineData("/v1/evaluations/batch", "application/json")]
    [InlineData("/v1/evaluations/batch", "application/x-ndjson")]
    public async Task Body_WhenJsonNests40000Deep_IsRefusedAsAProblemNotACrash(string path, string mediaType)
    {
        await using var factory = new ServiceFactory();
        using var client = factory.CreateClient();
        var deep = "{\"asset\":" + new string('[', Depth) + new string(']', Depth) + "}";
        var body = path.EndsWith("batch", StringComparison.Ordinal) && mediaType == "application/json" ? "{\"evaluations\":[" + deep + "]}" : deep;
        using var content = new ByteArrayContent(Encoding.UTF8.GetBytes(body));
        content.Headers.ContentType = new MediaTypeHeaderValue(mediaType);

        using var response = await client.PostAsync(new Uri(path, UriKind.Relative), content);

        var text = await response.Content.ReadAsStringAsync();
        if (mediaType == "application/x-ndjson")
        {
            // A line is one item: its own 400.
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            Assert.Equal(400, JsonDocument.Parse(text.Split('\n')[0]).RootElement.GetProperty("status").GetInt32());
        }
        else
        {
            Assert.True(response.StatusCode == HttpStatusCode.BadRequest, $"{(int)response.StatusCode}: {text}");
            Assert.StartsWith("urn:dischargeguard:problem:", JsonDocument.Parse(text).RootElement.GetProperty("type").GetString(), StringComparison.Ordinal);
        }
    }

    private static async Task<JsonElement> PollRulesAsync(ServiceFactory factory, Func<JsonElement, bool> done)
    {
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(30);
        while (true)
        {
            var (_, body) = await factory.GetJsonAsync("/v1/rules");
            if (done(body))
            {
                return body;
            }

            Assert.True(DateTime.UtcNow < deadline, "the deep file was not refused in 30 s: " + body);
            await Task.Delay(100);
        }
    }
}
