using System.Text.Json.Nodes;
using DischargeGuard.Evaluation.Contract;
using Microsoft.OpenApi;
using Swashbuckle.AspNetCore.SwaggerGen;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>The OpenAPI document: generated from the endpoint signatures, with the quantity shape and an invented example.</summary>
internal static class OpenApiSetup
{
    // An invented scenario: Harrow Basin Gas Co., site kestrel-ridge, booster K-101A.
    internal const string ExampleRequest = """
    {
      "asset": "K-101A",
      "site": {"id": "kestrel-ridge", "elevation": "350 m"},
      "service": "general",
      "gas": {"preset": "dry-air", "relativeHumidity": 0.6},
      "method": "auto",
      "outputUnits": "metric",
      "flow": {"mass": "2.5 kg/s"},
      "stages": [
        {
          "suction": {"pressure": "0.2 barg", "temperature": "35 °C"},
          "discharge": {"pressure": "2.6 barg"},
          "efficiency": {"isentropic": 0.80, "uncertainty": 0.03},
          "equipment": {"compressorType": "recip-lubricated", "lubricant": "mineral-vdl", "valveMaterial": "peek", "sealMaterial": "fkm"},
          "operation": {"normalDischargeTemperature": "148 °C", "coolantInletTemperature": "45 °C", "unloadedRunning": false},
          "measured": {"dischargeTemperature": "151 °C"}
        },
        {
          "intercooler": {"approach": "10 K", "coolantTemperature": "30 °C", "pressureDrop": "2 %"},
          "discharge": {"pressure": "8.5 barg"},
          "efficiency": {"isentropic": 0.80},
          "equipment": {"compressorType": "recip-lubricated", "lubricant": "mineral-vdl", "valveMaterial": "peek", "sealMaterial": "fkm"}
        }
      ]
    }
    """;

    public static void Configure(SwaggerGenOptions options)
    {
        options.SwaggerDoc("v1", new OpenApiInfo
        {
            Title = "DischargeGuard",
            Version = "v1",
            Description = "Compressor discharge-temperature screening against versioned rules, every evaluation audited. "
                + "Results are screening aids: the manufacturer's limits, the applicable design standard and local codes take precedence, "
                + "and a licensed engineer must review any change.",
        });
        options.MapType<QuantityInput>(() => new OpenApiSchema
        {
            Description = "A quantity: \"<number> <unit>\" (invariant decimal point) or {\"value\": <number>, \"unit\": \"<unit>\"}; see docs/units.md.",
            OneOf =
            [
                new OpenApiSchema { Type = JsonSchemaType.String, Examples = [JsonValue.Create("1.5 barg")] },
                new OpenApiSchema
                {
                    Type = JsonSchemaType.Object,
                    Required = new HashSet<string> { "value", "unit" },
                    Properties = new Dictionary<string, IOpenApiSchema>
                    {
                        ["value"] = new OpenApiSchema { Type = JsonSchemaType.Number },
                        ["unit"] = new OpenApiSchema { Type = JsonSchemaType.String },
                    },
                },
            ],
        });
        options.AddSecurityDefinition(Security.AuthOptions.Scheme, new OpenApiSecurityScheme
        {
            Type = SecuritySchemeType.ApiKey,
            In = ParameterLocation.Header,
            Name = Security.AuthOptions.HeaderName,
            Description = "An API key (see docs/security.md for the roles of each endpoint). Without configured keys the service is anonymous and listens on loopback only.",
        });
        options.OperationFilter<ApiKeyOperationFilter>();
        options.SchemaFilter<ExampleSchemaFilter>();
        options.SupportNonNullableReferenceTypes();
    }

    // Operations behind a policy name the ApiKey scheme; health and the document itself stay anonymous.
    private sealed class ApiKeyOperationFilter : IOperationFilter
    {
        public void Apply(OpenApiOperation operation, OperationFilterContext context)
        {
            if (context.ApiDescription.ActionDescriptor.EndpointMetadata.OfType<Microsoft.AspNetCore.Authorization.IAuthorizeData>().Any())
            {
                operation.Security = [new OpenApiSecurityRequirement { [new OpenApiSecuritySchemeReference(Security.AuthOptions.Scheme, context.Document)] = [] }];
            }
        }
    }

    private sealed class ExampleSchemaFilter : ISchemaFilter
    {
        public void Apply(IOpenApiSchema schema, SchemaFilterContext context)
        {
            if (context.Type == typeof(EvaluationRequest) && schema is OpenApiSchema concrete)
            {
                concrete.Examples = [JsonNode.Parse(ExampleRequest)!];
            }
        }
    }
}
