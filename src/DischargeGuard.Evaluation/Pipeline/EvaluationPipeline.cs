using System.Globalization;
using System.Reflection;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Provider;
using DischargeGuard.Rules.Units;
using DischargeGuard.Thermo;
using UnitsNet;
using static DischargeGuard.Evaluation.Pipeline.ContractPaths;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>Per-call settings of an evaluation.</summary>
/// <param name="Id">The evaluation id (UUIDv7, assigned by the caller so the audit record and the answer share it).</param>
/// <param name="EvaluatedAt">When (UTC).</param>
/// <param name="IncludeCurve">Whether to add the discharge-temperature curve per stage.</param>
public sealed record EvaluationContext(Guid Id, DateTimeOffset EvaluatedAt, bool IncludeCurve = false)
{
    /// <summary>
    /// Per stage index, the same stage in the asset's earlier evaluations, oldest first (see
    /// <see cref="EvaluationHistory"/>); null when the caller read no history.
    /// </summary>
    public IReadOnlyList<IReadOnlyList<DeviationSample>>? History { get; init; }

    /// <summary>How much the answer carries (compact by default).</summary>
    public AnswerDetail Detail { get; init; } = AnswerDetail.Compact;

    // The train's envelope evaluates many trial trains: their per-stage envelopes are not needed.
    internal bool SkipStageEnvelopes { get; init; }
}

/// <summary>
/// One evaluation in three steps: <see cref="RequestBinder"/> binds the request to SI values, the stage evaluator here
/// runs the train through the Thermo core and each stage through the phase checks, the real-gas policy and the rule
/// engine (the governing envelope computed once), and <see cref="ResponseMapper"/> writes the answer in the caller's
/// units. Pure: no I/O, no clock (the caller passes id and time), thread-safe.
/// </summary>
public sealed class EvaluationPipeline
{
    /// <summary>Points on the optional discharge-temperature curve.</summary>
    public const int CurvePoints = 41;

    /// <summary>Dry-basis O2 mole fraction range read as air (common practice, no single source: dry air is 20.95 % O2).</summary>
    internal const double AirOxygenLow = 0.19;

    /// <summary>Upper end of the air O2 range (above it the oxygen-rich class applies too).</summary>
    internal const double AirOxygenHigh = 0.235;

    /// <summary>Dry-basis hydrocarbon mole fraction from which a gas is read as hydrocarbon service (common practice, no single source).</summary>
    internal const double HydrocarbonShare = 0.5;

    /// <summary>Oil specific heat, J/(kg·K): about 2.0 kJ/(kg·K) for mineral and PAO compressor oils near 60–90 °C — common practice, no single source.</summary>
    internal const double OilSpecificHeatJoulesPerKilogramKelvin = 2000;

    private const double HighPressurePascals = 3e6;

    private readonly RequestBinder _binder;
    private readonly UnitVocabulary _units;

    /// <summary>Creates the pipeline over a unit vocabulary (the shipped one by default).</summary>
    public EvaluationPipeline(UnitVocabulary? units = null)
    {
        _units = units ?? UnitVocabulary.Default;
        _binder = new RequestBinder(_units);
    }

    /// <summary>The engine version written into every answer and audit record.</summary>
    public static string EngineVersion { get; } =
        typeof(EvaluationPipeline).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion ?? "0.0.0";

    /// <summary>Evaluates a request that passed <see cref="Validation.EvaluationRequestValidator"/> and writes its answer.</summary>
    public EvaluationOutcome Evaluate(EvaluationRequest request, RuleSetSnapshot rules, EvaluationContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        var (result, problem) = Run(request, rules, context);
        return result is null ? EvaluationOutcome.Refused(problem!) : EvaluationOutcome.Success(ResponseMapper.Map(result, context));
    }

