using DischargeGuard.Rules.Evaluation;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// Merges an asset's earlier evaluations (their per-stage SI summaries, read by
/// <see cref="Service.EvaluationService.HistoryAsync"/>) into the per-stage deviation history that trend rules use.
/// </summary>
public static class EvaluationHistory
{
    /// <summary>Most earlier evaluations worth reading: the longest trend window a rule may ask for.</summary>
    public const int MaxEvaluations = Rules.Model.TrendSpec.MaximumEvaluations;

    /// <summary>Per stage index (up to <paramref name="stageCount"/>), the samples of each response, oldest first.</summary>
    /// <param name="samplesNewestFirst">Each stored record's samples (<see cref="Service.EvaluationService.SamplesOf"/>), newest record first.</param>
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
}

/// <summary>One stage's deviation sample in a stored record.</summary>
/// <param name="Stage">The stage's index in that record.</param>
/// <param name="Sample">Its measured-minus-estimated deviation and pressures.</param>
public readonly record struct StageSample(int Stage, DeviationSample Sample);
