using System.Net;
using System.Net.Http.Json;
using System.Reflection;
using System.Text.Json;
using System.Text.Json.Nodes;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Api.Tests.OpenApi;

/// <summary>
/// The served OpenAPI document is a contract clients can generate from: one quantity component referenced everywhere,
/// closed vocabularies as enum components, names without implementation suffixes, a server entry, valid nullable use,
/// every example valid against its schema, and the service's real answers valid against the schemas it publishes.
/// The checks walk the document and the contract types, so they hold whatever shape the types take.
/// </summary>
public sealed class OpenApiContractTests(ServiceFactory factory) : IClassFixture<ServiceFactory>
{
    private async Task<JsonElement> DocumentAsync()
    {
        var (response, body) = await factory.GetJsonAsync("/swagger/v1/swagger.json");
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        return body;
    }

    private static JsonElement Schemas(JsonElement document) => document.GetProperty("components").GetProperty("schemas");

    [Fact]
    public async Task SchemaNames_WhenServed_CarryNoImplementationSuffix()
    {
        var names = Schemas(await DocumentAsync()).EnumerateObject().Select(p => p.Name).ToArray();
        Assert.DoesNotContain(names, n => n.EndsWith("Dto", StringComparison.Ordinal));
        Assert.Contains(OpenApiSchemaNames.Quantity, names);
        Assert.Contains(OpenApiSchemaNames.QuantityValue, names);
    }

    [Fact]
    public async Task QuantityProperties_OfEveryContractType_ReferToTheOneQuantityComponent()
    {
        var schemas = Schemas(await DocumentAsync());
        var checkedProperties = 0;
        foreach (var component in schemas.EnumerateObject())
        {
            var type = ContractType(component.Name);
            if (type is null || !component.Value.TryGetProperty("properties", out var properties))
            {
                continue;
            }

            foreach (var member in type.GetProperties(BindingFlags.Public | BindingFlags.Instance))
            {
                var expected = member.PropertyType == typeof(QuantityInput) ? OpenApiSchemaNames.Quantity
                    : member.PropertyType == typeof(QuantityDto) ? OpenApiSchemaNames.QuantityValue
                    : null;
                if (expected is null)
                {
                    continue;
                }

                var name = JsonNamingPolicy.CamelCase.ConvertName(member.Name);
                Assert.True(properties.TryGetProperty(name, out var property), $"{component.Name}.{name} is missing");
                Assert.Equal("#/components/schemas/" + expected, property.TryGetProperty("$ref", out var r) ? r.GetString() : property.GetRawText());
                checkedProperties++;
            }
        }

        Assert.True(checkedProperties > 30, $"only {checkedProperties} quantity properties found");

        // The string-or-object union exists once: no other schema in the document inlines a oneOf.
        var unions = new List<string>();
        Walk(JsonNode.Parse((await DocumentAsync()).GetRawText())!, "#", (path, node) =>
        {
            if (node is JsonObject o && o.ContainsKey("oneOf") && path != "#/components/schemas/" + OpenApiSchemaNames.Quantity)
            {
                unions.Add(path);
            }
        });
        Assert.Empty(unions);
    }

    [Fact]
    public async Task Vocabularies_WhenServed_AreEnumComponentsAndTheirPropertiesReferToThem()
    {
        var schemas = Schemas(await DocumentAsync());
        foreach (var vocabulary in OpenApiVocabularies.All)
        {
            Assert.True(schemas.TryGetProperty(vocabulary.Name, out var component), vocabulary.Name + " is not in the document");
            Assert.Equal("string", component.GetProperty("type").GetString());
            Assert.Equal(vocabulary.Values, component.GetProperty("enum").EnumerateArray().Select(v => v.GetString()!));
        }

        // The words every client branches on are never bare strings, in whatever object they appear.
        var bare = new List<string>();
        foreach (var component in schemas.EnumerateObject().Where(c => c.Value.TryGetProperty("properties", out _)))
        {
            foreach (var property in component.Value.GetProperty("properties").EnumerateObject())
            {
                if (property.Name is "verdict" or "severity" or "method" && !property.Value.TryGetProperty("$ref", out _))
                {
                    bare.Add(component.Name + "." + property.Name);
                }
            }
        }

        Assert.Empty(bare);
    }

