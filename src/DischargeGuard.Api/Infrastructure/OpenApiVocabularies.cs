using System.Text.Json.Nodes;
using DischargeGuard.Api.Endpoints;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Validation;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Model;
using Microsoft.OpenApi;
using Swashbuckle.AspNetCore.SwaggerGen;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>A closed vocabulary of the contract: a named string enum component.</summary>
/// <param name="Name">Component name.</param>
/// <param name="Description">What the words mean.</param>
/// <param name="Values">Every word, taken from the code that writes or accepts it wherever the code holds the list.</param>
internal sealed record Vocabulary(string Name, string Description, IReadOnlyList<string> Values);

/// <summary>
/// The contract's closed vocabularies and where they are used. A string property (or a list of strings) is matched by
/// its JSON name, or by its owner type and name where one JSON name means different things in different objects; the
/// matched property becomes a <c>$ref</c> to one enum component, so a generated client has one enum type per vocabulary.
/// </summary>
/// <remarks>
/// Catalogue ids (compressor types, lubricants, materials, detected service classes) stay open strings: a site or asset
/// layer may add catalogue entries, so a client enum of the shipped ids would refuse valid answers after a layer is
/// deployed. <see cref="CatalogueIdSchemaFilter"/> lists the shipped ids in their descriptions instead.
/// </remarks>
internal static class OpenApiVocabularies
{
    private static string[] Lower<T>() where T : struct, Enum => Enum.GetNames<T>().Select(n => n.ToLowerInvariant()).ToArray();

    private static readonly string[] GasModelValues = ["ideal-gas", "peng-robinson", "gerg-2008"];

    public static readonly Vocabulary Verdict = new("Verdict", "pass (no warning, no violation), review (a warning and no violation: an engineer should review) or fail (a violation).", Lower<Rules.Model.Verdict>());

    public static readonly Vocabulary Severity = new("Severity", "How serious a rule's outcome is. Rules are info, warning or violation; findings add pass (checked and inside the limit and its warning band).", Lower<Rules.Model.Severity>());

    public static readonly Vocabulary MethodChoice = new("MethodChoice", "The gas model asked for: auto (default: GERG-2008 where it covers the gas and both states, else Peng-Robinson; the ideal gas only where Peng-Robinson cannot answer and the switch criteria do not call for a real gas), ideal-gas, peng-robinson (real-gas is its older alias) or gerg-2008.", ContractValues.Methods);

    public static readonly Vocabulary GasModel = new("GasModel", "The gas model an answer rests on: ideal-gas (cp(T) from NASA polynomials), peng-robinson or gerg-2008.", GasModelValues);

    public static readonly Vocabulary EvaluationMethod = new("EvaluationMethod", "The gas model of the whole answer: the stages' model when they all used one, else mixed.", [.. GasModelValues, "mixed"]);

    public static readonly Vocabulary OutputUnits = new("OutputUnits", "The unit system of the answer.", ContractValues.OutputUnits);

    public static readonly Vocabulary Service = new("Service", "The declared service; hydrogen-rich and oxygen-rich are detected from the composition (air and hydrocarbon also).", ContractValues.Services);

    public static readonly Vocabulary CompositionBasis = new("CompositionBasis", "Whether composition fractions are mole (default) or mass fractions.", ContractValues.Bases);

    public static readonly Vocabulary StandardReference = new("ReferenceConditions", "Reference conditions of a standard volume flow: normal (0 °C, 101.325 kPa), iso-13443 (15 °C, 101.325 kPa) or us-60f (60 °F, 14.696 psia).", ContractValues.References);

    public static readonly Vocabulary Phase = new("PhaseKind", "The phase at a state: gas, saturated (at a water or hydrocarbon dew point), two-phase, liquid, or unknown where it could not be determined.", ["gas", "saturated", "two-phase", "liquid", "unknown"]);

    public static readonly Vocabulary EfficiencyGiven = new("EfficiencyGiven", "Which efficiency was given or defaulted (apparent-exponent: a cooled stage's calibration gave an apparent polytropic exponent instead).", ["isentropic", "polytropic", "apparent-exponent"]);

