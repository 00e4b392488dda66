using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Units;
using DischargeGuard.Thermo;
using UnitsNet;
using UnitsNet.Units;
using ThermoEfficiencyKind = DischargeGuard.Thermo.EfficiencyKind;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// Writes an <see cref="EvaluationResult"/> as the wire answer in the caller's units: compact by default (each finding
/// once, under its stage, with what a planner and a technician need), everything with <see cref="AnswerDetail.Full"/>.
/// Pure: it converts and selects; it computes nothing the verdict depends on.
/// </summary>
public static class ResponseMapper
{
    /// <summary>The answer to <paramref name="result"/> in the units the request asked for.</summary>
    /// <param name="result">The evaluation.</param>
    /// <param name="context">The call's settings (detail).</param>
    public static EvaluationResponse Map(EvaluationResult result, EvaluationContext context)
    {
        ArgumentNullException.ThrowIfNull(result);
        ArgumentNullException.ThrowIfNull(context);
        var full = context.Detail == AnswerDetail.Full;
        var u = OutputUnitSystem.Named(result.Input.Request.OutputUnits);
        var feed = result.Feed;
        var governingScenario = result.GoverningScenario;
        var governing = Governing(governingScenario?.Result ?? result, u);
        return new EvaluationResponse
        {
            Id = result.Id,
            EvaluatedAt = result.EvaluatedAt,
            Verdict = Name(result.Verdict),
            Method = result.Method,
            EngineVersion = EvaluationPipeline.EngineVersion,
            Asset = result.Asset,
            Site = result.Site,
            Governing = governing is null ? null : governing with { Scenario = governingScenario?.Name },
            BarometricPressure = result.Barometer is { } b ? u.PressureAbsolute(b) : null,
            Detail = full ? "full" : "compact",
            RuleSet = RuleSetDto.Of(result.Layers),
            Gas = new GasDto(
                u.MolarMass(feed.MolarMass),
                feed.Components.ToDictionary(c => c.Species.Id, c => Math.Round(c.MoleFraction, 8), StringComparer.Ordinal),
                result.ServiceClasses,
                result.Input.Request.Gas?.Preset),
            Stages = result.Stages.Select(s => StageOf(s, result.Barometer, u, full)).ToArray(),
            Cautions = result.Scenarios.Count == 0 ? result.Cautions : result.Cautions.Concat(result.Scenarios.SelectMany(s => s.Result.Cautions)).Distinct(StringComparer.Ordinal).ToArray(),
            BaseVerdict = result.Scenarios.Count == 0 ? null : Name(result.BaseVerdict),
            Scenarios = result.Scenarios.Count == 0 ? null : result.Scenarios.Select(s => new ScenarioDto(
                s.Name,
                s.Changes,
                Name(s.Result.BaseVerdict),
                s.Result.Method,
                Governing(s.Result, u),
                s.Result.Stages.Select(st => StageOf(st, result.Barometer, u, full)).ToArray())).ToArray(),
            TrainEnvelope = result.TrainEnvelope is { } te
                ? new TrainEnvelopeDto(te.Split, BoundOf(te.MaxFinalDischarge, u), BoundOf(te.MinSuction, u))
                : null,
        };
    }

    private static GoverningSummaryDto? Governing(EvaluationResult result, OutputUnitSystem u) =>
        result.Governing is { Governing: { } g } gs ? new GoverningSummaryDto(gs.Index, g.RuleId, g.Margin is { } m ? u.Reading(m) : null) : null;

    private static GoverningDto? GoverningOf(StageOutcome o, OutputUnitSystem u) => o.Governing is { } g
        ? new GoverningDto(g.RuleId, g.Quantity.ToName(), g.Limit is null ? null : LimitOf(g, u), g.Margin is { } m ? u.Reading(m) : null)
        : null;

