using System.Globalization;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>A stage's calibration: what its measured duty implies and whether it set the proposed duty's estimate.</summary>
/// <param name="Fit">The fit at the measured duty.</param>
/// <param name="Used">True when the stage gave no efficiency of its own, so the calibration decides.</param>
/// <param name="Measured">The measured discharge temperature.</param>
/// <param name="Note">How the fit is carried to the proposed duty.</param>
internal sealed record StageCalibration(CalibrationFit Fit, bool Used, Temperature Measured, string Note)
{
    /// <summary>True when the proposed duty's estimate comes from the apparent exponent rather than an efficiency.</summary>
    public bool UsesExponent => Used && Fit.Kind == CalibrationKind.ApparentExponent;
}

// Calibration from a measured duty: the stage's efficiency (or, on a cooled stage measured at or below the isentropic
// temperature, its apparent polytropic exponent) back-calculated from one measurement of the same machine.
public sealed partial class EvaluationPipeline
{
    private const string EfficiencyNote =
        "Implied by the measured duty (ideal gas with cp(T)); the polytropic efficiency is carried to the proposed duty because it depends less on the pressure ratio than the isentropic one (common practice, no single source). The fit uses the first stage's suction gas.";

    private const string ExponentNote =
        "The measured duty lies at or below the isentropic temperature of a cooled stage: heat left the gas, so no efficiency describes it. The apparent polytropic exponent fitted there, T2/T1 = r^((n−1)/n), is applied at the proposed duty (it assumes the cooling removes a similar share of the heat at both duties — common practice, no single source). Work and power shown are the adiabatic η = 1 values.";

    /// <summary>Fits the stage's calibration, when it has one, and lets it set the efficiency when the stage gave none.</summary>
    private StageCalibration? Calibrate(StageInput stage, int index, Pressure? barometer, EffectiveRuleSet rules, GasMixture gas, ref TrainStage train, ref (string Source, string? Basis) source)
    {
        if (stage.Calibration is not { } c)
        {
            return null;
        }

        var path = string.Create(CultureInfo.InvariantCulture, $"stages[{index}].calibration");
        var p1 = Absolute(c.Suction?.Pressure ?? throw Invalid(path + ".suction.pressure", "Give the suction pressure of the measured duty."), path + ".suction.pressure", barometer);
        var t1 = ParseTemperature(c.Suction.Temperature ?? throw Invalid(path + ".suction.temperature", "Give the suction temperature of the measured duty."), path + ".suction.temperature");
        var p2 = Absolute(c.Discharge?.Pressure ?? throw Invalid(path + ".discharge.pressure", "Give the discharge pressure of the measured duty."), path + ".discharge.pressure", barometer);
        var measured = ParseTemperature(c.MeasuredDischargeTemperature ?? throw Invalid(path + ".measuredDischargeTemperature", "A calibration needs the discharge temperature measured at that duty."), path + ".measuredDischargeTemperature");
        CalibrationFit fit;
        try
        {
            fit = CalibrationFitter.Fit(gas, p1, t1, p2, measured);
        }
        catch (ThermoInputException ex)
        {
            var field = ex.ParamName switch
            {
                nameof(StageConditions.SuctionPressure) => ".suction.pressure",
                nameof(StageConditions.SuctionTemperature) => ".suction.temperature",
                nameof(StageConditions.DischargePressure) => ".discharge.pressure",
                _ => ".measuredDischargeTemperature",
            };
            throw Unprocessable(path + field, "At the measured duty: " + ex.Reason);
        }

        if (fit.Kind == CalibrationKind.ApparentExponent && !IsCooled(stage, rules))
        {
            throw Unprocessable(
                path + ".measuredDischargeTemperature",
                string.Create(CultureInfo.InvariantCulture,
                    $"The measured {measured.DegreesCelsius:0.#} °C is at or below the isentropic (η = 1) discharge temperature of the measured duty, {fit.IsentropicAtMeasuredDuty.DegreesCelsius:0.#} °C, which an uncooled (adiabatic) stage cannot reach: check the thermometer, its thermowell and the pressures and gas of the measured duty, or state operation.coolantInletTemperature if the stage is jacket-cooled."));
        }

        var used = stage.Efficiency is null;
        var note = fit.Kind == CalibrationKind.Efficiency ? EfficiencyNote : ExponentNote;
        if (used)
        {
            try
            {
                train = train with
                {
                    Efficiency = fit.Kind == CalibrationKind.Efficiency
                        ? StageEfficiency.Polytropic(Math.Min(1, fit.PolytropicEfficiency))
                        : StageEfficiency.Isentropic(1),
                };
            }
            catch (ThermoInputException ex)
            {
                throw Unprocessable(path + ".measuredDischargeTemperature", "The implied efficiency is outside (0, 1]: " + ex.Reason);
            }

            source = ("calibration", note);
        }

        return new StageCalibration(fit, used, measured, note);
    }

