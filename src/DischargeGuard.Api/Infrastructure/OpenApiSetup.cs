using System.Text.Json.Nodes;
using DischargeGuard.Evaluation.Contract;
using Microsoft.OpenApi;
using Swashbuckle.AspNetCore.SwaggerGen;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>The OpenAPI document: generated from the endpoint signatures, with shared quantity and vocabulary components, stable
/// schema names and an invented example.</summary>
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
      ],
      "scenarios": [
        {"name": "hot-day", "hotDay": {"suctionTemperatureRise": "10 K", "coolantTemperatureRise": "5 K"}},
        {"name": "cooling-water-failure", "coolingWaterFailure": {"stages": [1]}},
        {"name": "recycle-20", "recycle": {"fraction": 0.2, "cooledTo": "45 °C"}}
      ],
      "trainEnvelopeSplit": "stated"
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
                + "and a licensed engineer must review any change. "
                + "Answers are compact by default (each finding once, under its stage; the top-level `governing` names the deciding limit by reference) "
                + "and complete with `?detail=full`. Before the first release /v1 changed in place: the top-level `findings` list was dropped (see CHANGELOG.md).",
        });
        // Relative: the document is served by the service it describes, wherever that is deployed.
        options.AddServer(new OpenApiServer { Url = "/", Description = "The service serving this document." });
        options.CustomSchemaIds(OpenApiSchemaNames.Of);
        options.SchemaFilter<QuantitySchemaFilter>();
        options.SchemaFilter<VocabularySchemaFilter>();
        options.SchemaFilter<CatalogueIdSchemaFilter>();
        options.AddSecurityDefinition(Security.AuthOptions.Scheme, new OpenApiSecurityScheme
        {
            Type = SecuritySchemeType.ApiKey,
            In = ParameterLocation.Header,
            Name = Security.AuthOptions.HeaderName,
            Description = "An API key (see docs/security.md for the roles of each endpoint). Without configured keys the service is anonymous and listens on loopback only.",
        });
        options.OperationFilter<ApiKeyOperationFilter>();
        options.OperationFilter<QueryParameterOperationFilter>();
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
