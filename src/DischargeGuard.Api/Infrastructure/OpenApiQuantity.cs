using DischargeGuard.Evaluation.Contract;
using Microsoft.OpenApi;
using Swashbuckle.AspNetCore.SwaggerGen;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// The two quantity components: <c>Quantity</c> (a request's quantity, the text form or the value-with-unit object) and
/// <c>QuantityValue</c> (the value-with-unit object every answer writes). Each is defined once and every quantity
/// property refers to it, so a generated client has one quantity type instead of one wrapper per property.
/// </summary>
internal sealed class QuantitySchemaFilter : ISchemaFilter
{
    public void Apply(IOpenApiSchema schema, SchemaFilterContext context)
    {
        if (schema is not OpenApiSchema concrete)
        {
            return;
        }

        if (context.Type == typeof(QuantityDto))
        {
            concrete.Description = "A number with its unit token (see docs/units.md), e.g. {\"value\": 151.2, \"unit\": \"°C\"}.";
            concrete.Required = new HashSet<string>(StringComparer.Ordinal) { "value", "unit" };
        }
        else if (context.Type == typeof(QuantityInput))
        {
            // The record's own member (Text) is not on the wire: its converter reads and writes the two forms below.
            var valueWithUnit = context.SchemaGenerator.GenerateSchema(typeof(QuantityDto), context.SchemaRepository);
            concrete.Type = null;
            concrete.Properties = null;
            concrete.Required = null;
            concrete.AdditionalProperties = null;
            concrete.AdditionalPropertiesAllowed = true;
            concrete.Description = "A quantity: \"<number> <unit>\" with an invariant decimal point (e.g. \"1.5 barg\", \"35 °C\") or "
                + "{\"value\": <number>, \"unit\": \"<unit>\"}; see docs/units.md for the accepted units.";
            concrete.OneOf =
            [
                new OpenApiSchema { Type = JsonSchemaType.String, Examples = [System.Text.Json.Nodes.JsonValue.Create("1.5 barg")] },
                valueWithUnit,
            ];
        }
    }
}