    public static readonly Vocabulary EfficiencyKind = new("EfficiencyKind", "Whether an efficiency is isentropic or polytropic.", Lower<Rules.Model.EfficiencyKind>());

    public static readonly Vocabulary ValueSource = new("ValueSource", "Where a figure came from: request (given), calibration (implied by a measured duty) or rule-default (the rule file's default for the compressor type).", ["request", "calibration", "rule-default"]);

    public static readonly Vocabulary CalibrationKind = new("CalibrationKind", "What a measured duty implied: efficiency (measured above the isentropic temperature) or apparent-exponent (at or below it, on a cooled stage).", ["efficiency", "apparent-exponent"]);

    public static readonly Vocabulary EnvelopeStatus = new("EnvelopeStatus", "Whether the limit bounds the envelope: found, already-exceeded at the stated duty, or not-reachable-in-range.", ["found", "already-exceeded", "not-reachable-in-range"]);

    public static readonly Vocabulary TrainEnvelopeSplit = new("TrainEnvelopeSplit", "How the train's envelope redistributes the interstage pressures: stated (each stage keeps its share of the overall pressure ratio, in logarithms) or equal (equal stage ratios).", ContractValues.TrainEnvelopeSplits);

    public static readonly Vocabulary LimitDirection = new("LimitDirection", "Which side of the limit is safe: upper (stay at or below) or lower (stay at or above).", Lower<Rules.Model.LimitDirection>());

    public static readonly Vocabulary CheckedQuantity = new("CheckedQuantity", "The quantity a rule checks (the rule file's quantity names; a rule file cannot add others).", CheckedQuantityNames.All);

    public static readonly Vocabulary StagePosition = new("StagePosition", "A stage's place in the train.", Lower<Rules.Model.StagePosition>());

    public static readonly Vocabulary ServiceDetection = new("ServiceDetection", "How a service class is recognised (declared by the caller, or detected from the gas).", Enum.GetNames<Rules.Model.ServiceDetection>());

    public static readonly Vocabulary RuleFileErrorKind = new("RuleFileErrorKind", "What is wrong in a rule file.", Enum.GetNames<Rules.Loading.RuleFileErrorKind>());

    public static readonly Vocabulary AnswerDetail = new("AnswerDetail", "How much an evaluation answer holds: compact (the default: each finding once, under its stage) or full (each rule's basis, the envelope per limit and the gas models side by side).", Lower<Evaluation.Pipeline.AnswerDetail>());

    /// <summary>Every vocabulary, for tests and docs.</summary>
    public static IReadOnlyList<Vocabulary> All { get; } =
    [
        AnswerDetail, Verdict, Severity, MethodChoice, GasModel, EvaluationMethod, OutputUnits, Service, CompositionBasis, StandardReference, Phase,
        EfficiencyGiven, EfficiencyKind, ValueSource, CalibrationKind, EnvelopeStatus, LimitDirection, CheckedQuantity, StagePosition,
        ServiceDetection, RuleFileErrorKind, TrainEnvelopeSplit,
    ];

    /// <summary>The vocabulary of the JSON property <paramref name="property"/> of <paramref name="owner"/>, or null.</summary>
    public static Vocabulary? For(Type owner, string property) => (owner.Name, property) switch
    {
        (_, "verdict" or "baseVerdict") => Verdict,
        (nameof(EvaluationRequest), "trainEnvelopeSplit") => TrainEnvelopeSplit,
        (nameof(TrainEnvelopeDto), "split") => TrainEnvelopeSplit,
        (nameof(TrainBoundDto), "status") => EnvelopeStatus,
        (_, "severity") => Severity,
        (nameof(EvaluationRequest), "method") => MethodChoice,
        (nameof(EvaluationResponse), "method") => EvaluationMethod,
        (_, "method" or "model") => GasModel,
        (_, "outputUnits") => OutputUnits,
        (nameof(EvaluationRequest), "service") => Service,
        (nameof(GasInput), "basis") => CompositionBasis,
        (nameof(FlowInput), "reference") => StandardReference,
        (nameof(PhaseDto), "suction" or "discharge") => Phase,
        (nameof(EfficiencyDto), "given") => EfficiencyGiven,
        (nameof(CompressorTypeDto), "efficiencyKind") => EfficiencyKind,
        (_, "source") when owner == typeof(EfficiencyDto) || owner == typeof(FloodedDto) => ValueSource,
        (nameof(CalibrationDto), "kind") => CalibrationKind,
        (nameof(LimitEnvelopeDto), "status") => EnvelopeStatus,
        (_, "direction") => LimitDirection,
        (_, "quantity" or "quantities") => CheckedQuantity,
        (_, "stagePositions") => StagePosition,
        (nameof(ServiceClassDto), "detection") => ServiceDetection,
        (nameof(RuleErrorDto), "kind") => RuleFileErrorKind,
        _ => null,
    };
}