    [Fact]
    public async Task Document_WhenServed_NamesAServerAndNeverUsesNullableWithoutAType()
    {
        var document = await DocumentAsync();
        Assert.True(document.TryGetProperty("servers", out var servers) && servers.GetArrayLength() > 0, "no servers entry");
        var untyped = new List<string>();
        Walk(JsonNode.Parse(document.GetRawText())!, "#", (path, node) =>
        {
            if (node is JsonObject o && o["nullable"] is JsonValue v && v.GetValueKind() == JsonValueKind.True && !o.ContainsKey("type"))
            {
                untyped.Add(path);
            }
        });
        Assert.Empty(untyped);
    }

    [Fact]
    public async Task Examples_InTheDocument_AreValidAgainstTheirSchemas()
    {
        var document = await DocumentAsync();
        var check = new OpenApiSchemaCheck(document);
        var examples = Examples(JsonNode.Parse(document.GetRawText())!.AsObject()).ToList();

        // At least the evaluation request's example and the quantity's text form.
        Assert.True(examples.Count >= 2, $"only {examples.Count} examples found");
        var failures = examples
            .Select(e => (e.Where, Errors: check.Errors(e.Schema, JsonDocument.Parse(e.Example.ToJsonString()).RootElement)))
            .Where(e => e.Errors.Count > 0)
            .Select(e => e.Where + ": " + string.Join("; ", e.Errors))
            .ToList();
        Assert.True(failures.Count == 0, string.Join("\n", failures));
    }

    [Fact]
    public async Task ReadmeExample_AndItsAnswer_AreValidAgainstThePublishedSchemas()
    {
        var check = new OpenApiSchemaCheck(await DocumentAsync());
        var body = DocumentedExamplesTests.ReadmeOneStageBody();
        using var request = JsonDocument.Parse(body);
        AssertValid(check.Errors(nameof(EvaluationRequest), request.RootElement), "README request");

        // curve=true adds the curve points, so the optional parts of a stage are checked too.
        using var client = factory.CreateClient();
        using var content = new StringContent(body, System.Text.Encoding.UTF8, "application/json");
        using var response = await client.PostAsync(new Uri("/v1/evaluations?curve=true", UriKind.Relative), content);
        var answer = await response.Content.ReadAsStringAsync();
        Assert.True(response.StatusCode == HttpStatusCode.OK, answer);
        using var parsed = JsonDocument.Parse(answer);
        AssertValid(check.Errors(nameof(EvaluationResponse), parsed.RootElement), "README answer");
    }

    [Fact]
    public async Task BatchAnswer_WithAGoodAndARefusedItem_IsValidAgainstThePublishedSchema()
    {
        var check = new OpenApiSchemaCheck(await DocumentAsync());
        var good = JsonNode.Parse(DocumentedExamplesTests.ReadmeOneStageBody())!;
        var refused = good.DeepClone();
        refused["stages"]![0]!["suction"]!["temperature"] = "35 furlongs";
        var batch = new JsonObject { ["evaluations"] = new JsonArray(good, refused) };
        using var request = JsonDocument.Parse(batch.ToJsonString());
        AssertValid(check.Errors("BatchRequest", request.RootElement), "batch request");

        using var client = factory.CreateClient();
        using var response = await client.PostAsJsonAsync(new Uri("/v1/evaluations/batch", UriKind.Relative), batch);
        var answer = await response.Content.ReadAsStringAsync();
        Assert.True(response.StatusCode == HttpStatusCode.OK, answer);
        using var parsed = JsonDocument.Parse(answer);
        Assert.Equal([200, 400], parsed.RootElement.GetProperty("results").EnumerateArray().Select(r => r.GetProperty("status").GetInt32()));
        AssertValid(check.Errors("BatchResponse", parsed.RootElement), "batch answer");
    }

