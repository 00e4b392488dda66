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
    /// <summary>The measured duty's suction pressure, suction temperature and discharge pressure (absolute), for a refit by a real-gas model.</summary>
    public (Pressure SuctionPressure, Temperature SuctionTemperature, Pressure DischargePressure)? Duty { get; init; }

    /// <summary>
    /// Where a real-gas model decides, the polytropic efficiency that reproduces the measured temperature at the measured
    /// duty with that model (the binder's fit is ideal gas): a secant on ηp in (0, 1]. Null when the stage's estimate
    /// does not come from an efficiency calibration, or when no ηp in (0, 1] reproduces the measurement with the model
    /// (the ideal-gas fit is then kept, as the answer's note says).
    /// </summary>
    /// <param name="solve">The deciding model's stage solve.</param>
    public RealGasCalibration? RefitWith(Func<StageConditions, RealGasStageResult?> solve)
    {
        if (!Used || Fit.Kind != CalibrationKind.Efficiency || Duty is not { } duty)
        {
            return null;
        }

        var measured = Measured.Kelvins;
        RealGasStageResult? At(double eta) =>
            eta is > 0 and <= 1 ? solve(new StageConditions(duty.SuctionPressure, duty.SuctionTemperature, duty.DischargePressure, StageEfficiency.Polytropic(eta))) : null;

        // T2 falls as ηp rises; the ideal-gas fit is within a few per cent of the answer, so a secant from it converges in
        // three to five solves. 1e-4 K is far inside the thermometer's own error.
        var x0 = Math.Min(1, Fit.PolytropicEfficiency);
        var x1 = Math.Min(1, x0 * 1.01);
        if (x1 == x0)
        {
            x1 = x0 * 0.99;
        }

        if (At(x0) is not { } r0 || At(x1) is not { } r1)
        {
            return null;
        }

        var f0 = r0.EstimatedDischargeTemperature.Kelvins - measured;
        var f1 = r1.EstimatedDischargeTemperature.Kelvins - measured;
        for (var k = 0; k < 30; k++)
        {
            if (Math.Abs(f1) < 1e-4)
            {
                return new RealGasCalibration(x1, r1.IsentropicEfficiency, r1.IsentropicDischargeTemperature);
            }

            if (f1 == f0)
            {
                return null;
            }

            var x2 = x1 - (f1 * (x1 - x0) / (f1 - f0));
            x2 = Math.Clamp(x2, 0.5 * x1, Math.Min(1, 1.5 * x1));
            if (At(x2) is not { } r2)
            {
                return null;
            }

            (x0, f0) = (x1, f1);
            (x1, f1, r1) = (x2, r2.EstimatedDischargeTemperature.Kelvins - measured, r2);
            if (x1 >= 1 && f1 > 0)
            {
                // Even η = 1 (polytropic) leaves the model above the measurement: no efficiency reproduces it.
                return null;
            }
        }

        return null;
    }

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

/// <summary>A calibration refitted with the real-gas model that decides the stage.</summary>
/// <param name="PolytropicEfficiency">The polytropic efficiency that reproduces the measurement with that model, dimensionless.</param>
/// <param name="IsentropicEfficiency">The isentropic efficiency of the same path at the measured duty, dimensionless.</param>
/// <param name="IsentropicAtMeasuredDuty">That model's η = 1 discharge temperature at the measured duty.</param>
internal sealed record RealGasCalibration(double PolytropicEfficiency, double IsentropicEfficiency, Temperature IsentropicAtMeasuredDuty);