/// <summary>Turns the string properties of a closed vocabulary into references to its enum component (defined once).</summary>
internal sealed class VocabularySchemaFilter : ISchemaFilter
{
    public void Apply(IOpenApiSchema schema, SchemaFilterContext context)
    {
        if (schema is not OpenApiSchema { Properties: { Count: > 0 } properties })
        {
            return;
        }

        foreach (var (name, property) in properties.ToArray())
        {
            if (property is not OpenApiSchema concrete || OpenApiVocabularies.For(context.Type, name) is not { } vocabulary)
            {
                continue;
            }

            if (concrete.Type?.HasFlag(JsonSchemaType.String) == true && concrete.Enum is not { Count: > 0 } && concrete.Format is null)
            {
                properties[name] = Reference(vocabulary, context);
            }
            else if (concrete.Type?.HasFlag(JsonSchemaType.Array) == true && concrete.Items is OpenApiSchema { Type: { } itemType } && itemType.HasFlag(JsonSchemaType.String))
            {
                concrete.Items = Reference(vocabulary, context);
            }
        }
    }

    private static OpenApiSchemaReference Reference(Vocabulary vocabulary, SchemaFilterContext context) => Reference(vocabulary, context.SchemaRepository);

    /// <summary>A reference to the vocabulary's enum component, defining it in <paramref name="repository"/> on first use.</summary>
    internal static OpenApiSchemaReference Reference(Vocabulary vocabulary, SchemaRepository repository)
    {
        if (repository.Schemas.TryGetValue(vocabulary.Name, out var existing))
        {
            // A contract type given the same wire name would otherwise be referenced silently in place of the enum.
            if (existing is not OpenApiSchema { Enum.Count: > 0 } known || known.Enum.Count != vocabulary.Values.Count)
            {
                throw new InvalidOperationException($"The schema name '{vocabulary.Name}' is taken by a contract type; rename the vocabulary.");
            }
        }
        else
        {
            repository.AddDefinition(vocabulary.Name, new OpenApiSchema
            {
                Type = JsonSchemaType.String,
                Description = vocabulary.Description,
                Enum = vocabulary.Values.Select(v => (JsonNode)JsonValue.Create(v)).ToList(),
            });
        }

        return new OpenApiSchemaReference(vocabulary.Name);
    }
}

/// <summary>
/// Publishes what <see cref="QueryParameters"/> checks: a closed-vocabulary query parameter refers to its enum component
/// (so a generated client has one enum type for it), and a bounded integer states its minimum and maximum.
/// </summary>
internal sealed class QueryParameterOperationFilter : IOperationFilter
{
    public void Apply(OpenApiOperation operation, OperationFilterContext context)
    {
        foreach (var parameter in operation.Parameters?.OfType<OpenApiParameter>() ?? [])
        {
            if (parameter.In != ParameterLocation.Query || parameter.Name is not { } name)
            {
                continue;
            }

            if (QueryParameters.Vocabularies.TryGetValue(name, out var vocabulary))
            {
                parameter.Schema = VocabularySchemaFilter.Reference(vocabulary, context.SchemaRepository);
            }
            else if (QueryParameters.Ranges.TryGetValue(name, out var range) && parameter.Schema is OpenApiSchema schema)
            {
                schema.Minimum = range.Minimum.ToString(System.Globalization.CultureInfo.InvariantCulture);
                schema.Maximum = range.Maximum.ToString(System.Globalization.CultureInfo.InvariantCulture);
            }
        }
    }
}
