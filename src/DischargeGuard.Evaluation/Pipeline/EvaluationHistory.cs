using System.Text.Json;
using DischargeGuard.Rules.Evaluation;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// Reads an asset's earlier answers (the stored response documents) into the per-stage deviation history that trend
/// rules use. Pure: the caller reads the documents from the audit store.
/// </summary>
public static class EvaluationHistory
{
    /// <summary>Most earlier evaluations worth reading: the longest trend window a rule may ask for.</summary>
    public const int MaxEvaluations = Rules.Model.TrendSpec.MaximumEvaluations;

    /// <summary>
    /// Per stage index (up to <paramref name="stageCount"/>), the samples of the responses that carry a measured
    /// deviation for that stage, oldest first. A document that cannot be read, or a stage without a measurement, adds nothing.
    /// </summary>
    /// <param name="responsesNewestFirst">Stored response documents of the same asset, newest first (as the store lists them).</param>
    /// <param name="stageCount">Stages of the evaluation being made.</param>
    /// <returns>One list per stage.</returns>
    public static IReadOnlyList<IReadOnlyList<DeviationSample>> FromStoredResponses(IEnumerable<ReadOnlyMemory<byte>> responsesNewestFirst, int stageCount)
    {
        ArgumentNullException.ThrowIfNull(responsesNewestFirst);
        return Merge(responsesNewestFirst.Select(SamplesOf), stageCount);
    }

    /// <summary>
    /// The samples one stored response carries, by stage index: what <see cref="Merge"/> needs of it. A stored record
    /// never changes, so a caller may keep this per record id instead of reading the document again.
    /// </summary>
    /// <param name="response">A stored response document.</param>
    /// <returns>Its stages' samples (none when it cannot be read or has no measurement).</returns>
    public static IReadOnlyList<StageSample> SamplesOf(ReadOnlyMemory<byte> response)
    {
        var samples = new List<StageSample>(1);
        try
        {
            using var doc = JsonDocument.Parse(response);
            if (!doc.RootElement.TryGetProperty("stages", out var stages) || stages.ValueKind != JsonValueKind.Array)
            {
                return samples;
            }

            foreach (var stage in stages.EnumerateArray())
            {
                if (stage.TryGetProperty("index", out var ix) && ix.TryGetInt32(out var index) && index >= 0 && Sample(stage) is { } sample)
                {
                    samples.Add(new StageSample(index, sample));
                }
            }
        }
        catch (JsonException)
        {
            // Not a response document this engine wrote; it carries no history.
        }

        return samples;
    }

    /// <summary>Per stage index (up to <paramref name="stageCount"/>), the samples of each response, oldest first.</summary>
    /// <param name="samplesNewestFirst">Each stored response's samples (<see cref="SamplesOf"/>), newest response first.</param>
    /// <param name="stageCount">Stages of the evaluation being made.</param>
    /// <returns>One list per stage.</returns>
    public static IReadOnlyList<IReadOnlyList<DeviationSample>> Merge(IEnumerable<IReadOnlyList<StageSample>> samplesNewestFirst, int stageCount)
    {
        ArgumentNullException.ThrowIfNull(samplesNewestFirst);
        ArgumentOutOfRangeException.ThrowIfNegative(stageCount);
        var perStage = new List<DeviationSample>[stageCount];
        for (var i = 0; i < stageCount; i++)
        {
            perStage[i] = [];
        }

        foreach (var response in samplesNewestFirst)
        {
            foreach (var (index, sample) in response)
            {
                if (index < stageCount)
                {
                    perStage[index].Add(sample);
                }
            }
        }

        foreach (var list in perStage)
        {
            list.Reverse();
        }

        return perStage;
    }

    private static DeviationSample? Sample(JsonElement stage)
    {
        if (!stage.TryGetProperty("measured", out var measured)
            || !measured.TryGetProperty("minusEstimated", out var deviation)
            || !stage.TryGetProperty("suction", out var suction) || !suction.TryGetProperty("pressureAbsolute", out var p1)
            || !stage.TryGetProperty("discharge", out var discharge) || !discharge.TryGetProperty("pressureAbsolute", out var p2))
        {
            return null;
        }

        var dT = Read(deviation) switch
        {
            (var v, "K") => TemperatureDelta.FromKelvins(v),
            (var v, "Δ°F") => TemperatureDelta.FromKelvins(v / 1.8),
            _ => (TemperatureDelta?)null,
        };
        var suctionPressure = PressureOf(Read(p1));
        var dischargePressure = PressureOf(Read(p2));
        return dT is { } d && suctionPressure is { } s && dischargePressure is { } p ? new DeviationSample(d, s, p) : null;
    }

    // The response's absolute pressures are kPa (metric) or psia (imperial).
    private static Pressure? PressureOf((double Value, string? Unit) q) => q switch
    {
        (var v, "kPa") when v > 0 => Pressure.FromKilopascals(v),
        (var v, "psia") when v > 0 => Pressure.FromPoundsForcePerSquareInch(v),
        _ => null,
    };

    private static (double Value, string? Unit) Read(JsonElement quantity) =>
        quantity.ValueKind == JsonValueKind.Object
        && quantity.TryGetProperty("value", out var v) && v.TryGetDouble(out var value)
        && quantity.TryGetProperty("unit", out var u) && u.ValueKind == JsonValueKind.String
            ? (value, u.GetString())
            : (double.NaN, null);
}

/// <summary>One stage's deviation sample in a stored response.</summary>
/// <param name="Stage">The stage's index in that response.</param>
/// <param name="Sample">Its measured-minus-estimated deviation and pressures.</param>
public readonly record struct StageSample(int Stage, DeviationSample Sample);
