using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using UnitsNet;
using static DischargeGuard.Rules.Tests.Facts;

namespace DischargeGuard.Rules.Tests;

/// <summary>
/// The fitted rise of measured-minus-estimated deviation: a least-squares line through the newest steady evaluations.
/// Expected values are worked by hand from the least-squares slope formula (arithmetic, no external source).
/// </summary>
public class DeviationTrendTests
{
    private static readonly TrendSpec Spec = new(5, 0.05);

    [Fact]
    public void Rise_WhenDeviationsLieOnAStraightLine_IsTheSpanOfTheLine()
    {
        // 1, 3, 5, 7 then 9 K now: slope 2 K per evaluation over 4 steps.
        var facts = Now(9, [1, 3, 5, 7]);

        Assert.Equal(8.0, DeviationTrend.Rise(facts, Spec)!.Value, 9);
    }

    [Fact]
    public void Rise_WhenDeviationsAreNoisy_IsTheLeastSquaresSlopeTimesTheSpan()
    {
        // y = 0, 3, 1, 4, 2 at x = 0..4: Σ(x−2)(y−2) = 5, Σ(x−2)² = 10, slope 0.5, rise 0.5 × 4 = 2 K.
        var facts = Now(2, [0, 3, 1, 4]);

        Assert.Equal(2.0, DeviationTrend.Rise(facts, Spec)!.Value, 9);
    }

    [Fact]
    public void Rise_WhenHistoryIsLongerThanTheWindow_UsesOnlyTheNewest()
    {
        // An old spike (40 K) outside the 5-evaluation window does not count: the newest five are flat at 2 K.
        var facts = Now(2, [40, 40, 2, 2, 2, 2]);

        Assert.Equal(0.0, DeviationTrend.Rise(facts, Spec)!.Value, 9);
    }

    [Fact]
    public void Rise_WhenAnEvaluationRanAtOtherPressures_SkipsItAndReachesFurtherBack()
    {
        var facts = Now(6, [0, 2, 4]) with { };
        var history = facts.DeviationHistory.ToList();
        // Discharge 10 % higher: not steady, so ignored even though it is the newest.
        history.Add(new DeviationSample(TemperatureDelta.FromKelvins(50), facts.SuctionPressure, facts.DischargePressure * 1.10));
        facts = facts with { DeviationHistory = history };

        Assert.Equal(6.0, DeviationTrend.Rise(facts, Spec)!.Value, 9);
    }

    [Fact]
    public void Rise_WhenFewerThanThreeSteadyEvaluations_IsNull()
    {
        Assert.Null(DeviationTrend.Rise(Now(5, [1]), Spec));
        Assert.Null(DeviationTrend.Rise(Now(5, []), Spec));
    }

    [Fact]
    public void Rise_WhenNothingIsMeasuredNow_IsNull() =>
        Assert.Null(DeviationTrend.Rise(Now(5, [1, 2, 3]) with { MeasuredDischarge = null }, Spec));

    private static StageFacts Now(double deviationNow, double[] earlier)
    {
        var q = Quiet();
        return q with
        {
            MeasuredDischarge = Temperature.FromKelvins(q.Estimated.Kelvins + deviationNow),
            DeviationHistory = earlier.Select(d => new DeviationSample(TemperatureDelta.FromKelvins(d), q.SuctionPressure, q.DischargePressure)).ToArray(),
        };
    }
}