    /// <summary>Evaluates a request that passed validation: the result in SI, or the problem that refuses it.</summary>
    public (EvaluationResult? Result, RequestProblem? Problem) Run(EvaluationRequest request, RuleSetSnapshot rules, EvaluationContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(rules);
        ArgumentNullException.ThrowIfNull(context);
        try
        {
            var input = _binder.Bind(request, rules);
            var result = Evaluate(input, context);
            if (request.TrainEnvelopeSplit is { } split)
            {
                // Asked for: the train's envelope evaluates some thirty to forty trial trains, which the default answer
                // does not pay for.
                var lean = context with { History = null, IncludeCurve = false, Detail = AnswerDetail.Compact, SkipStageEnvelopes = true };
                result.TrainEnvelope = TrainEnvelope.Compute(input, result.Stages, split, trial => Evaluate(trial, lean));
            }
            if (request.Scenarios is { Count: > 0 } scenarios)
            {
                result.Scenarios = scenarios.Select((s, i) => RunScenario(request, s, i, rules, context with { History = null, IncludeCurve = false })).ToArray();
            }

            return (result, null);
        }
        catch (RequestProblemException ex)
        {
            return (null, ex.Problem);
        }
        catch (ThermoInputException ex)
        {
            // Every range error of the physics is the request's 422: the call sites map theirs to the field the caller
            // typed; one that escapes them still names its stage member, or the stages when it names none.
            return (null, Unprocessable(FromThermo(ex, request.Stages ?? []), ex.Reason).Problem);
        }
    }

    // One scenario on the same rule snapshot: its request built and bound, recycle applied, evaluated; any refusal keyed by
    // the scenario's path (an override's field under scenarios[i].override, anything else under scenarios[i]).
    private ScenarioOutcome RunScenario(EvaluationRequest request, ScenarioInput scenario, int index, RuleSetSnapshot rules, EvaluationContext context)
    {
        var path = ScenarioRequests.Path(index);
        try
        {
            var scenarioRequest = ScenarioRequests.Build(request, scenario, index, _units);
            var input = _binder.Bind(scenarioRequest, rules);
            var changes = new List<string>();
            changes.AddRange(ScenarioChanges.Describe(scenario));
            if (scenario.Recycle is { } recycle)
            {
                Temperature? cooled = null;
                if (recycle.CooledTo is { } c)
                {
                    cooled = _units.TryParseTemperature(c.Text, out var t, out var error)
                        ? t
                        : throw Invalid(path + ".recycle.cooledTo", $"'{c.Text}': {error!.Problem}");
                }

                (input, var note) = Recycle.Apply(input, recycle.Fraction!.Value, cooled, path + ".recycle");
                changes.Add(note);
            }

            return new ScenarioOutcome(scenario.Name!, changes, Evaluate(input, context));
        }
        catch (RequestProblemException ex) when (!ex.Problem.Errors.Keys.All(k => k.StartsWith(path, StringComparison.Ordinal)))
        {
            throw new RequestProblemException(Rekey(ex.Problem, scenario, path));
        }
        catch (ThermoInputException ex)
        {
            var at = FromThermo(ex, request.Stages ?? []);
            throw new RequestProblemException(Rekey(Unprocessable(at, ex.Reason).Problem, scenario, path));
        }
    }

    private static RequestProblem Rekey(RequestProblem problem, ScenarioInput scenario, string path)
    {
        var onlyOverride = scenario is { Override: not null, HotDay: null, FouledCooler: null, CoolingWaterFailure: null, Recycle: null };
        var errors = new Dictionary<string, string[]>(StringComparer.Ordinal);
        foreach (var (key, messages) in problem.Errors)
        {
            if (key.StartsWith(path, StringComparison.Ordinal))
            {
                errors[key] = messages;
            }
            else if (onlyOverride)
            {
                errors[path + ".override." + key] = messages;
            }
            else
            {
                errors[path] = [.. errors.GetValueOrDefault(path, []), .. messages.Select(m => $"In this scenario, {key}: {m}")];
            }
        }

        return problem with { Errors = errors };
    }