    private static TrainBoundDto BoundOf(TrainBound b, OutputUnitSystem u) =>
        new(b.Value is { } p ? u.PressureAbsolute(p) : null, b.Status, b.Stage, b.RuleId);

    /// <summary>The contract's word for a verdict.</summary>
    public static string Name(Verdict verdict) => verdict switch
    {
        Verdict.Fail => "fail",
        Verdict.Review => "review",
        _ => "pass",
    };

    internal static string PhaseName(StagePhase? phase) => phase switch
    {
        null => "unknown",
        StagePhase.Saturated => "saturated",
        StagePhase.TwoPhase => "two-phase",
        StagePhase.Liquid => "liquid",
        _ => "gas",
    };

    private static StageDto StageOf(StageOutcome o, Pressure? barometer, OutputUnitSystem u, bool full)
    {
        var r = o.Solved.Stage;
        var bound = o.Bound;
        var suction = new StateDto(u.PressureAbsolute(r.SuctionPressure), u.Temperature(r.SuctionTemperature))
        {
            PressureAsTyped = AsTyped(r.SuctionPressure, bound.SuctionPressureUnit, barometer),
        };
        var discharge = new DischargeStateDto(u.PressureAbsolute(r.DischargePressure))
        {
            PressureAsTyped = AsTyped(r.DischargePressure, bound.DischargePressureUnit, barometer),
        };
        var stage = new StageDto
        {
            Index = o.Index,
            Verdict = Name(o.Verdict),
            PressureRatio = Math.Round(r.PressureRatio, 6),
            Suction = suction,
            Discharge = discharge,
            Efficiency = EfficiencyOf(o, u, full),
            Findings = o.Findings.Select(f => FindingOf(f, u, full) with
            {
                Uncertainty = o.Widenings.TryGetValue(f.RuleId, out var w) ? new UncertaintyDto(u.DifferenceKelvin(w.WidenedByKelvin), w.Note) : null,
            }).ToArray(),
            NotChecked = o.NotChecked.Select(n => new NotCheckedDto(n.RuleId, n.MissingInputs, full ? n.Reason : null)).ToArray(),
            Phase = PhaseOf(o, u, full),
            Condensate = o.Solved.Condensate is { } c
                ? new CondensateDto(Math.Round(c.MassFractionOfInlet, 8), c.MassFlow is { } rate ? u.MassFlow(rate) : null, Math.Round(c.WaterMoleFractionAfter, 8))
                : null,
        };
        if (o.NotEvaluated is { } reason)
        {
            return stage with
            {
                NotEvaluated = reason,
                Properties = full ? new PropertiesDto(Math.Round(r.KSuction, 6), Math.Round(r.KDischarge, 6), 1.0, 1.0) : null,
                Governing = GoverningOf(o, u),
            };
        }

        var facts = o.Facts;
        RealGasStageResult? used = o.RealGas is { Used: true, Result: { } rg } ? rg : null;
        var lower = o.Flooded is { } fl ? fl.Discharge
            : o.Bound.Calibration is { UsesExponent: true } ? facts.Estimated
            : used?.EstimatedLowerBound ?? r.EstimatedLowerBound;
        return stage with
        {
            Method = o.Method,
            MethodReason = o.RealGas?.Reason,
            DischargeTemperature = new DischargeTemperatureDto(
                u.Temperature(facts.Isentropic),
                u.Temperature(facts.Estimated),
                u.Temperature(facts.EstimatedUpperBound),
                u.Temperature(lower),
                full ? new ConstantKDto(
                    Math.Round(r.ConstantK.KAtSuction, 6),
                    u.Temperature(r.ConstantK.Isentropic),
                    u.Temperature(r.ConstantK.Estimated),
                    u.DifferenceKelvin(r.ConstantK.DifferenceFromCpT.Kelvins),
                    Math.Round(r.ConstantK.DifferencePercentOfRise, 3)) : null)
            {
                IsentropicInternal = facts.IsentropicInternal is { } ti ? u.Temperature(ti) : null,
                Flooded = full && o.Flooded is { } f
                    ? new FloodedDto(
                        Math.Round(f.OilToGasMassRatio, 6), u.Temperature(f.OilInlet), EvaluationPipeline.OilSpecificHeatJoulesPerKilogramKelvin / 1000,
                        u.SpecificEnergy(f.ShaftWork), u.Temperature(f.AdiabaticWithoutOil), f.Source, f.Basis)
                    : null,
            },
            TemperatureRise = u.DifferenceKelvin(facts.Estimated.Kelvins - r.SuctionTemperature.Kelvins),
            Properties = full
                ? new PropertiesDto(Math.Round(r.KSuction, 6), Math.Round(r.KDischarge, 6), used is { } z ? Math.Round(z.ZSuction, 6) : 1.0, used is { } z2 ? Math.Round(z2.ZDischarge, 6) : 1.0)
                : null,
            SpecificWork = full
                ? used is { } w
                    ? new SpecificWorkDto(u.SpecificEnergy(w.SpecificIsentropicWork), u.SpecificEnergy(w.SpecificActualWork))
                    : new SpecificWorkDto(u.SpecificEnergy(r.SpecificIsentropicWork), u.SpecificEnergy(r.SpecificActualWork))
                : null,
            Power = (used?.Power ?? r.Power) is { } power ? u.Power(power) : null,
            Governing = GoverningOf(o, u),
            Envelope = EnvelopeOf(o, barometer, u, full),
            RealGas = full && o.RealGas is { } realGas ? RealGasOf(o, realGas, u) : null,
            Measured = facts.MeasuredDischarge is { } measured
                ? new MeasuredDto(u.Temperature(measured), u.DifferenceKelvin(measured.Kelvins - facts.Estimated.Kelvins))
                : null,
            Curve = o.Curve?.Select(p => new CurvePointDto(u.PressureAbsolute(p.DischargePressure), u.Temperature(p.Estimated), u.Temperature(p.EstimatedUpperBound), u.Temperature(p.Isentropic))).ToArray(),
        };
    }

