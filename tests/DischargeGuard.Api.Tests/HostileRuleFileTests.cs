using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using CsCheck;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Generated broken rule files (CsCheck mutations of the shipped default file: truncations, dropped and repeated lines,
/// replaced characters, invalid UTF-8, deep nesting, alias loops, tabs) to <c>POST /v1/rules/check</c> and through a
/// reload of the rule directory. The loader never crashes: each answer is a check result with a precise error (file,
/// line, key) or a 4xx problem, and the last good set stays in force.
/// </summary>
public sealed class HostileRuleFileTests(FloodServiceFactory factory) : IClassFixture<FloodServiceFactory>
{
    private sealed record Mutation(int Kind, int Position, int Length, char Replacement);

    private static readonly Gen<Mutation> Mutations =
        Gen.Select(Gen.Int[0, 8], Gen.Int[0, 1_000_000], Gen.Int[1, 200], Gen.Char['\u0000', '\u00ff'])
            .Select((k, p, l, c) => new Mutation(k, p, l, c));

    private static string DefaultYaml => File.ReadAllText(Path.Combine(RepoPaths.Root, "rules", "default.yaml"));

    [Fact]
    public async Task Check_WhenTwoThousandBrokenFilesArrive_AnswersEachWithAResultOrAProblemAndNeverFails()
    {
        var cases = new List<Mutation>();
        Mutations.Sample(cases.Add, iter: 2000, threads: 1);
        var original = Encoding.UTF8.GetBytes(DefaultYaml);
        using var client = factory.CreateClient();
        var before = await DigestAsync(client);
        var refused = 0;

        foreach (var m in cases)
        {
            var body = Mutate(original, m);
            using var content = new ByteArrayContent(body);
            content.Headers.ContentType = new MediaTypeHeaderValue("application/yaml");
            using var response = await client.PostAsync(new Uri("/v1/rules/check?name=default.yaml", UriKind.Relative), content);
            var text = await response.Content.ReadAsStringAsync();
            var status = (int)response.StatusCode;
            Assert.True(status is 200 or 400 or 413, $"{m} → {status}: {text[..Math.Min(300, text.Length)]}");
            if (status != 200)
            {
                Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
                continue;
            }

            using var result = JsonDocument.Parse(text);
            if (!result.RootElement.GetProperty("valid").GetBoolean())
            {
                refused++;
                foreach (var e in result.RootElement.GetProperty("errors").EnumerateArray())
                {
                    Assert.True(e.GetProperty("line").GetInt32() >= 1, $"{m}: an error without a line: {e}");
                    Assert.False(string.IsNullOrWhiteSpace(e.GetProperty("message").GetString()), $"{m}: an error without a message: {e}");
                }
            }
        }

        Assert.True(refused > cases.Count / 2, $"only {refused} of {cases.Count} mutations were refused: the generator is too gentle");
        Assert.Equal(before, await DigestAsync(client));
    }

    [Fact]
    public async Task Reload_WhenTheDirectoryHoldsABrokenFile_Answers422AndKeepsTheLastGoodSet()
    {
        var cases = new List<Mutation>();
        Mutations.Sample(cases.Add, iter: 25, threads: 1);
        var path = Path.Combine(factory.RulesDirectory, "default.yaml");
        var good = await File.ReadAllBytesAsync(path);
        using var client = factory.CreateClient();
        var before = await DigestAsync(client);
        var lastGood = before;
        try
        {
            foreach (var m in cases)
            {
                var broken = Mutate(good, m);
                await File.WriteAllBytesAsync(path, broken);
                using var response = await client.PostWithoutBodyAsync("/v1/rules/reload");
                var status = (int)response.StatusCode;
                Assert.True(status is 200 or 422, $"{m} → {status}: {await response.Content.ReadAsStringAsync()}");

                // A mutation that still parses (a dropped comment, say) is a new good set; a broken one leaves the last good set in force.
                if (status == 200)
                {
                    lastGood = await DigestAsync(client);
                }
                else
                {
                    Assert.Equal(lastGood, await DigestAsync(client));
                }
            }
        }
        finally
        {
            await File.WriteAllBytesAsync(path, good);
            using var restored = await client.PostWithoutBodyAsync("/v1/rules/reload");
            Assert.Equal(HttpStatusCode.OK, restored.StatusCode);
        }

        Assert.Equal(before, await DigestAsync(client));
    }

    private static byte[] Mutate(byte[] original, Mutation m)
    {
        var at = m.Position % original.Length;
        var length = Math.Min(m.Length, original.Length - at);
        return m.Kind switch
        {
            0 => original[..at], // truncated
            1 => [.. original[..at], .. original[(at + length)..]], // a piece dropped
            2 => [.. original[..(at + length)], .. original[at..]], // a piece repeated
            3 => [.. original[..at], .. Encoding.UTF8.GetBytes(m.Replacement.ToString()), .. original[(at + 1)..]], // a character replaced
            4 => [.. original[..at], 0xC3, 0x28, .. original[at..]], // invalid UTF-8
            5 => Encoding.UTF8.GetBytes(new string('[', 100 + m.Length * 5) + new string(']', 100 + m.Length * 5)), // deep nesting
            6 => "a: &a [*a, *a]\nb: *a\n"u8.ToArray(), // an alias loop
            7 => [.. original[..at], (byte)'\t', .. original[at..]], // a tab in the indentation
            _ => Encoding.UTF8.GetBytes("schemaVersion: " + m.Replacement + "\n"),
        };
    }

    private static async Task<string> DigestAsync(HttpClient client)
    {
        using var response = await client.GetAsync(new Uri("/v1/rules", UriKind.Relative));
        using var doc = JsonDocument.Parse(await response.Content.ReadAsStringAsync());
        return doc.RootElement.GetProperty("digest").GetString()!;
    }
}