    private static EvaluationResult Evaluate(EvaluationInput input, EvaluationContext context)
    {
        var stagesIn = input.Request.Stages!;
        var trainStages = input.Stages.Select(s => s.Train).ToArray();
        TrainStageResult[] solved;
        try
        {
            solved = TrainSolver.Solve(input.Feed, trainStages, input.Flow);
        }
        catch (ThermoInputException ex)
        {
            throw Unprocessable(FromThermo(ex, stagesIn), ex.Reason);
        }

        var outcomes = new StageOutcome[solved.Length];
        var verdict = Verdict.Pass;
        IReadOnlyList<string> serviceClasses = [];
        for (var i = 0; i < solved.Length; i++)
        {
            var history = context.History is { } h && i < h.Count ? h[i] : null;
            var (outcome, classes) = EvaluateStage(input, input.Stages[i], solved[i], solved.Length, history, context);
            outcomes[i] = outcome;
            verdict = (Verdict)Math.Max((int)verdict, (int)outcome.Verdict);
            if (i == 0)
            {
                serviceClasses = classes;
            }
        }

        var methods = outcomes.Where(o => o.NotEvaluated is null).Select(o => o.Method).Distinct(StringComparer.Ordinal).ToList();
        var method = methods.Count == 1 ? methods[0] : methods.Count == 0 ? GasModels.IdealGas : "mixed";
        return new EvaluationResult(context.Id, context.EvaluatedAt, input, verdict, method, outcomes, serviceClasses, CautionsOf(input, outcomes));
    }

    private static (StageOutcome Outcome, IReadOnlyList<string> ServiceClasses) EvaluateStage(
        EvaluationInput input, BoundStage bound, TrainStageResult s, int count, IReadOnlyList<DeviationSample>? history, EvaluationContext context)
    {
        var i = bound.Index;
        var facts = FactsOf(input, bound, s, count);
        if (history is not null)
        {
            facts = facts with { DeviationHistory = history };
        }

        // Liquid never reaches a compressor unflagged, whatever the method: the phase at suction (after any cooler and
        // its separator) decides whether the stage can be evaluated at all.
        var separated = bound.Train.Intercooler is { IsBypassed: false };
        var phaseModel = StagePhases.Prepare(s.Gas);
        var suctionPhase = StagePhases.AtSuction(phaseModel, s.Gas, s.Stage.SuctionTemperature, s.Stage.SuctionPressure, separated);
        facts = facts with { SuctionPhase = suctionPhase.Phase, SuctionSuperheat = suctionPhase.SuperheatAboveHydrocarbonDewPoint };
        if (suctionPhase.Phase is StagePhase.TwoPhase or StagePhase.Liquid)
        {
            return NotEvaluatedStage(input, bound, s, facts, suctionPhase);
        }

        var conditions = new StageConditions(s.Stage.SuctionPressure, s.Stage.SuctionTemperature, s.Stage.DischargePressure, bound.Train.Efficiency, s.MassFlow);
        var idealDischarge = StagePhases.AtDischarge(phaseModel, s.Gas, s.Stage.EstimatedDischargeTemperature, s.Stage.DischargePressure);
        var realGas = idealDischarge is StagePhase.TwoPhase or StagePhase.Liquid
            ? RealGasStage.NotComputed("The real gas was not computed: the discharge state lies inside the two-phase region.")
            : RealGasChoice.Decide(s, conditions, input.Method, i, ex => FromThermo(ex, input.Request.Stages!, i), secondOpinion: context.Detail == AnswerDetail.Full);

        // A calibration fitted on the ideal gas does not reproduce its own measurement under a real-gas model (about 1 K
        // for CO2 at 30 → 75 bar): where a real gas decides, the efficiency is refitted with it and the stage re-solved.
        RealGasCalibration? refit = null;
        if (realGas.Used && bound.Calibration is { } calibration)
        {
            var decided = realGas;
            refit = calibration.RefitWith(c =>
            {
                try
                {
                    return decided.SolveDeciding(c);
                }
                catch (ThermoInputException)
                {
                    return null;
                }
            });
            if (refit is not null)
            {
                conditions = conditions with { Efficiency = StageEfficiency.Polytropic(refit.PolytropicEfficiency, conditions.Efficiency.Uncertainty) };
                realGas = RealGasChoice.Decide(s, conditions, realGas.Method, i, ex => FromThermo(ex, input.Request.Stages!, i), secondOpinion: context.Detail == AnswerDetail.Full)
                    with { Reason = realGas.Reason };
            }
        }
        if (realGas.Result is { } rgr)
        {
            facts = facts with { RealGasCorrection = TemperatureDelta.FromKelvins(Math.Abs(rgr.DifferenceFromIdealGas.Kelvins)) };
            if (realGas.Used)
            {
                facts = facts with
                {
                    DecidedBy = realGas.Method,
                    Isentropic = rgr.IsentropicDischargeTemperature,
                    Estimated = rgr.EstimatedDischargeTemperature,
                    EstimatedUpperBound = rgr.EstimatedUpperBound,
                };
            }
        }

        facts = StageCalibration.WithCalibratedEstimate(facts, bound.Calibration);
        facts = InternalRatio.WithIsentropicInternal(facts, s, bound.ValveLossPerValve, realGas, conditions);
        var flooded = FloodedStage.Of(bound, input.Rules, s);
        facts = FloodedStage.WithFlooded(facts, flooded);
        var dischargePhase = realGas.Used ? StagePhases.AtDischarge(phaseModel, s.Gas, facts.Estimated, s.Stage.DischargePressure) : idealDischarge;
        facts = facts with { DischargePhase = dischargePhase };

        // One envelope calculator per stage: the rule engine solves the governing limit's envelope with it, and the full
        // answer's per-limit list reuses it (and that solve) for the other limits.
        var envelope = FloodedStage.Envelope(
            StageCalibration.Envelope(new ThermoEnvelopeCalculator(s.Gas, conditions, realGas.Used ? realGas : null, bound.ValveLossPerValve), bound.Calibration, conditions),
            flooded);
        var (ruled, widenings) = ModelUncertainty.Apply(
            RuleEngine.EvaluateStage(input.Rules, facts, context.SkipStageEnvelopes ? null : envelope),
            facts,
            realGas.Used ? realGas.Method : GasModels.IdealGas,
            flooded is null && bound.Calibration is not { Used: true },
            input.Rules);
        var outcome = new StageOutcome(bound, s, facts, ruled.Verdict, ruled.Findings, ruled, suctionPhase)
        {
            Widenings = widenings,
            DischargePhase = dischargePhase,
            RealGas = realGas,
            Flooded = flooded,
            ByLimit = context.Detail == AnswerDetail.Full ? StageExtras.ByLimit(facts, ruled, envelope) : null,
            Curve = context.IncludeCurve ? StageExtras.Curve(s, conditions.Efficiency, ruled, realGas.Used ? realGas : null) : null,
            RealGasCalibration = refit,
        };
        return (outcome, ruled.ServiceClasses);
    }

