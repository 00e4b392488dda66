using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// A stage's calibration from a measured duty: its efficiency (or, on a cooled stage measured at or below the
/// isentropic temperature, its apparent polytropic exponent) back-calculated from one measurement of the same machine,
/// and whether it set the proposed duty's estimate. Fitted at binding (<see cref="RequestBinder"/>).
/// </summary>
/// <param name="Fit">The fit at the measured duty.</param>
/// <param name="Used">True when the stage gave no efficiency of its own, so the calibration decides.</param>
/// <param name="Measured">The measured discharge temperature.</param>
/// <param name="Note">How the fit is carried to the proposed duty.</param>
internal sealed record StageCalibration(CalibrationFit Fit, bool Used, Temperature Measured, string Note)
{
    /// <summary>True when the proposed duty's estimate comes from the apparent exponent rather than an efficiency.</summary>
    public bool UsesExponent => Used && Fit.Kind == CalibrationKind.ApparentExponent;

    /// <summary>On a stage whose estimate comes from the apparent exponent, the estimate (and its bounds) at the proposed duty.</summary>
    public static StageFacts WithCalibratedEstimate(StageFacts facts, StageCalibration? calibration)
    {
        if (calibration is not { UsesExponent: true } cal)
        {
            return facts;
        }

        var t2 = cal.Fit.ApplyExponent(facts.SuctionTemperature, facts.PressureRatio);
        return facts with { Estimated = t2, EstimatedUpperBound = t2 };
    }

    /// <summary>The stage's envelope calculator, closed form for an estimate from the apparent exponent.</summary>
    public static IEnvelopeCalculator Envelope(IEnvelopeCalculator inner, StageCalibration? calibration, StageConditions conditions) =>
        calibration is { UsesExponent: true } cal ? new ExponentEnvelopeCalculator(inner, cal.Fit, conditions) : inner;

    /// <summary>The envelope of a stage whose estimate is T1·r^((n−1)/n): closed form for the estimate, the Thermo solver otherwise.</summary>
    private sealed class ExponentEnvelopeCalculator(IEnvelopeCalculator inner, CalibrationFit fit, StageConditions conditions) : IEnvelopeCalculator
    {
        public (EnvelopeBound<Pressure> MaxDischargePressure, EnvelopeBound<Temperature> MaxSuctionTemperature) Compute(StageFacts stage, CheckedQuantity quantity, Reading limit)
        {
            if (quantity is not (CheckedQuantity.Estimated or CheckedQuantity.EstimatedUpperBound) || limit.Temperature is not { } t)
            {
                return inner.Compute(stage, quantity, limit);
            }

            const string Note = "Closed form from the calibrated apparent exponent: T2 = T1·r^((n−1)/n).";
            var ratio = Math.Pow(t.Kelvins / conditions.SuctionTemperature.Kelvins, 1 / fit.ExponentRatio);
            var t1Max = t.Kelvins / Math.Pow(stage.PressureRatio, fit.ExponentRatio);
            EnvelopeBound<Pressure> p = ratio > stage.PressureRatio
                ? new(EnvelopeBoundStatus.Found, Pressure.FromPascals(conditions.SuctionPressure.Pascals * ratio), Note)
                : new(EnvelopeBoundStatus.AlreadyExceeded, null, Note);
            EnvelopeBound<Temperature> s = t1Max > conditions.SuctionTemperature.Kelvins
                ? new(EnvelopeBoundStatus.Found, Temperature.FromKelvins(t1Max), Note)
                : new(EnvelopeBoundStatus.AlreadyExceeded, null, Note);
            return (p, s);
        }
    }
}