    [Fact]
    public void SchemaCheck_WhenAnAnswerBreaksTheSchema_ReportsIt()
    {
        // The validator itself must be able to fail: an unknown verdict word, a quantity without its unit, an extra member.
        using var document = JsonDocument.Parse("""
        {"components": {"schemas": {
          "Verdict": {"type": "string", "enum": ["pass", "review", "fail"]},
          "QuantityValue": {"type": "object", "additionalProperties": false, "required": ["value", "unit"],
                            "properties": {"value": {"type": "number"}, "unit": {"type": "string"}}},
          "Answer": {"type": "object", "additionalProperties": false, "properties": {
            "verdict": {"$ref": "#/components/schemas/Verdict"},
            "note": {"type": "string", "nullable": true},
            "rise": {"$ref": "#/components/schemas/QuantityValue"}}}}}}
        """);
        var check = new OpenApiSchemaCheck(document.RootElement);
        static JsonElement J(string s) => JsonDocument.Parse(s).RootElement;

        Assert.Empty(check.Errors("Answer", J("""{"verdict": "review", "note": null, "rise": {"value": 112.5, "unit": "K"}}""")));
        Assert.NotEmpty(check.Errors("Answer", J("""{"verdict": "maybe"}""")));
        Assert.NotEmpty(check.Errors("Answer", J("""{"rise": {"value": 112.5}}""")));
        Assert.NotEmpty(check.Errors("Answer", J("""{"verdict": "pass", "extra": 1}""")));
    }

    private static void AssertValid(IReadOnlyList<string> errors, string what) =>
        Assert.True(errors.Count == 0, what + " does not match the document:\n" + string.Join("\n", errors));

    // The contract type a component was named after (the naming policy run backwards over the service's assemblies).
    private static Type? ContractType(string component) =>
        new[] { typeof(EvaluationRequest).Assembly, typeof(OpenApiSchemaNames).Assembly }
            .SelectMany(a => a.GetTypes())
            .Where(t => t.IsPublic && !t.IsGenericType && t.Namespace?.StartsWith("DischargeGuard", StringComparison.Ordinal) == true)
            .FirstOrDefault(t => OpenApiSchemaNames.Of(t) == component);

    private static void Walk(JsonNode node, string path, Action<string, JsonNode> visit)
    {
        visit(path, node);
        switch (node)
        {
            case JsonObject o:
                foreach (var (key, value) in o)
                {
                    if (value is not null)
                    {
                        Walk(value, path + "/" + key, visit);
                    }
                }

                break;
            case JsonArray a:
                for (var i = 0; i < a.Count; i++)
                {
                    if (a[i] is { } item)
                    {
                        Walk(item, path + "/" + i, visit);
                    }
                }

                break;
        }
    }

    /// <summary>Every example in the document with the schema it illustrates: in schema objects, media types and parameters.</summary>
    internal static IEnumerable<(string Where, JsonNode Schema, JsonNode Example)> Examples(JsonObject document)
    {
        foreach (var (name, schema) in document["components"]!["schemas"]!.AsObject())
        {
            foreach (var found in SchemaExamples(schema!, "#/components/schemas/" + name))
            {
                yield return found;
            }
        }

        var holders = new List<(string Path, JsonObject Holder)>();
        Walk(document["paths"]!, "#/paths", (path, node) =>
        {
            if (node is JsonObject o && o["schema"] is JsonObject)
            {
                holders.Add((path, o));
            }
        });
        foreach (var (path, holder) in holders)
        {
            var schema = holder["schema"]!;
            if (holder["example"] is { } example)
            {
                yield return (path + "/example", schema, example);
            }

            if (holder["examples"] is JsonObject named)
            {
                foreach (var (key, value) in named)
                {
                    if (value?["value"] is { } v)
                    {
                        yield return (path + "/examples/" + key, schema, v);
                    }
                }
            }

            foreach (var found in SchemaExamples(schema, path + "/schema"))
            {
                yield return found;
            }
        }
    }

    private static IEnumerable<(string Where, JsonNode Schema, JsonNode Example)> SchemaExamples(JsonNode schema, string path)
    {
        if (schema is not JsonObject o)
        {
            yield break;
        }

        if (o["example"] is { } example)
        {
            yield return (path, o, example);
        }

        var children = new List<(string, JsonNode)>();
        if (o["properties"] is JsonObject properties)
        {
            children.AddRange(properties.Where(p => p.Value is not null).Select(p => (path + "/properties/" + p.Key, p.Value!)));
        }

        foreach (var key in new[] { "items", "additionalProperties", "not" })
        {
            if (o[key] is JsonObject child)
            {
                children.Add((path + "/" + key, child));
            }
        }

        foreach (var key in new[] { "oneOf", "anyOf", "allOf" })
        {
            if (o[key] is JsonArray list)
            {
                children.AddRange(list.Select((s, i) => (path + "/" + key + "/" + i, s!)));
            }
        }

        foreach (var (childPath, child) in children)
        {
            foreach (var found in SchemaExamples(child, childPath))
            {
                yield return found;
            }
        }
    }
}