    // Cooled: a jacket coolant temperature stated, or a machine whose injected oil or liquid removes heat.
    private static bool IsCooled(StageInput stage, EffectiveRuleSet rules) =>
        stage.Operation?.CoolantInletTemperature is not null
        || (stage.Equipment?.CompressorType is { } id && rules.CompressorTypes.TryGetValue(id, out var type) && type.PredictionIsUpperBound);

    /// <summary>On a stage whose estimate comes from the apparent exponent, the estimate (and its bounds) at the proposed duty.</summary>
    private static StageFacts WithCalibratedEstimate(StageFacts facts, StageCalibration? calibration)
    {
        if (calibration is not { UsesExponent: true } cal)
        {
            return facts;
        }

        var t2 = cal.Fit.ApplyExponent(facts.SuctionTemperature, facts.PressureRatio);
        return facts with { Estimated = t2, EstimatedUpperBound = t2 };
    }

    private static IEnvelopeCalculator EnvelopeWithCalibration(IEnvelopeCalculator inner, StageCalibration? calibration, StageConditions conditions) =>
        calibration is { UsesExponent: true } cal ? new ExponentEnvelopeCalculator(inner, cal.Fit, conditions) : inner;

    /// <summary>Adds the calibration to the stage's answer and, for an apparent exponent, its temperatures and limits.</summary>
    private static StageDto WithCalibration(StageDto stage, StageCalibration? calibration, StageFacts facts, StageConditions conditions, IReadOnlyList<Finding> findings, OutputUnitSystem u)
    {
        if (calibration is not { } cal)
        {
            return stage;
        }

        var fit = cal.Fit;
        var dto = new CalibrationDto(
            fit.Kind == CalibrationKind.Efficiency ? "efficiency" : "apparent-exponent",
            cal.Used,
            u.Temperature(cal.Measured),
            u.Temperature(fit.IsentropicAtMeasuredDuty),
            fit.Kind == CalibrationKind.Efficiency ? Math.Round(fit.IsentropicEfficiency, 6) : null,
            fit.Kind == CalibrationKind.Efficiency ? Math.Round(fit.PolytropicEfficiency, 6) : null,
            Math.Round(fit.Exponent, 6),
            Math.Round(fit.ExponentRatio, 6),
            cal.Note);
        stage = stage with { Efficiency = stage.Efficiency with { Calibration = dto } };
        if (!cal.UsesExponent || stage.DischargeTemperature is not { } temps)
        {
            return stage;
        }

        var t2 = u.Temperature(facts.Estimated);
        var envelope = stage.Envelope is { } e
            ? e with
            {
                ByLimit = e.ByLimit.Select(l => l.Quantity is "estimated" or "estimatedUpperBound" ? ExponentLimit(l, fit, conditions, facts, findings, u) : l).ToArray(),
            }
            : null;
        return stage with
        {
            Efficiency = stage.Efficiency with { Given = "apparent-exponent" },
            DischargeTemperature = temps with { Estimated = t2, EstimatedUpperBound = t2, EstimatedLowerBound = t2 },
            TemperatureRise = u.DifferenceKelvin(facts.Estimated.Kelvins - facts.SuctionTemperature.Kelvins),
            Envelope = envelope,
        };
    }

    private static LimitEnvelopeDto ExponentLimit(LimitEnvelopeDto l, CalibrationFit fit, StageConditions conditions, StageFacts facts, IReadOnlyList<Finding> findings, OutputUnitSystem u)
    {
        if (findings.FirstOrDefault(f => f.RuleId == l.RuleId)?.Limit?.Temperature is not { } limit)
        {
            return l;
        }

        var ratio = Math.Pow(limit.Kelvins / conditions.SuctionTemperature.Kelvins, 1 / fit.ExponentRatio);
        var found = ratio > facts.PressureRatio;
        return l with
        {
            MaxPressureRatio = found ? Math.Round(ratio, 4) : null,
            MaxDischargePressure = found ? u.PressureAbsolute(Pressure.FromPascals(conditions.SuctionPressure.Pascals * ratio)) : null,
            Status = found ? "found" : "already-exceeded",
        };
    }

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
