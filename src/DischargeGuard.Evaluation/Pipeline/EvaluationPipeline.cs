using System.Globalization;
using System.Reflection;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Provider;
using DischargeGuard.Rules.Units;
using DischargeGuard.Thermo;
using UnitsNet;
using RuleStageResult = DischargeGuard.Rules.Evaluation.StageResult;
using ThermoEfficiencyKind = DischargeGuard.Thermo.EfficiencyKind;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>Per-call settings of an evaluation.</summary>
/// <param name="Id">The evaluation id (UUIDv7, assigned by the caller so the audit record and the answer share it).</param>
/// <param name="EvaluatedAt">When (UTC).</param>
/// <param name="IncludeCurve">Whether to add the discharge-temperature curve per stage.</param>
public sealed record EvaluationContext(Guid Id, DateTimeOffset EvaluatedAt, bool IncludeCurve = false)
{
    /// <summary>
    /// Per stage index, the same stage in the asset's earlier evaluations, oldest first (see
    /// <see cref="EvaluationHistory.FromStoredResponses"/>); null when the caller read no history.
    /// </summary>
    public IReadOnlyList<IReadOnlyList<DeviationSample>>? History { get; init; }
}

/// <summary>
/// Turns a validated <see cref="EvaluationRequest"/> into an <see cref="EvaluationResponse"/>: units to absolute SI,
/// the gas (with humidity), the train through the Thermo core, each stage through the rule engine with the envelope
/// before its governing limit, and the answer in the requested units with its cautions. Pure: no I/O, no clock (the
/// caller passes id and time), thread-safe.
/// </summary>
public sealed partial class EvaluationPipeline
{
    /// <summary>Points on the optional discharge-temperature curve.</summary>
    public const int CurvePoints = 41;

    private const double HighPressurePascals = 3e6;

    private readonly UnitVocabulary _units;

    /// <summary>Creates the pipeline over a unit vocabulary (the shipped one by default).</summary>
    public EvaluationPipeline(UnitVocabulary? units = null) => _units = units ?? UnitVocabulary.Default;

    /// <summary>The engine version written into every answer and audit record.</summary>
    public static string EngineVersion { get; } =
        typeof(EvaluationPipeline).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion ?? "0.0.0";

    /// <summary>Evaluates a request that passed <see cref="Validation.EvaluationRequestValidator"/>.</summary>
    public EvaluationOutcome Evaluate(EvaluationRequest request, RuleSetSnapshot rules, EvaluationContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(rules);
        ArgumentNullException.ThrowIfNull(context);
        try
        {
            return EvaluationOutcome.Success(EvaluateOrThrow(request, rules, context));
        }
        catch (RequestProblemException ex)
        {
            return EvaluationOutcome.Refused(ex.Problem);
        }
        catch (ThermoInputException ex)
        {
            // Every range error of the physics is the request's 422: the call sites above map theirs to the field the
            // caller typed; one that escapes them still names its stage member, or the stages when it names none.
            var member = ex.ParamName is { } p && (p.StartsWith("stages[", StringComparison.Ordinal) || p.StartsWith("gas.", StringComparison.Ordinal)) ? p : null;
            return EvaluationOutcome.Refused(Unprocessable(MapThermoMember(member, request.Stages ?? []), ex.Reason).Problem);
        }
    }

