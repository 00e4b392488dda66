using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using CsCheck;
using DischargeGuard.Audit;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// Generated malformed and extreme requests (CsCheck) to the single, batch and NDJSON endpoints: wrong types, missing
/// fields, NaN/Infinity/1e308, zero and negative pressures, gauge pressures without site data, compositions that do not
/// sum to 1, unknown species, unit strings in odd cases and locales, huge arrays, deep nesting, invalid UTF-8, oversized
/// bodies and truncated documents. Every answer is a 200 or a 400/413/422 problem; never a 5xx; the audit store gains
/// exactly one record per evaluation answered 200; the service still answers afterwards.
/// </summary>
public sealed class HostileInputTests(FloodServiceFactory factory) : IClassFixture<FloodServiceFactory>
{
    private const int Requests = 10_000;

    private enum Target
    {
        Single,
        Batch,
        Ndjson,
    }

    private sealed record Case(Target Target, int Mutation, int Variant, double Number);

    private static readonly string[] OddUnits =
    [
        "14,7 psi", "3 mpa", "3 BARA", "3  bar a", "3 bar(g)", "3 inHg", "", "bara", "3", "3 bar a g", "٣ bara", "3e400 bara",
        "0x10 bara", "3 °C", "-0 bara", "3 bara bara", "3,000.5 kPa(a)", "3 kPa (a)", "3 PSIA", "3 psig", "NaN bara",
        "Infinity bara", "1e308 bara", "-5 bara", "0 bara", "1e-320 bara",
    ];

    private static readonly JsonNode?[] WrongValues =
    [
        JsonValue.Create(1.5), JsonValue.Create(true), null, new JsonArray(), new JsonObject(), JsonValue.Create("x"),
        JsonValue.Create(-1e308), JsonValue.Create(long.MaxValue), JsonValue.Create("\u0000"),
    ];

    private static readonly string[] Fields =
    [
        "asset", "gas", "stages", "site", "method", "outputUnits", "flow", "service", "gas.preset", "gas.composition",
        "stages[0]", "stages[0].suction", "stages[0].suction.pressure", "stages[0].suction.temperature", "stages[0].discharge",
        "stages[0].discharge.pressure", "stages[0].efficiency", "stages[0].efficiency.isentropic", "stages[0].equipment",
        "stages[0].equipment.compressorType", "stages[0].measured", "site.barometricPressure", "site.elevation",
    ];

    private static readonly Gen<Case> Cases =
        Gen.Select(Gen.Int[0, 2], Gen.Int[0, 13], Gen.Int[0, 1000], Gen.Double[-1e6, 1e6])
            .Select((t, m, v, n) => new Case((Target)t, m, v, n));