    // A pressure in the unit and basis the caller typed: gauge stays gauge (less the barometer used), absolute stays absolute.
    private static QuantityDto? AsTyped(Pressure absolute, UnitToken? unit, Pressure? barometer)
    {
        if (unit is null || unit.Unit is not PressureUnit pressureUnit)
        {
            return null;
        }

        var pascals = absolute.Pascals;
        if (unit.Basis == PressureBasis.Gauge)
        {
            if (barometer is not { } b)
            {
                return null;
            }

            pascals -= b.Pascals;
        }

        return new QuantityDto(Math.Round(Pressure.FromPascals(pascals).As(pressureUnit) / unit.Scale, 4), unit.Token);
    }

    private static EfficiencyDto EfficiencyOf(StageOutcome o, OutputUnitSystem u, bool full)
    {
        var r = o.Solved.Stage;
        RealGasStageResult? used = o.RealGas is { Used: true, Result: { } rg } ? rg : null;
        var calibration = o.Bound.Calibration;
        var source = o.Bound.EfficiencySource;
        var dto = new EfficiencyDto(
            Math.Round(used?.IsentropicEfficiency ?? r.IsentropicEfficiency, 6),
            Math.Round(used?.PolytropicEfficiency ?? r.PolytropicEfficiency, 6),
            calibration is { UsesExponent: true } ? "apparent-exponent" : r.EfficiencyKind == ThermoEfficiencyKind.Isentropic ? "isentropic" : "polytropic",
            o.Bound.Train.Efficiency.Uncertainty,
            source.Source,
            full ? source.Basis : null);
        if (!full || calibration is not { } cal)
        {
            return dto;
        }

        var fit = cal.Fit;
        var refit = o.RealGasCalibration;
        return dto with
        {
            Calibration = new CalibrationDto(
                fit.Kind == CalibrationKind.Efficiency ? "efficiency" : "apparent-exponent",
                cal.Used,
                u.Temperature(cal.Measured),
                u.Temperature(refit?.IsentropicAtMeasuredDuty ?? fit.IsentropicAtMeasuredDuty),
                fit.Kind == CalibrationKind.Efficiency ? Math.Round(refit?.IsentropicEfficiency ?? fit.IsentropicEfficiency, 6) : null,
                fit.Kind == CalibrationKind.Efficiency ? Math.Round(refit?.PolytropicEfficiency ?? fit.PolytropicEfficiency, 6) : null,
                Math.Round(fit.Exponent, 6),
                Math.Round(fit.ExponentRatio, 6),
                refit is null ? cal.Note : cal.Note + " Refitted with " + o.RealGas!.Method + ", the model that decides this stage, so the measured duty is reproduced by it."),
        };
    }

