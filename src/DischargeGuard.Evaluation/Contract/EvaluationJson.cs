using System.Text.Encodings.Web;
using System.Text.Json;
using System.Text.Json.Serialization;

namespace DischargeGuard.Evaluation.Contract;

/// <summary>
/// The contract's JSON settings, shared by the web host, the gate CLI and the tests: camelCase, unknown properties refused
/// (a misspelt field must not be silently ignored by a safety check), duplicate members refused, nulls omitted on output,
/// source-generated.
/// </summary>
public static class EvaluationJson
{
    /// <summary>Options for requests and responses.</summary>
    public static JsonSerializerOptions Options { get; } = Create();

    /// <summary>Applies the contract's settings to <paramref name="options"/> (for the host's HTTP JSON options).</summary>
    public static void Configure(JsonSerializerOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        options.PropertyNamingPolicy = JsonNamingPolicy.CamelCase;
        options.DictionaryKeyPolicy = null;
        options.DefaultIgnoreCondition = JsonIgnoreCondition.WhenWritingNull;
        options.UnmappedMemberHandling = JsonUnmappedMemberHandling.Disallow;
        options.NumberHandling = JsonNumberHandling.Strict;
        options.AllowTrailingCommas = false;
        options.ReadCommentHandling = JsonCommentHandling.Disallow;
        options.MaxDepth = 32;
        // A member named twice would be read last-wins while the record keeps both: the audited request could then read
        // 2.6 barg where 1.0 barg was evaluated. Refused in objects and dictionaries alike (the quantity converter checks its own).
        options.AllowDuplicateProperties = false;
        // Unit symbols (°, ³, Δ) are written as characters, not \u escapes, so answers read as written.
        options.Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping;
        options.TypeInfoResolverChain.Insert(0, EvaluationJsonContext.Default);
    }

    private static JsonSerializerOptions Create()
    {
        var options = new JsonSerializerOptions();
        Configure(options);
        options.MakeReadOnly();
        return options;
    }
}

/// <summary>Source-generated metadata for the contract types (options match <see cref="EvaluationJson.Options"/>, so the
/// generated fast path serialises answers without reflection).</summary>
[JsonSourceGenerationOptions(
    PropertyNamingPolicy = JsonKnownNamingPolicy.CamelCase,
    DefaultIgnoreCondition = JsonIgnoreCondition.WhenWritingNull,
    UnmappedMemberHandling = JsonUnmappedMemberHandling.Disallow,
    NumberHandling = JsonNumberHandling.Strict,
    AllowDuplicateProperties = false,
    MaxDepth = 32)]
[JsonSerializable(typeof(EvaluationRequest))]
[JsonSerializable(typeof(EvaluationResponse))]
[JsonSerializable(typeof(QuantityDto))]
[JsonSerializable(typeof(LimitsInForceDto))]
public sealed partial class EvaluationJsonContext : JsonSerializerContext;
