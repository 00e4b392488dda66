using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Provider;
using Microsoft.OpenApi;
using Swashbuckle.AspNetCore.SwaggerGen;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// Catalogue ids (compressor types, lubricants, materials, service classes) are open strings: the default rule layer
/// defines them and a site or asset layer may add more. Their descriptions list the ids of the default layer in force,
/// so a client author sees the shipped words without the document promising a closed set.
/// </summary>
internal sealed class CatalogueIdSchemaFilter(IRuleSetProvider rules) : ISchemaFilter
{
    public void Apply(IOpenApiSchema schema, SchemaFilterContext context)
    {
        if (schema is not OpenApiSchema { Properties: { Count: > 0 } properties })
        {
            return;
        }

        var set = rules.Current.DefaultSet;
        foreach (var (name, property) in properties)
        {
            var ids = name switch
            {
                "compressorType" or "compressorTypes" or "notCompressorTypes" => set.CompressorTypes.Keys,
                "lubricant" => set.Lubricants.Keys,
                "valveMaterial" or "valveMaterials" => Materials(set, MaterialUse.Valve),
                "sealMaterial" or "sealMaterials" => Materials(set, MaterialUse.Seal),
                "ringMaterial" => Materials(set, MaterialUse.Ring),
                "springMaterial" => Materials(set, MaterialUse.Spring),
                "serviceClasses" or "notServiceClasses" => set.ServiceClasses.Keys,
                _ => null,
            };
            var isText = property is OpenApiSchema p && (p.Type?.HasFlag(JsonSchemaType.String) == true
                || p.Items is OpenApiSchema { Type: { } t } && t.HasFlag(JsonSchemaType.String));
            if (ids is null || !isText || property is not OpenApiSchema concrete)
            {
                continue;
            }

            var list = string.Join(", ", ids.Order(StringComparer.Ordinal));
            concrete.Description = (string.IsNullOrEmpty(concrete.Description) ? string.Empty : concrete.Description.TrimEnd() + " ")
                + $"An id from the rule set's catalogue; the default layer defines {list}, and a site or asset layer may add others (GET /v1/rules lists those in force).";
        }
    }

    private static IEnumerable<string> Materials(Rules.EffectiveRuleSet set, MaterialUse use) =>
        set.Materials.Values.Where(m => m.Use == use).Select(m => m.Id);
}