    private static EnvelopeDto? EnvelopeOf(StageOutcome o, Pressure? barometer, OutputUnitSystem u, bool full)
    {
        if (o.Envelope is not { } e)
        {
            return null;
        }

        var pMax = e.MaxDischargePressure.Value;
        return new EnvelopeDto(
            pMax is { } p ? u.PressureAbsolute(p) : null,
            e.MaxSuctionTemperature.Value is { } t ? u.Temperature(t) : null,
            e.RuleId,
            full ? EnvelopeNote(e) : null,
            full ? o.ByLimit?.Select(l => LimitOf(l, o, u)).ToArray() : null)
        {
            MaxDischargePressureAsTyped = pMax is { } p2 ? AsTyped(p2, o.Bound.DischargePressureUnit, barometer) : null,
        };
    }

    private static LimitEnvelopeDto LimitOf(LimitEnvelope l, StageOutcome o, OutputUnitSystem u) => new(
        l.Finding.RuleId,
        l.Finding.Quantity.ToName(),
        LimitOf(l.Finding, u)!,
        l.MaxDischargePressure is { } p ? Math.Round(p.Pascals / o.SuctionPressure.Pascals, 4) : null,
        l.MaxDischargePressure is { } p2 ? u.PressureAbsolute(p2) : null,
        l.Status switch
        {
            EnvelopeBoundStatus.Found => "found",
            EnvelopeBoundStatus.AlreadyExceeded => "already-exceeded",
            _ => "not-reachable-in-range",
        });

    private static string EnvelopeNote(EnvelopeEstimate e)
    {
        static string Describe(string what, EnvelopeBoundStatus status, string? note) => status switch
        {
            EnvelopeBoundStatus.Found => $"{what}: {note ?? "found"}",
            EnvelopeBoundStatus.AlreadyExceeded => $"{what}: already exceeded — {note}",
            EnvelopeBoundStatus.NotReachableInRange => $"{what}: not reachable in range — {note}",
            _ => $"{what}: not computable — {note}",
        };

        return $"Before {e.RuleId} ({e.Quantity.ToName()}) is reached, other stages held fixed (the answer's trainEnvelope moves the whole train). "
            + Describe("Discharge pressure", e.MaxDischargePressure.Status, e.MaxDischargePressure.Note) + " "
            + Describe("Suction temperature", e.MaxSuctionTemperature.Status, e.MaxSuctionTemperature.Note);
    }

    private static PhaseDto PhaseOf(StageOutcome o, OutputUnitSystem u, bool full)
    {
        var suction = o.SuctionPhase;
        return new PhaseDto(
            PhaseName(suction.Phase),
            o.NotEvaluated is null && o.DischargePhase is { } d ? PhaseName(d) : null,
            suction.HydrocarbonDewPoint is { } hc ? u.Temperature(hc) : null,
            full || suction.HydrocarbonDewPoint is null ? suction.HydrocarbonDewPointNote : null,
            suction.WaterDewPoint is { } w ? u.Temperature(w) : null,
            suction.SuperheatAboveHydrocarbonDewPoint is { } sh ? u.DifferenceKelvin(sh.Kelvins) : null,
            suction.WaterDewPoint is { } w2 ? u.DifferenceKelvin(o.SuctionTemperature.Kelvins - w2.Kelvins) : null);
    }