    [Fact]
    public async Task Flood_WhenEveryKindOfBadInputArrives_AnswersOnlyProblemsOr200sAndAuditsExactlyThe200s()
    {
        var cases = new List<Case>(Requests);
        Cases.Sample(cases.Add, iter: Requests, threads: 1);
        var store = factory.Services.GetRequiredService<IAuditStore>();
        var before = await CountAsync(store);
        using var client = factory.CreateClient();
        var evaluated = 0;
        var statuses = new Dictionary<int, int>();

        foreach (var c in cases)
        {
            var (body, contentType) = Build(c);
            using var content = new ByteArrayContent(body);
            content.Headers.ContentType = MediaTypeHeaderValue.Parse(contentType);
            var path = c.Target == Target.Single ? "/v1/evaluations" : "/v1/evaluations/batch";
            using var response = await client.PostAsync(new Uri(path, UriKind.Relative), content);
            var status = (int)response.StatusCode;
            statuses[status] = statuses.GetValueOrDefault(status) + 1;
            var text = await response.Content.ReadAsStringAsync();
            var what = $"{c} → {status}: {Excerpt(text)}; sent {Excerpt(Encoding.UTF8.GetString(body))}";
            Assert.True(status is 200 or 400 or 413 or 422, what);
            if (status != 200)
            {
                Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
                using var problem = JsonDocument.Parse(text);
                Assert.StartsWith("urn:dischargeguard:problem:", problem.RootElement.GetProperty("type").GetString(), StringComparison.Ordinal);
                Assert.DoesNotContain("   at ", text, StringComparison.Ordinal);
                continue;
            }

            evaluated += c.Target switch
            {
                Target.Single => 1,
                Target.Batch => CountItems(JsonDocument.Parse(text).RootElement.GetProperty("results").EnumerateArray(), what),
                _ => CountItems(text.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(l => JsonDocument.Parse(l).RootElement), what),
            };
        }

        Assert.Equal(before + evaluated, await CountAsync(store));
        Assert.True(statuses.Keys.Count >= 3, "the generator reached too few outcomes: " + string.Join(", ", statuses));

        using var ready = await client.GetAsync(new Uri("/health/ready", UriKind.Relative));
        Assert.Equal(HttpStatusCode.OK, ready.StatusCode);
        using var good = new StringContent(Valid().ToJsonString(), Encoding.UTF8, "application/json");
        using var afterwards = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), good);
        Assert.Equal(HttpStatusCode.OK, afterwards.StatusCode);
    }

    private static int CountItems(IEnumerable<JsonElement> results, string what)
    {
        var ok = 0;
        foreach (var r in results)
        {
            var status = r.GetProperty("status").GetInt32();
            Assert.True(status is 200 or 400 or 413 or 422, what);
            ok += status == 200 ? 1 : 0;
        }

        return ok;
    }

    private static JsonObject Valid() => DischargeGuard.Api.Tests.Requests.Minimal();

    // One request body for a case: a mutated evaluation request, alone, in a JSON batch beside a valid one, or as an NDJSON line.
    private static (byte[] Body, string ContentType) Build(Case c)
    {
        var item = Mutate(c);
        var valid = Encoding.UTF8.GetBytes(Valid().ToJsonString());
        return c.Target switch
        {
            Target.Single => (item, "application/json"),
            Target.Batch => ([.. "{\"evaluations\":["u8, .. item, .. ","u8, .. valid, .. "]}"u8], "application/json"),
            _ => ([.. item, .. "\n"u8, .. valid, .. "\n"u8], "application/x-ndjson"),
        };
    }

    private static byte[] Mutate(Case c)
    {
        var r = Valid();
        var v = c.Variant;
        switch (c.Mutation)
        {
            case 0: // In range or not: numbers across the scale.
                r.Stage(0)["suction"]!["pressure"] = Num(Math.Abs(c.Number) / 1000, "bara");
                r.Stage(0)["discharge"]!["pressure"] = Num(Math.Abs(c.Number) / 300, "bara");
                r.Stage(0)["suction"]!["temperature"] = Num(c.Number / 5000, "°C");
                break;
            case 1: // A wrong type at a field.
                Set(r, Fields[v % Fields.Length], WrongValues[v % WrongValues.Length]?.DeepClone());
                break;
            case 2: // A missing field.
                Remove(r, Fields[v % Fields.Length]);
                break;
            case 3: // Odd unit strings and special numbers.
                r.Stage(0)[v % 2 == 0 ? "suction" : "discharge"]!["pressure"] = OddUnits[v % OddUnits.Length];
                break;
            case 4: // Gauge pressure without site data.
                r.Remove("site");
                r.Stage(0)["suction"]!["pressure"] = "1.5 barg";
                break;
            case 5: // Compositions that do not sum to 1, unknown species, negative fractions.
                r["gas"] = new JsonObject
                {
                    ["composition"] = (v % 4) switch
                    {
                        0 => new JsonObject { ["CH4"] = 0.5, ["N2"] = 0.3 },
                        1 => new JsonObject { ["Xe133"] = 1.0 },
                        2 => new JsonObject { ["CH4"] = 1.5, ["N2"] = -0.5 },
                        _ => new JsonObject { ["methane"] = double.Epsilon, ["CH4"] = 1.0 },
                    },
                };
                break;
            case 6: // Efficiencies out of range, as numbers.
                r.Stage(0)["efficiency"] = new JsonObject { ["isentropic"] = (v % 5) switch { 0 => 0.0, 1 => -1.0, 2 => 2.0, 3 => 1e308, _ => 1e-300 } };
                break;
            case 7: // A huge array.
                var stages = new JsonArray();
                for (var i = 0; i < 100 + (v % 400); i++)
                {
                    stages.Add(Valid().Stage(0).DeepClone());
                }

                r["stages"] = stages;
                break;
            case 8: // Deep nesting.
                return Encoding.UTF8.GetBytes("{\"asset\":" + new string('[', 40 + (v % 400)) + "1" + new string(']', 40 + (v % 400)) + "}");
            case 9: // Invalid UTF-8 inside a string.
                var text = Encoding.UTF8.GetBytes(r.ToJsonString());
                var at = Array.IndexOf(text, (byte)'K');
                text[at] = 0xC3;
                text[at + 1] = 0x28;
                return text;
            case 10: // Oversized: beyond the 1 MiB body limit for a single post; a long field otherwise.
                r["asset"] = new string('K', v % 2 == 0 ? 1_100_000 : 5_000);
                break;
            case 11: // Truncated or garbage documents.
                var json = r.ToJsonString();
                return Encoding.UTF8.GetBytes(v % 3 == 0 ? json[..(1 + (v % (json.Length - 1)))] : v % 3 == 1 ? "\uFEFF" + json + json : "<xml/>");
            case 12: // Unknown fields.
                r.Stage(0)["dischage"] = new JsonObject { ["pressure"] = "3 bara" };
                break;
            default: // Extreme temperatures in odd units.
                r.Stage(0)["suction"]!["temperature"] = (v % 6) switch { 0 => "-300 °C", 1 => "1e308 K", 2 => "5000 °F", 3 => "35 c", 4 => "35 degC", _ => "35,5 °C" };
                break;
        }

        return Encoding.UTF8.GetBytes(r.ToJsonString());
    }

    private static string Num(double value, string unit) => value.ToString("R", System.Globalization.CultureInfo.InvariantCulture) + " " + unit;

    private static (JsonNode Parent, string Name)? Locate(JsonObject root, string path)
    {
        JsonNode current = root;
        var parts = path.Split('.');
        for (var i = 0; i < parts.Length; i++)
        {
            var name = parts[i];
            int? index = null;
            var bracket = name.IndexOf('[', StringComparison.Ordinal);
            if (bracket >= 0)
            {
                index = int.Parse(name[(bracket + 1)..^1], System.Globalization.CultureInfo.InvariantCulture);
                name = name[..bracket];
            }

            if (i == parts.Length - 1 && index is null)
            {
                return current is JsonObject ? (current, name) : null;
            }

            if (current[name] is not { } next)
            {
                return null;
            }

            current = next;
            if (index is { } k)
            {
                if (current is not JsonArray array || array.Count <= k)
                {
                    return null;
                }

                if (i == parts.Length - 1)
                {
                    return (array, k.ToString(System.Globalization.CultureInfo.InvariantCulture));
                }

                current = array[k]!;
            }
        }

        return null;
    }

    private static void Set(JsonObject root, string path, JsonNode? value)
    {
        switch (Locate(root, path))
        {
            case ({ } parent, var name) when parent is JsonObject o:
                o[name] = value;
                break;
            case ({ } parent, var name) when parent is JsonArray a:
                a[int.Parse(name, System.Globalization.CultureInfo.InvariantCulture)] = value;
                break;
        }
    }

    private static void Remove(JsonObject root, string path)
    {
        switch (Locate(root, path))
        {
            case ({ } parent, var name) when parent is JsonObject o:
                o.Remove(name);
                break;
            case ({ } parent, var name) when parent is JsonArray a:
                a.RemoveAt(int.Parse(name, System.Globalization.CultureInfo.InvariantCulture));
                break;
        }
    }

    private static string Excerpt(string text) => text.Length <= 300 ? text : text[..300] + "…";

    private static async Task<int> CountAsync(IAuditStore store)
    {
        var n = 0;
        await foreach (var _ in store.QueryAsync(new AuditQuery(), CancellationToken.None))
        {
            n++;
        }

        return n;
    }
}

/// <summary>The service with a rate limit high enough for a flood of requests from one address (the limiter has its own tests).</summary>
public sealed class FloodServiceFactory() : ServiceFactory(new Dictionary<string, string?>
{
    ["RateLimits:PermitsPerSecond"] = "100000",
    ["RateLimits:Burst"] = "100000",
});