    private EvaluationResponse EvaluateOrThrow(EvaluationRequest request, RuleSetSnapshot snapshot, EvaluationContext context)
    {
        var stagesIn = request.Stages ?? throw Invalid("stages", "Give at least one stage.");
        var output = OutputUnitSystem.Named(request.OutputUnits);
        var layers = Resolve(snapshot, request.Site?.Id, request.Asset);
        var effective = layers.Set!;
        var barometer = Barometer(request.Site);
        var feed = Gas(request, barometer);

        var trainStages = new TrainStage[stagesIn.Count];
        var efficiencySources = new (string Source, string? Basis)[stagesIn.Count];
        var calibrations = new StageCalibration?[stagesIn.Count];
        for (var i = 0; i < stagesIn.Count; i++)
        {
            trainStages[i] = TrainStageOf(stagesIn[i], i, barometer, effective, out efficiencySources[i]);
            calibrations[i] = Calibrate(stagesIn[i], i, barometer, effective, feed, ref trainStages[i], ref efficiencySources[i]);
        }

        MassFlow? flow = FlowOf(request.Flow, feed);
        TrainStageResult[] solved;
        try
        {
            solved = TrainSolver.Solve(feed, trainStages, flow);
        }
        catch (ThermoInputException ex)
        {
            throw Unprocessable(MapThermoMember(ex.ParamName, stagesIn), ex.Reason);
        }

        var declared = DeclaredClasses(request.Service, feed, effective);
        var stageDtos = new List<StageDto>(solved.Length);
        var allFindings = new List<FindingDto>();
        var anyNotChecked = false;
        var anyIdeal = false;
        var stageMethods = new HashSet<string>(StringComparer.Ordinal);
        var method = GasModels.Normalize(request.Method);
        var verdict = Verdict.Pass;
        IReadOnlyList<string> serviceClasses = [];
        for (var i = 0; i < solved.Length; i++)
        {
            var s = solved[i];
            var input = stagesIn[i];
            var facts = FactsOf(s, input, i, solved.Length, declared, efficiencySources[i].Source == "rule-default", HumidityField(request.Gas));
            if (context.History is { } history && i < history.Count)
            {
                facts = facts with { DeviationHistory = history[i] };
            }

            // Liquid never reaches a compressor unflagged, whatever the method: the phase at suction (after any cooler and
            // its separator) decides whether the stage can be evaluated at all.
            var separated = input.Intercooler is not null;
            var phaseModel = StagePhases.Prepare(s.Gas);
            var suctionPhase = StagePhases.AtSuction(phaseModel, s.Gas, s.Stage.SuctionTemperature, s.Stage.SuctionPressure, separated);
            facts = facts with { SuctionPhase = suctionPhase.Phase, SuctionSuperheat = suctionPhase.SuperheatAboveHydrocarbonDewPoint };
            if (suctionPhase.Phase is StagePhase.TwoPhase or StagePhase.Liquid)
            {
                var refused = NotEvaluatedStage(s, i, facts, effective, efficiencySources[i], trainStages[i].Efficiency, suctionPhase, output);
                verdict = Worst(verdict, refused.Verdict);
                allFindings.AddRange(refused.Stage.Findings.Select(f => f with { Stage = i }));
                if (i == 0)
                {
                    serviceClasses = refused.ServiceClasses;
                }

                stageDtos.Add(refused.Stage);
                continue;
            }

            var conditions = new StageConditions(s.Stage.SuctionPressure, s.Stage.SuctionTemperature, s.Stage.DischargePressure, trainStages[i].Efficiency, s.MassFlow);
            var idealDischarge = StagePhases.AtDischarge(phaseModel, s.Gas, s.Stage.EstimatedDischargeTemperature, s.Stage.DischargePressure);
            var realGas = idealDischarge is StagePhase.TwoPhase or StagePhase.Liquid
                ? RealGasStage.NotComputed("The real gas was not computed: the discharge state lies inside the two-phase region.")
                : RealGasChoice.Decide(s, conditions, method, i, m => MapThermoMember(m, stagesIn));
            if (realGas.Result is { } rgr)
            {
                facts = facts with
                {
                    RealGasCorrection = TemperatureDelta.FromKelvins(Math.Abs(rgr.DifferenceFromIdealGas.Kelvins)),
                };
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

            facts = WithCalibratedEstimate(facts, calibrations[i]);
            var valveLoss = ValveLossOf(input, effective);
            facts = WithInternalRatio(facts, s, valveLoss, realGas, conditions);
            var flooded = FloodedOf(input, i, effective, s, efficiencySources[i]);
            facts = WithFlooded(facts, flooded);
            var dischargePhase = realGas.Used ? StagePhases.AtDischarge(phaseModel, s.Gas, facts.Estimated, s.Stage.DischargePressure) : idealDischarge;
            facts = facts with { DischargePhase = dischargePhase };
            var envelopeGas = realGas.Used ? realGas : null;
            var ruled = RuleEngine.EvaluateStage(effective, facts, EnvelopeWithFlooded(EnvelopeWithCalibration(new ThermoEnvelopeCalculator(s.Gas, conditions, envelopeGas, valveLoss), calibrations[i], conditions), flooded));
            if (i == 0)
            {
                serviceClasses = ruled.ServiceClasses;
            }

            verdict = Worst(verdict, ruled.Verdict);
            anyNotChecked |= ruled.NotChecked.Count > 0;
            var findings = ruled.Findings.Select(f => FindingOf(f, output, null)).ToList();
            allFindings.AddRange(ruled.Findings.Select(f => FindingOf(f, output, i)));
            var stage = StageOf(s, ruled, findings, efficiencySources[i], trainStages[i].Efficiency, output, context.IncludeCurve ? CurveOf(s, trainStages[i].Efficiency, ruled, output, envelopeGas) : null, LimitsOf(s, conditions, ruled, output, envelopeGas));
            stage = WithRealGas(stage, s, realGas, output);
            stage = WithCalibration(stage, calibrations[i], facts, conditions, ruled.Findings, output);
            stage = WithInternalRatio(stage, facts, ruled.Findings, new ThermoEnvelopeCalculator(s.Gas, conditions, envelopeGas, valveLoss), output);
            stage = WithFlooded(stage, flooded, output);
            stage = stage with { Phase = PhaseOf(suctionPhase, dischargePhase, s.Stage.SuctionTemperature, output) };
            anyIdeal |= !realGas.Used;
            stageMethods.Add(realGas.Method);
            if (facts.MeasuredDischarge is { } measured)
            {
                stage = stage with { Measured = new MeasuredDto(output.Temperature(measured), output.DifferenceKelvin(measured.Kelvins - facts.Estimated.Kelvins)) };
            }

            stageDtos.Add(stage);
        }

        var cautions = new List<string> { Cautions.DeferToCodes, Cautions.KeepProtection };
        if (anyIdeal)
        {
            cautions.Add(Cautions.IdealGas);
        }

        if (stageMethods.Contains(GasModels.PengRobinson))
        {
            cautions.Add(Cautions.RealGas);
        }

        if (stageMethods.Contains(GasModels.Gerg2008))
        {
            cautions.Add(Cautions.Gerg2008);
        }

        if (anyIdeal && solved.Any(s => s.Stage.DischargePressure.Pascals > HighPressurePascals))
        {
            cautions.Add(Cautions.HighPressure);
        }

        if (anyNotChecked)
        {
            cautions.Add(Cautions.NotChecked);
        }

        if (efficiencySources.Any(e => e.Source == "rule-default"))
        {
            cautions.Add(Cautions.DefaultEfficiency);
        }

        return new EvaluationResponse
        {
            Id = context.Id,
            EvaluatedAt = context.EvaluatedAt,
            Verdict = Name(verdict),
            Method = stageMethods.Count == 1 ? stageMethods.First() : stageMethods.Count == 0 ? GasModels.IdealGas : "mixed",
            EngineVersion = EngineVersion,
            Asset = request.Asset,
            Site = request.Site?.Id,
            RuleSet = RuleSetDto.Of(layers),
            Gas = new GasDto(
                output.MolarMass(feed.MolarMass),
                feed.Components.ToDictionary(c => c.Species.Id, c => Math.Round(c.MoleFraction, 8), StringComparer.Ordinal),
                serviceClasses,
                request.Gas?.Preset),
            Stages = stageDtos,
            Findings = allFindings,
            Cautions = cautions,
        };
    }

    /// <summary>Dry-basis O2 mole fraction range read as air (common practice, no single source: dry air is 20.95 % O2).</summary>
    internal const double AirOxygenLow = 0.19;

    /// <summary>Upper end of the air O2 range (above it the oxygen-rich class applies too).</summary>
    internal const double AirOxygenHigh = 0.235;

    /// <summary>Dry-basis hydrocarbon mole fraction from which a gas is read as hydrocarbon service (common practice, no single source).</summary>
    internal const double HydrocarbonShare = 0.5;

    private static readonly string[] Hydrocarbons = ["CH4", "C2H6", "C3H8", "n-C4H10", "i-C4H10", "n-C5H12", "i-C5H12", "n-C6H14", "n-C7H16", "n-C8H18", "n-C9H20", "n-C10H22", "C2H4", "C3H6"];

    // The declared service plus the classes the composition makes obvious: the air and hydrocarbon rules must not depend
    // on the caller remembering to declare them.
    private static string[] DeclaredClasses(string? service, GasMixture gas, EffectiveRuleSet rules)
    {
        var classes = new List<string>(2);
        if (service is not null and not "general")
        {
            classes.Add(ServiceClassOf(service));
        }

        var dry = 1 - gas.MoleFractionOf("H2O");
        var o2 = gas.MoleFractionOf("O2") / dry;
        if (o2 is >= AirOxygenLow and <= AirOxygenHigh && gas.MoleFractionOf("N2") / dry >= 0.7)
        {
            classes.Add("air");
        }

        if (Hydrocarbons.Sum(gas.MoleFractionOf) / dry >= HydrocarbonShare)
        {
            classes.Add("hydrocarbon");
        }

        return classes.Distinct(StringComparer.Ordinal).Where(rules.ServiceClasses.ContainsKey).ToArray();
    }

    // The contract's service words are short; the rule files' service class ids are not always the same word.
    private static string ServiceClassOf(string service) => service switch
    {
        "oxygen" => "oxygen-rich",
        "sour" => "sour-gas",
        _ => service,
    };

    // A near miss of a layer id ("c-204b" for C-204B) is refused rather than silently evaluated without that layer.
    private static LayerResolution Resolve(RuleSetSnapshot snapshot, string? siteId, string? asset)
    {
        var resolution = snapshot.ResolveRequest(siteId, asset);
        return resolution.Refusal is { } refused
            ? throw Invalid(refused.Field == LayerIdField.Site ? "site.id" : "asset", refused.Message)
            : resolution;
    }

    private Pressure? Barometer(SiteInput? site)
    {
        if (site?.BarometricPressure is { } b)
        {
            var p = ParsePressure(b, "site.barometricPressure", out _);
            if (!(p.Kilopascals is >= 30 and <= 110))
            {
                throw Unprocessable("site.barometricPressure", "A barometric pressure must lie between 30 kPa and 110 kPa.");
            }

            return p;
        }

        if (site?.Elevation is { } e)
        {
            var length = (Length)Parse(e, QuantityKind.Length, "site.elevation").Quantity;
            try
            {
                return StandardAtmosphere.PressureAt(length);
            }
            catch (ThermoInputException ex)
            {
                throw Unprocessable("site.elevation", ex.Reason);
            }
        }

        return null;
    }

    private GasMixture Gas(EvaluationRequest request, Pressure? barometer)
    {
        var gas = request.Gas ?? throw Invalid("gas", "Give the gas.");
        GasMixture dry;
        try
        {
            dry = gas.Preset is { } preset
                ? GasCatalog.Default.Preset(preset)
                : GasCatalog.Default.CreateMixture(gas.Composition ?? new Dictionary<string, double>(), gas.Basis == "mass" ? CompositionBasis.Mass : CompositionBasis.Mole);
        }
        catch (InvalidCompositionException ex)
        {
            throw Invalid(ex.SpeciesKey is null ? "gas.composition" : "gas.composition." + ex.SpeciesKey, ex.Message);
        }
        catch (ArgumentOutOfRangeException ex)
        {
            throw Invalid("gas.preset", ex.Message.Split(" (Parameter", StringSplitOptions.None)[0]);
        }

        if (gas.RelativeHumidity is null && gas.DewPoint is null)
        {
            return dry;
        }

        var first = request.Stages is { Count: > 0 } list ? list[0]?.Suction : null;
        if (first?.Pressure is null || first.Temperature is null)
        {
            throw Invalid("gas", "Humidity is given at the first stage's suction, which needs its pressure and temperature.");
        }

        var p1 = Absolute(first.Pressure, "stages[0].suction.pressure", barometer);
        var t1 = ParseTemperature(first.Temperature, "stages[0].suction.temperature");
        try
        {
            return gas.RelativeHumidity is { } rh
                ? HumidGas.FromRelativeHumidity(dry, rh, t1, p1)
                : HumidGas.FromDewPoint(dry, ParseTemperature(gas.DewPoint!, "gas.dewPoint"), t1, p1);
        }
        catch (ThermoInputException ex)
        {
            throw Unprocessable(gas.RelativeHumidity is null ? "gas.dewPoint" : "gas.relativeHumidity", ex.Reason);
        }
        catch (InvalidCompositionException ex)
        {
            throw Invalid("gas.composition.H2O", ex.Message);
        }
    }

    private MassFlow? FlowOf(FlowInput? flow, GasMixture feed)
    {
        if (flow is null)
        {
            return null;
        }

        if (flow.Mass is { } m)
        {
            var mass = (MassFlow)Parse(m, QuantityKind.MassFlow, "flow.mass").Quantity;
            if (!(mass.KilogramsPerSecond > 0))
            {
                throw Unprocessable("flow.mass", "The mass flow must be greater than zero.");
            }

            return mass;
        }

        var volume = (VolumeFlow)Parse(flow.StandardVolume!, QuantityKind.VolumeFlow, "flow.standardVolume").Quantity;
        var reference = StandardReference.All.FirstOrDefault(r => r.Id == flow.Reference)
            ?? throw Invalid("flow.reference", $"Accepted values: {string.Join(", ", StandardReference.All.Select(r => r.Id))}.");
        try
        {
            return reference.ToMassFlow(volume, feed);
        }
        catch (ThermoInputException ex)
        {
            throw Unprocessable("flow.standardVolume", ex.Reason);
        }
    }

    private TrainStage TrainStageOf(StageInput stage, int index, Pressure? barometer, EffectiveRuleSet rules, out (string Source, string? Basis) efficiencySource)
    {
        var path = string.Create(CultureInfo.InvariantCulture, $"stages[{index}]");
        CheckCatalogue(stage.Equipment, path, rules);
        var discharge = Absolute(stage.Discharge?.Pressure ?? throw Invalid(path + ".discharge.pressure", "Give the discharge pressure."), path + ".discharge.pressure", barometer);
        var efficiency = EfficiencyOf(stage, path, rules, out efficiencySource);
        if (stage.Suction is { } suction)
        {
            var p1 = Absolute(suction.Pressure!, path + ".suction.pressure", barometer);
            var t1 = ParseTemperature(suction.Temperature!, path + ".suction.temperature");
            return new TrainStage(discharge, efficiency, SuctionPressure: p1, SuctionTemperature: t1);
        }

        var c = stage.Intercooler!;
        var drop = PressureDrop.None;
        if (c.PressureDrop is { } dropText)
        {
            try
            {
                drop = _units.TryParse(dropText.Text, QuantityKind.Fraction, out var fraction, out _)
                    ? PressureDrop.OfUpstream(((Ratio)fraction!.Quantity).DecimalFractions)
                    : PressureDrop.Absolute((Pressure)Parse(dropText, QuantityKind.PressureDifference, path + ".intercooler.pressureDrop").Quantity);
            }
            catch (ThermoInputException ex)
            {
                throw Unprocessable(path + ".intercooler.pressureDrop", ex.Reason);
            }
        }

        Intercooler cooler;
        try
        {
            cooler = c.OutletTemperature is { } outlet
                ? Intercooler.ToOutlet(ParseTemperature(outlet, path + ".intercooler.outletTemperature"), drop)
                : Intercooler.WithApproach(
                    (TemperatureDelta)Parse(c.Approach!, QuantityKind.TemperatureDifference, path + ".intercooler.approach").Quantity,
                    ParseTemperature(c.CoolantTemperature!, path + ".intercooler.coolantTemperature"),
                    drop);
        }
        catch (ThermoInputException ex)
        {
            throw Unprocessable(path + (c.OutletTemperature is null ? ".intercooler.approach" : ".intercooler.outletTemperature"), ex.Reason);
        }

        return new TrainStage(discharge, efficiency, Intercooler: cooler);
    }

    private static void CheckCatalogue(EquipmentInput? equipment, string path, EffectiveRuleSet rules)
    {
        if (equipment is null)
        {
            return;
        }

        Check(equipment.CompressorType, "compressorType", rules.CompressorTypes.Keys);
        Check(equipment.Lubricant, "lubricant", rules.Lubricants.Keys);
        Check(equipment.ValveMaterial, "valveMaterial", rules.Materials.Where(m => m.Value.Use == MaterialUse.Valve).Select(m => m.Key));
        Check(equipment.SealMaterial, "sealMaterial", rules.Materials.Where(m => m.Value.Use == MaterialUse.Seal).Select(m => m.Key));
        Check(equipment.RingMaterial, "ringMaterial", rules.Materials.Where(m => m.Value.Use == MaterialUse.Ring).Select(m => m.Key));
        Check(equipment.SpringMaterial, "springMaterial", rules.Materials.Where(m => m.Value.Use == MaterialUse.Spring).Select(m => m.Key));
        Check(equipment.DischargeMaterial, "dischargeMaterial", DischargeMaterials.All);

        void Check(string? id, string field, IEnumerable<string> known)
        {
            var list = known.Order(StringComparer.Ordinal).ToArray();
            if (id is not null && !list.Contains(id, StringComparer.Ordinal))
            {
                throw Invalid($"{path}.equipment.{field}", $"'{id}' is not in the active rule set's catalogue. Accepted values: {string.Join(", ", list.Select(k => "'" + k + "'"))}.");
            }
        }
    }

    private static StageEfficiency EfficiencyOf(StageInput stage, string path, EffectiveRuleSet rules, out (string Source, string? Basis) source)
    {
        try
        {
            if (stage.Efficiency is null && stage.Calibration is not null)
            {
                // A stand-in until Calibrate replaces it with what the measured duty implies.
                source = ("calibration", null);
                return StageEfficiency.Isentropic(1);
            }

            if (stage.Efficiency is { } e)
            {
                source = ("request", null);
                var u = e.Uncertainty ?? 0;
                return e.Isentropic is { } s ? StageEfficiency.Isentropic(s, u) : StageEfficiency.Polytropic(e.Polytropic!.Value, u);
            }

            var typeId = stage.Equipment?.CompressorType
                ?? throw Invalid(path + ".efficiency", "Give an efficiency, or equipment.compressorType so its default efficiency from the rule file can be used.");
            var type = rules.CompressorTypes[typeId];
            if (type.DefaultEfficiency is not { } value)
            {
                throw Invalid(path + ".efficiency", $"Compressor type '{typeId}' has no default efficiency in the rule file ({type.EfficiencyBasis}); give one.");
            }

            source = ("rule-default", type.EfficiencyBasis);
            return type.EfficiencyKind == Rules.Model.EfficiencyKind.Polytropic ? StageEfficiency.Polytropic(value) : StageEfficiency.Isentropic(value);
        }
        catch (ThermoInputException ex)
        {
            throw Invalid(path + ".efficiency", ex.Reason);
        }
    }

    private static EfficiencyDto EfficiencyUsed(Thermo.StageResult r, StageEfficiency efficiency, (string Source, string? Basis) source) => new(
        Math.Round(r.IsentropicEfficiency, 6),
        Math.Round(r.PolytropicEfficiency, 6),
        r.EfficiencyKind == ThermoEfficiencyKind.Isentropic ? "isentropic" : "polytropic",
        efficiency.Uncertainty,
        source.Source,
        source.Basis);

    private static PhaseDto PhaseOf(SuctionPhase suction, StagePhase? discharge, Temperature t1, OutputUnitSystem u) => new(
        PhaseName(suction.Phase),
        discharge is { } d ? PhaseName(d) : null,
        suction.HydrocarbonDewPoint is { } hc ? u.Temperature(hc) : null,
        suction.HydrocarbonDewPointNote,
        suction.WaterDewPoint is { } w ? u.Temperature(w) : null,
        suction.SuperheatAboveHydrocarbonDewPoint is { } sh ? u.DifferenceKelvin(sh.Kelvins) : null,
        suction.WaterDewPoint is { } w2 ? u.DifferenceKelvin(t1.Kelvins - w2.Kelvins) : null);

    private static string PhaseName(StagePhase? phase) => phase switch
    {
        null => "unknown",
        StagePhase.Saturated => "saturated",
        StagePhase.TwoPhase => "two-phase",
        StagePhase.Liquid => "liquid",
        _ => "gas",
    };

    /// <summary>A stage whose suction is liquid or two-phase: only the rules that need no discharge temperature, no envelope.</summary>
    private static (StageDto Stage, Verdict Verdict, IReadOnlyList<string> ServiceClasses) NotEvaluatedStage(
        TrainStageResult s, int index, StageFacts facts, EffectiveRuleSet rules, (string Source, string? Basis) efficiencySource, StageEfficiency efficiency,
        SuctionPhase phase, OutputUnitSystem u)
    {
        var ruled = RuleEngine.EvaluateStage(rules, facts);
        var kept = ruled.Findings
            .Where(f => f.Quantity is CheckedQuantity.Combination or CheckedQuantity.SuctionSuperheat or CheckedQuantity.PressureRatio or CheckedQuantity.JacketCoolantInlet)
            .ToList();
        var verdict = kept.Any(f => f.Severity == Severity.Violation) ? Verdict.Fail : kept.Any(f => f.Severity == Severity.Warning) ? Verdict.Review : Verdict.Pass;
        var r = s.Stage;
        var reason = string.Create(CultureInfo.InvariantCulture,
            $"Not evaluated: the gas at this stage's suction is {PhaseName(phase.Phase)} ({(phase.SuperheatAboveHydrocarbonDewPoint is { } sh ? $"{-sh.Kelvins:0.#} K below its hydrocarbon dew point" : "a liquid")}). A compressor must not take in liquid, so no discharge temperature or envelope is given.");
        var stage = new StageDto
        {
            Index = index,
            Verdict = Name(verdict),
            PressureRatio = Math.Round(r.PressureRatio, 6),
            Suction = new StateDto(u.PressureAbsolute(r.SuctionPressure), u.Temperature(r.SuctionTemperature)),
            Discharge = new DischargeStateDto(u.PressureAbsolute(r.DischargePressure)),
            Efficiency = EfficiencyUsed(r, efficiency, efficiencySource),
            Properties = new PropertiesDto(Math.Round(r.KSuction, 6), Math.Round(r.KDischarge, 6), 1.0, 1.0),
            Findings = kept.Select(f => FindingOf(f, u, null)).ToArray(),
            NotChecked = [],
            Phase = PhaseOf(phase, null, r.SuctionTemperature, u),
            NotEvaluated = reason,
        };
        return (stage, verdict, ruled.ServiceClasses);
    }

    private StageFacts FactsOf(TrainStageResult s, StageInput input, int index, int count, IReadOnlyList<string> declared, bool defaulted, string humidityField)
    {
        var path = string.Create(CultureInfo.InvariantCulture, $"stages[{index}]");
        var r = s.Stage;
        return new StageFacts
        {
            StageIndex = index,
            Position = count == 1 ? StagePosition.Only : index == 0 ? StagePosition.First : index == count - 1 ? StagePosition.Last : StagePosition.Intermediate,
            CompressorTypeId = input.Equipment?.CompressorType,
            LubricantId = input.Equipment?.Lubricant,
            ValveMaterialId = input.Equipment?.ValveMaterial,
            SealMaterialId = input.Equipment?.SealMaterial,
            RingMaterialId = input.Equipment?.RingMaterial,
            SpringMaterialId = input.Equipment?.SpringMaterial,
            DischargeMaterial = input.Equipment?.DischargeMaterial,
            MoleFractions = StageComposition.Of(s.Gas),
            DeclaredServiceClasses = declared,
            GasMolarMass = s.Gas.MolarMass,
            // One basis for every oxygen class: the dry-basis fraction, whatever the humidity.
            OxygenMoleFraction = Ratio.FromDecimalFractions(s.Gas.MoleFractionOf("O2") / (1 - s.Gas.WaterMoleFraction)),
            DischargeOxygenPartialPressure = Pressure.FromPascals(s.Gas.MoleFractionOf("O2") * r.DischargePressure.Pascals),
            SuctionTemperature = r.SuctionTemperature,
            SuctionPressure = r.SuctionPressure,
            DischargePressure = r.DischargePressure,
            Isentropic = r.IsentropicDischargeTemperature,
            Estimated = r.EstimatedDischargeTemperature,
            EstimatedUpperBound = r.EstimatedUpperBound,
            EfficiencyDefaulted = defaulted,
            MeasuredDischarge = Optional(input.Measured?.DischargeTemperature, path + ".measured.dischargeTemperature"),
            NormalOperatingDischarge = Optional(input.Operation?.NormalDischargeTemperature, path + ".operation.normalDischargeTemperature"),
            JacketCoolantInlet = Optional(input.Operation?.CoolantInletTemperature, path + ".operation.coolantInletTemperature"),
            UnloadedRunning = input.Operation?.UnloadedRunning,
            DesignTemperature = Optional(input.Equipment?.DesignTemperature, path + ".equipment.designTemperature"),
            DischargeWaterDewPoint = DischargeDewPoint(s, index, humidityField),
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

    // The field that put water into the gas, for an error about the water.
    private static string HumidityField(GasInput? gas) =>
        gas?.RelativeHumidity is not null ? "gas.relativeHumidity" : gas?.DewPoint is not null ? "gas.dewPoint" : "gas.composition.H2O";

    private static StageDto StageOf(
        TrainStageResult s, RuleStageResult ruled, IReadOnlyList<FindingDto> findings, (string Source, string? Basis) efficiencySource,
        StageEfficiency efficiency, OutputUnitSystem u, IReadOnlyList<CurvePointDto>? curve, IReadOnlyList<LimitEnvelopeDto> byLimit)
    {
        var r = s.Stage;
        GoverningDto? governing = ruled.Governing is { Limit: { } limit } g
            ? new GoverningDto(g.RuleId, g.Quantity.ToName(), u.Reading(limit), g.Margin is { } m ? u.Reading(m) : null)
            : null;
        EnvelopeDto? envelope = ruled.Envelope is { } e
            ? new EnvelopeDto(
                e.MaxDischargePressure.Value is { } p ? u.PressureAbsolute(p) : null,
                e.MaxSuctionTemperature.Value is { } t ? u.Temperature(t) : null,
                e.RuleId,
                EnvelopeNote(e),
                byLimit)
            : null;
        return new StageDto
        {
            Index = s.Index,
            Verdict = Name(ruled.Verdict),
            PressureRatio = Math.Round(r.PressureRatio, 6),
            Suction = new StateDto(u.PressureAbsolute(r.SuctionPressure), u.Temperature(r.SuctionTemperature)),
            Discharge = new DischargeStateDto(u.PressureAbsolute(r.DischargePressure)),
            Efficiency = EfficiencyUsed(r, efficiency, efficiencySource),
            DischargeTemperature = new DischargeTemperatureDto(
                u.Temperature(r.IsentropicDischargeTemperature),
                u.Temperature(r.EstimatedDischargeTemperature),
                u.Temperature(r.EstimatedUpperBound),
                u.Temperature(r.EstimatedLowerBound),
                new ConstantKDto(
                    Math.Round(r.ConstantK.KAtSuction, 6),
                    u.Temperature(r.ConstantK.Isentropic),
                    u.Temperature(r.ConstantK.Estimated),
                    u.DifferenceKelvin(r.ConstantK.DifferenceFromCpT.Kelvins),
                    Math.Round(r.ConstantK.DifferencePercentOfRise, 3))),
            TemperatureRise = u.DifferenceKelvin(r.TemperatureRise.Kelvins),
            Properties = new PropertiesDto(Math.Round(r.KSuction, 6), Math.Round(r.KDischarge, 6), 1.0, 1.0),
            SpecificWork = new SpecificWorkDto(u.SpecificEnergy(r.SpecificIsentropicWork), u.SpecificEnergy(r.SpecificActualWork)),
            Power = r.Power is { } power ? u.Power(power) : null,
            Condensate = s.Condensate is { } c
                ? new CondensateDto(Math.Round(c.MassFractionOfInlet, 8), c.MassFlow is { } rate ? u.MassFlow(rate) : null, Math.Round(c.WaterMoleFractionAfter, 8))
                : null,
            Governing = governing,
            Envelope = envelope,
            Findings = findings,
            NotChecked = ruled.NotChecked.Select(n => new NotCheckedDto(n.RuleId, n.MissingInputs, n.Reason)).ToArray(),
            Curve = curve,
        };
    }

    // R-RATIO's report: the highest ratio each violation-level temperature limit allows, not only the governing one.
    private static LimitEnvelopeDto[] LimitsOf(TrainStageResult s, StageConditions conditions, RuleStageResult ruled, OutputUnitSystem u, RealGasStage? realGas)
    {
        var list = new List<LimitEnvelopeDto>();
        foreach (var f in ruled.Findings)
        {
            TemperatureQuantity? q = f.Quantity switch
            {
                CheckedQuantity.Isentropic => TemperatureQuantity.Isentropic,
                CheckedQuantity.Estimated => TemperatureQuantity.Estimated,
                CheckedQuantity.EstimatedUpperBound => TemperatureQuantity.EstimatedUpperBound,
                _ => null,
            };
            if (f.RuleSeverity != Severity.Violation || q is null || f.Direction != LimitDirection.Upper || f.Limit?.Temperature is not { } limit)
            {
                continue;
            }

            var e = ThermoEnvelopeCalculator.MaxDischargePressure(s.Gas, conditions, q.Value, limit, realGas);
            var found = e.Status == EnvelopeStatus.Found && e.Value is not null;
            list.Add(new LimitEnvelopeDto(
                f.RuleId,
                f.Quantity.ToName(),
                u.Reading(f.Limit.Value),
                found ? Math.Round(e.Value!.Value.Pascals / conditions.SuctionPressure.Pascals, 4) : null,
                found ? u.PressureAbsolute(e.Value!.Value) : null,
                e.Status switch
                {
                    EnvelopeStatus.Found => "found",
                    EnvelopeStatus.AlreadyExceeded => "already-exceeded",
                    _ => "not-reachable-in-range",
                }));
        }

        return list.ToArray();
    }

    private static string EnvelopeNote(EnvelopeEstimate e)
    {
        static string Describe(string what, EnvelopeBoundStatus status, string? note) => status switch
        {
            EnvelopeBoundStatus.Found => $"{what}: {note ?? "found"}",
            EnvelopeBoundStatus.AlreadyExceeded => $"{what}: already exceeded — {note}",
            EnvelopeBoundStatus.NotReachableInRange => $"{what}: not reachable in range — {note}",
            _ => $"{what}: not computable — {note}",
        };

        return $"Before {e.RuleId} ({e.Quantity.ToName()}) is reached, other stages held fixed. "
            + Describe("Discharge pressure", e.MaxDischargePressure.Status, e.MaxDischargePressure.Note) + " "
            + Describe("Suction temperature", e.MaxSuctionTemperature.Status, e.MaxSuctionTemperature.Note);
    }

    private static List<CurvePointDto> CurveOf(TrainStageResult s, StageEfficiency efficiency, RuleStageResult ruled, OutputUnitSystem u, RealGasStage? realGas)
    {
        var p1 = s.Stage.SuctionPressure.Pascals;
        var pEnd = s.Stage.DischargePressure.Pascals;
        if (ruled.Envelope?.MaxDischargePressure.Value is { } pMax)
        {
            pEnd = Math.Max(pEnd, pMax.Pascals);
        }

        pEnd *= 1.2;
        var points = new List<CurvePointDto>(CurvePoints);
        for (var k = 0; k < CurvePoints; k++)
        {
            var p2 = p1 * (1.001 + ((pEnd / p1) - 1.001) * k / (CurvePoints - 1));
            var c = new StageConditions(s.Stage.SuctionPressure, s.Stage.SuctionTemperature, Pressure.FromPascals(p2), efficiency);
            try
            {
                if (realGas?.SolveDeciding(c) is { } rg)
                {
                    points.Add(new CurvePointDto(u.PressureAbsolute(c.DischargePressure), u.Temperature(rg.EstimatedDischargeTemperature), u.Temperature(rg.EstimatedUpperBound), u.Temperature(rg.IsentropicDischargeTemperature)));
                    continue;
                }

                var r = StageSolver.Solve(s.Gas, c);
                points.Add(new CurvePointDto(u.PressureAbsolute(c.DischargePressure), u.Temperature(r.EstimatedDischargeTemperature), u.Temperature(r.EstimatedUpperBound), u.Temperature(r.IsentropicDischargeTemperature)));
            }
            catch (ThermoInputException)
            {
                // Past the gas data's range the curve simply ends.
                break;
            }
        }

        return points;
    }

    private static FindingDto FindingOf(Finding f, OutputUnitSystem u, int? stage) => new()
    {
        Stage = stage,
        RuleId = f.RuleId,
        Title = f.Title,
        Severity = f.Severity.ToString().ToLowerInvariant(),
        Quantity = f.Quantity.ToName(),
        Value = f.Value is { } v ? u.Reading(v) : null,
        Limit = f.Limit is { } l ? u.Reading(l) : null,
        Margin = f.Margin is { } m ? u.Reading(m) : null,
        Basis = f.Basis,
        Layer = f.Layer,
        LoosenedReason = f.LoosenedReason,
        Message = f.Message,
        Note = f.Note,
        SetPoints = f.SetPoints is { } sp
            ? new SetPointsDto(u.Temperature(sp.Normal), u.Temperature(sp.Alarm), u.Temperature(sp.Trip), sp.Capped ? sp.CapRuleId : null)
            : null,
    };

    private static Verdict Worst(Verdict a, Verdict b) => (Verdict)Math.Max((int)a, (int)b);

    private static string Name(Verdict v) => v switch
    {
        Verdict.Fail => "fail",
        Verdict.Review => "review",
        _ => "pass",
    };

    private Temperature? Optional(QuantityInput? q, string path) => q is null ? null : ParseTemperature(q, path);

    private Temperature ParseTemperature(QuantityInput q, string path) => (Temperature)Parse(q, QuantityKind.Temperature, path).Quantity;

    private Pressure ParsePressure(QuantityInput q, string path, out PressureBasis basis)
    {
        var parsed = Parse(q, QuantityKind.Pressure, path);
        basis = parsed.Basis;
        return (Pressure)parsed.Quantity;
    }

    private Pressure Absolute(QuantityInput q, string path, Pressure? barometer)
    {
        var p = ParsePressure(q, path, out var basis);
        switch (basis)
        {
            case PressureBasis.Absolute:
                break;
            case PressureBasis.Gauge:
                p = barometer is { } b
                    ? Pressure.FromPascals(p.Pascals + b.Pascals)
                    : throw Invalid(path, $"'{q.Text}' is a gauge pressure; give site.barometricPressure or site.elevation.");
                break;
            default:
                throw Invalid(path, $"'{q.Text}': state the pressure basis (absolute: bara, psia, kPa(a), MPa(a); gauge: barg, psig, kPa(g), MPa(g)).");
        }

        if (!(p.Pascals > 0))
        {
            throw Unprocessable(path, $"'{q.Text}' is {p.Kilopascals.ToString("0.###", CultureInfo.InvariantCulture)} kPa absolute; an absolute pressure must be greater than zero.");
        }

        return p;
    }

    private ParsedQuantity Parse(QuantityInput q, QuantityKind kind, string path) =>
        _units.TryParse(q.Text, kind, out var parsed, out var error)
            ? parsed!
            : throw Invalid(path, $"'{q.Text}': {error!.Problem} Accepted units: {string.Join(", ", error.AcceptedTokens)}.");

    private static StageDto WithRealGas(StageDto stage, TrainStageResult s, RealGasStage rg, OutputUnitSystem u)
    {
        var ideal = s.Stage;
        var r = rg.Result;
        var dto = new RealGasDto(
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
        stage = stage with
        {
            Method = rg.Method,
            RealGas = dto,
            Properties = r is { } z ? stage.Properties with { ZSuction = Math.Round(z.ZSuction, 6), ZDischarge = Math.Round(z.ZDischarge, 6) } : stage.Properties,
        };
        if (!rg.Used || r is not { } used || stage.DischargeTemperature is not { } ideals)
        {
            return stage;
        }

        return stage with
        {
            DischargeTemperature = ideals with
            {
                Isentropic = u.Temperature(used.IsentropicDischargeTemperature),
                Estimated = u.Temperature(used.EstimatedDischargeTemperature),
                EstimatedUpperBound = u.Temperature(used.EstimatedUpperBound),
                EstimatedLowerBound = u.Temperature(used.EstimatedLowerBound),
            },
            TemperatureRise = u.DifferenceKelvin(used.EstimatedDischargeTemperature.Kelvins - ideal.SuctionTemperature.Kelvins),
            Efficiency = stage.Efficiency with { Isentropic = Math.Round(used.IsentropicEfficiency, 6), Polytropic = Math.Round(used.PolytropicEfficiency, 6) },
            SpecificWork = new SpecificWorkDto(u.SpecificEnergy(used.SpecificIsentropicWork), u.SpecificEnergy(used.SpecificActualWork)),
            Power = used.Power is { } power ? u.Power(power) : stage.Power,
        };
    }

    // Thermo names members of its own records (stages[i].DischargePressure); the caller knows the request's fields.
    private static string MapThermoMember(string? member, IReadOnlyList<StageInput> stages)
    {
        if (member is null)
        {
            return "stages";
        }

        var dot = member.IndexOf('.', StringComparison.Ordinal);
        if (!member.StartsWith("stages[", StringComparison.Ordinal) || dot < 0)
        {
            return member;
        }

        var prefix = member[..dot];
        var index = int.Parse(member.AsSpan(7, prefix.Length - 8), CultureInfo.InvariantCulture);
        var cooler = index < stages.Count ? stages[index].Intercooler : null;
        var cooled = cooler is not null;
        var field = member[(dot + 1)..] switch
        {
            "DischargePressure" => "discharge.pressure",
            "SuctionPressure" => cooled ? "intercooler.pressureDrop" : "suction.pressure",
            "SuctionTemperature" => cooler is null ? "suction.temperature" : cooler.OutletTemperature is null ? "intercooler.coolantTemperature" : "intercooler.outletTemperature",
            "Efficiency" => "efficiency",
            "Intercooler" => "intercooler",
            "Intercooler.PressureDrop" => "intercooler.pressureDrop",
            var other => char.ToLowerInvariant(other[0]) + other[1..],
        };
        return prefix + "." + field;
    }

    private static RequestProblemException Invalid(string path, string message) =>
        RequestProblemException.Field(ProblemKind.InvalidRequest, "invalid-request", "The request has invalid fields.", path, message);

    private static RequestProblemException Unprocessable(string path, string message) =>
        RequestProblemException.Field(ProblemKind.Unprocessable, "out-of-range", "The request is physically impossible or outside the data's valid range.", path, message);
}
