using System.Text.Json;
using System.Text.Json.Nodes;
using Json.Schema;

namespace DischargeGuard.Api.Tests.OpenApi;

/// <summary>
/// Validates JSON against the schemas of an OpenAPI 3.0 document: the document's schema objects are turned into JSON
/// Schema 2020-12 (component references into <c>$defs</c>, <c>nullable</c> into a null type, the OpenAPI-only
/// <c>example</c> dropped) and evaluated with JsonSchema.Net.
/// </summary>
internal sealed class OpenApiSchemaCheck
{
    private const string ComponentPrefix = "#/components/schemas/";
    private readonly JsonObject _defs = new();

    public OpenApiSchemaCheck(JsonElement document)
    {
        foreach (var component in document.GetProperty("components").GetProperty("schemas").EnumerateObject())
        {
            _defs[component.Name] = Convert(JsonNode.Parse(component.Value.GetRawText())!);
        }
    }

    /// <summary>The errors of <paramref name="instance"/> against the OpenAPI schema object <paramref name="schema"/> (empty when valid).</summary>
    public IReadOnlyList<string> Errors(JsonNode schema, JsonElement instance)
    {
        var root = Convert(schema.DeepClone()).AsObject();
        root["$schema"] = "https://json-schema.org/draft/2020-12/schema";
        root["$defs"] = _defs.DeepClone();
        var result = JsonSchema.FromText(root.ToJsonString()).Evaluate(instance, new EvaluationOptions { OutputFormat = OutputFormat.List });
        return result.IsValid ? [] : (result.Details ?? [])
            .Where(d => d.Errors is { Count: > 0 })
            .SelectMany(d => d.Errors!.Select(e => $"{d.InstanceLocation} ({d.EvaluationPath}): {e.Value}"))
            .DefaultIfEmpty("invalid (no detail)")
            .ToArray();
    }

    /// <summary>The errors of <paramref name="instance"/> against the component <paramref name="name"/>.</summary>
    public IReadOnlyList<string> Errors(string name, JsonElement instance) =>
        Errors(new JsonObject { ["$ref"] = ComponentPrefix + name }, instance);

    // Only schema positions are rewritten, so a property that happens to be called "example" or "nullable" is left alone.
    private static JsonNode Convert(JsonNode node)
    {
        if (node is not JsonObject schema)
        {
            return node;
        }

        if (schema["$ref"] is JsonValue reference && reference.GetValue<string>().StartsWith(ComponentPrefix, StringComparison.Ordinal))
        {
            schema["$ref"] = "#/$defs/" + reference.GetValue<string>()[ComponentPrefix.Length..];
        }

        schema.Remove("example");
        if (schema["nullable"] is JsonValue nullable)
        {
            schema.Remove("nullable");
            if (nullable.GetValue<bool>())
            {
                if (schema["type"] is JsonValue type)
                {
                    schema["type"] = new JsonArray(type.GetValue<string>(), "null");
                }

                if (schema["enum"] is JsonArray values && !values.Any(v => v is null))
                {
                    values.Add(null);
                }
            }
        }

        if (schema["properties"] is JsonObject properties)
        {
            foreach (var name in properties.Select(p => p.Key).ToArray())
            {
                properties[name] = Convert(properties[name]!.DeepClone());
            }
        }

        foreach (var key in new[] { "items", "additionalProperties", "not" })
        {
            if (schema[key] is JsonObject child)
            {
                schema[key] = Convert(child.DeepClone());
            }
        }

        foreach (var key in new[] { "oneOf", "anyOf", "allOf" })
        {
            if (schema[key] is JsonArray list)
            {
                schema[key] = new JsonArray(list.Select(s => (JsonNode?)Convert(s!.DeepClone())).ToArray());
            }
        }

        return schema;
    }
}
