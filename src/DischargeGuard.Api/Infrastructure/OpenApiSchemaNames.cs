using System.Collections.Frozen;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// The wire names of the OpenAPI components, chosen once from the CLR types so that a client generated from the
/// document gets stable, readable model names whatever the types are called inside the service.
/// </summary>
/// <remarks>
/// The policy: a trailing <c>Dto</c> (an implementation word) is dropped; the few types with a better noun are named in
/// <see cref="Renamed"/>; everything else keeps its type name. Request parts keep their <c>Input</c> suffix on purpose:
/// the request and the answer both have a stage, a gas, an efficiency, a calibration and a measured block of different
/// shapes, and a uniform request-side word keeps those pairs apart without names that move whenever a type is added.
/// Two types that end up with one name make Swashbuckle refuse the document, so a clash cannot pass unnoticed.
/// </remarks>
internal static class OpenApiSchemaNames
{
    /// <summary>The input form of a quantity (string or value-with-unit object), shared by every quantity field of a request.</summary>
    public const string Quantity = "Quantity";

    /// <summary>A number with its unit, as every quantity of an answer is written (and the object form of <see cref="Quantity"/>).</summary>
    public const string QuantityValue = "QuantityValue";

    private static readonly FrozenDictionary<Type, string> Renamed = new Dictionary<Type, string>
    {
        [typeof(QuantityInput)] = Quantity,
        [typeof(QuantityDto)] = QuantityValue,
        // "Properties" alone reads as a JSON keyword in generated code.
        [typeof(PropertiesDto)] = "GasProperties",
    }.ToFrozenDictionary();

    /// <summary>The component name of <paramref name="type"/>.</summary>
    public static string Of(Type type)
    {
        ArgumentNullException.ThrowIfNull(type);
        if (Renamed.TryGetValue(type, out var name))
        {
            return name;
        }

        var stem = type.IsGenericType ? type.Name[..type.Name.IndexOf('`', StringComparison.Ordinal)] : type.Name;
        if (stem.EndsWith("Dto", StringComparison.Ordinal) && stem.Length > 3)
        {
            stem = stem[..^3];
        }

        return type.IsGenericType ? stem + "Of" + string.Concat(type.GetGenericArguments().Select(Of)) : stem;
    }
}