    private static RealGasDto RealGasOf(StageOutcome o, RealGasStage rg, OutputUnitSystem u)
    {
        var ideal = o.Solved.Stage;
        var r = rg.Result;
        return new RealGasDto(
            rg.Used,
            rg.Assessment?.RealGasRecommended ?? false,
            rg.Assessment?.Reasons ?? [],
            new MethodTemperaturesDto(u.Temperature(ideal.IsentropicDischargeTemperature), u.Temperature(ideal.EstimatedDischargeTemperature)),
            r is { } a ? new MethodTemperaturesDto(u.Temperature(a.IsentropicDischargeTemperature), u.Temperature(a.EstimatedDischargeTemperature)) : null,
            r is { } b ? new MethodTemperaturesDto(u.DifferenceKelvin(b.IsentropicDifferenceFromIdealGas.Kelvins), u.DifferenceKelvin(b.DifferenceFromIdealGas.Kelvins)) : null,
            rg.Assessment is { } x ? Math.Round(x.SuctionReducedPressure, 4) : null,
            rg.Assessment is { } y ? Math.Round(y.DischargeReducedPressure, 4) : null,
            rg.PengRobinson?.DefaultedPairs.Select(p => p.ToString()).ToArray() ?? [],
            rg.Note,
            rg.ResultModel,
            rg.Reason,
            rg.Method == GasModels.Gerg2008 && rg.PengRobinsonResult is { } pr
                ? new MethodTemperaturesDto(u.Temperature(pr.IsentropicDischargeTemperature), u.Temperature(pr.EstimatedDischargeTemperature))
                : null);
    }

    /// <summary>
    /// A finding's limit as its source gives it: the rule file's stated figure in the answer's unit system where the source
    /// gives one ("150 °C (300 °F)" answers 300 °F in imperial units, not 302 °F; "350 °F" answers 350 °F), else the value
    /// checked, converted. Verdicts and margins are computed from the SI value whatever is shown.
    /// </summary>
    internal static QuantityDto? LimitOf(Finding f, OutputUnitSystem u)
    {
        if (f.Limit is not { } limit)
        {
            return null;
        }

        // One unit system per answer (clients and charts read every temperature on one scale): the source's own figure
        // where it gives one in the answer's system, else the value checked, converted.
        var stated = f.LimitAsStated.FirstOrDefault(v => IsImperial(v.Unit) == u.Imperial && v.Unit is not ("K" or "°R"));
        return stated is null ? u.Reading(limit) : new QuantityDto(stated.Value, stated.Unit);
    }

    private static bool IsImperial(string unit) => unit is "°F" or "°R" or "Δ°F" or "Δ°R";

    private static FindingDto FindingOf(Finding f, OutputUnitSystem u, bool full) => new()
    {
        RuleId = f.RuleId,
        Title = f.Title,
        Severity = f.Severity.ToString().ToLowerInvariant(),
        Quantity = f.Quantity.ToName(),
        Value = f.Value is { } v ? u.Reading(v) : null,
        Limit = LimitOf(f, u),
        Margin = f.Margin is { } m ? u.Reading(m) : null,
        Basis = full ? f.Basis : null,
        Layer = full || f.Layer != "default" ? f.Layer : null,
        LoosenedReason = f.LoosenedReason,
        Message = f.Message,
        Note = full ? f.Note : null,
        SetPoints = f.SetPoints is { } sp
            ? new SetPointsDto(u.Temperature(sp.Normal), u.Temperature(sp.Alarm), u.Temperature(sp.Trip), sp.Capped ? sp.CapRuleId : null)
            : null,
    };
}