    /// <summary>A stage whose suction is liquid or two-phase: only the rules that need no discharge temperature, no envelope.</summary>
    private static (StageOutcome Outcome, IReadOnlyList<string> ServiceClasses) NotEvaluatedStage(
        EvaluationInput input, BoundStage bound, TrainStageResult s, StageFacts facts, SuctionPhase phase)
    {
        var ruled = RuleEngine.EvaluateStage(input.Rules, facts);
        var kept = ruled.Findings
            .Where(f => f.Quantity is CheckedQuantity.Combination or CheckedQuantity.SuctionSuperheat or CheckedQuantity.PressureRatio or CheckedQuantity.JacketCoolantInlet)
            .ToList();
        var verdict = kept.Any(f => f.Severity == Severity.Violation) ? Verdict.Fail : kept.Any(f => f.Severity == Severity.Warning) ? Verdict.Review : Verdict.Pass;
        var reason = string.Create(CultureInfo.InvariantCulture,
            $"Not evaluated: the gas at this stage's suction is {ResponseMapper.PhaseName(phase.Phase)} ({(phase.SuperheatAboveHydrocarbonDewPoint is { } sh ? $"{-sh.Kelvins:0.#} K below its hydrocarbon dew point" : "a liquid")}). A compressor must not take in liquid, so no discharge temperature or envelope is given.");
        var outcome = new StageOutcome(bound, s, facts, verdict, kept, null, phase) { NotEvaluated = reason };
        return (outcome, ruled.ServiceClasses);
    }

    private static StageFacts FactsOf(EvaluationInput input, BoundStage bound, TrainStageResult s, int count)
    {
        var index = bound.Index;
        var equipment = bound.Input.Equipment;
        var r = s.Stage;
        var composition = StageComposition.Of(s.Gas);
        return new StageFacts
        {
            StageIndex = index,
            Position = count == 1 ? StagePosition.Only : index == 0 ? StagePosition.First : index == count - 1 ? StagePosition.Last : StagePosition.Intermediate,
            CompressorTypeId = equipment?.CompressorType,
            LubricantId = equipment?.Lubricant,
            ValveMaterialId = equipment?.ValveMaterial,
            SealMaterialId = equipment?.SealMaterial,
            RingMaterialId = equipment?.RingMaterial,
            SpringMaterialId = equipment?.SpringMaterial,
            DischargeMaterial = equipment?.DischargeMaterial,
            MoleFractions = composition,
            DeclaredServiceClasses = input.DeclaredServiceClasses,
            GasMolarMass = s.Gas.MolarMass,
            // One basis for every oxygen class: the dry-basis fraction, whatever the humidity.
            OxygenMoleFraction = Ratio.FromDecimalFractions(ServiceClassDetector.DryFraction(composition, "O2") ?? 0),
            DischargeOxygenPartialPressure = Pressure.FromPascals(s.Gas.MoleFractionOf("O2") * r.DischargePressure.Pascals),
            SuctionTemperature = r.SuctionTemperature,
            SuctionPressure = r.SuctionPressure,
            DischargePressure = r.DischargePressure,
            Isentropic = r.IsentropicDischargeTemperature,
            Estimated = r.EstimatedDischargeTemperature,
            EstimatedUpperBound = r.EstimatedUpperBound,
            EfficiencyDefaulted = bound.EfficiencySource.Source == "rule-default",
            MeasuredDischarge = bound.MeasuredDischarge,
            NormalOperatingDischarge = bound.NormalOperatingDischarge,
            JacketCoolantInlet = bound.JacketCoolantInlet,
            UnloadedRunning = bound.Input.Operation?.UnloadedRunning,
            DesignTemperature = bound.DesignTemperature,
            DischargeWaterDewPoint = DischargeDewPoint(s, index, input.HumidityField),
        };
    }

    // The water dew point at a stage's discharge. The water-saturation data cover 200–647.096 K: a gas carrying so little
    // water that its dew point at the discharge pressure lies below 200 K (humid air drawn in at −73 °C, say) is outside
    // them, and so is the check that uses it; that is the humidity field's 422, never a 500.
    private static Temperature? DischargeDewPoint(TrainStageResult s, int index, string humidityField)
    {
        try
        {
            return HumidGas.DewPoint(s.Gas, s.Stage.DischargePressure);
        }
        catch (ThermoInputException ex)
        {
            throw Unprocessable(
                humidityField,
                string.Create(CultureInfo.InvariantCulture, $"The water dew point at stage {index + 1}'s discharge is outside the water-saturation data ({WaterSaturation.MinimumKelvin}–{WaterSaturation.CriticalKelvin} K), so the condensation check cannot be made: ") + ex.Reason);
        }
    }

    private static List<string> CautionsOf(EvaluationInput input, IReadOnlyList<StageOutcome> stages)
    {
        var evaluated = stages.Where(s => s.NotEvaluated is null).ToList();
        var anyIdeal = evaluated.Any(s => s.RealGas is not { Used: true });
        var cautions = new List<string> { Cautions.DeferToCodes, Cautions.KeepProtection };
        if (anyIdeal)
        {
            cautions.Add(Cautions.IdealGas);
        }

        if (evaluated.Any(s => s.Method == GasModels.PengRobinson))
        {
            cautions.Add(Cautions.RealGas);
        }

        if (evaluated.Any(s => s.Method == GasModels.Gerg2008))
        {
            cautions.Add(Cautions.Gerg2008);
        }

        if (anyIdeal && stages.Any(s => s.DischargePressure.Pascals > HighPressurePascals))
        {
            cautions.Add(Cautions.HighPressure);
        }

        if (evaluated.Any(s => s.NotChecked.Count > 0))
        {
            cautions.Add(Cautions.NotChecked);
        }

        if (input.Stages.Any(s => s.EfficiencySource.Source == "rule-default"))
        {
            cautions.Add(Cautions.DefaultEfficiency);
        }

        if (evaluated.Any(s => s.Widenings.Count > 0))
        {
            cautions.Add(Cautions.ModelUncertainty);
        }

        if (input.Stages.Any(s => s.Train.Intercooler is { IsBypassed: true } || (s.Index > 0 && s.Train.Intercooler is null && s.Train.SuctionPressure is null)))
        {
            cautions.Add(Cautions.FedDirectly);
        }

        return cautions;
    }
}
