using System.Globalization;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Provider;
using DischargeGuard.Rules.Units;
using DischargeGuard.Thermo;
using UnitsNet;
using static DischargeGuard.Evaluation.Pipeline.ContractPaths;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// Binds a validated request to SI values (<see cref="EvaluationInput"/>): the rule layers, the barometer, the gas with
/// its humidity, each stage's pressures, temperatures, efficiency, calibration and oil injection. Parsing happens here
/// and only here; each error names the request path that caused it.
/// </summary>
internal sealed class RequestBinder(UnitVocabulary units)
{
    private const string EfficiencyNote =
        "Implied by the measured duty (ideal gas with cp(T)); the polytropic efficiency is carried to the proposed duty because it depends less on the pressure ratio than the isentropic one (common practice, no single source). The fit uses the first stage's suction gas.";

    private const string ExponentNote =
        "The measured duty lies at or below the isentropic temperature of a cooled stage: heat left the gas, so no efficiency describes it. The apparent polytropic exponent fitted there, T2/T1 = r^((n−1)/n), is applied at the proposed duty (it assumes the cooling removes a similar share of the heat at both duties — common practice, no single source). Work and power shown are the adiabatic η = 1 values.";

    private static readonly string[] Hydrocarbons = ["CH4", "C2H6", "C3H8", "n-C4H10", "i-C4H10", "n-C5H12", "i-C5H12", "n-C6H14", "n-C7H16", "n-C8H18", "n-C9H20", "n-C10H22", "C2H4", "C3H6"];

    /// <summary>Binds a request against the rule snapshot; throws <see cref="RequestProblemException"/> on the first bad field.</summary>
    public EvaluationInput Bind(EvaluationRequest request, RuleSetSnapshot snapshot)
    {
        var stagesIn = request.Stages ?? throw Invalid("stages", "Give at least one stage.");
        var layers = Resolve(snapshot, request.Site?.Id, request.Asset);
        var rules = layers.Set!;
        var barometer = Barometer(request.Site);
        var feed = Gas(request, barometer);
        var stages = new BoundStage[stagesIn.Count];
        for (var i = 0; i < stagesIn.Count; i++)
        {
            stages[i] = StageOf(stagesIn[i], i, barometer, rules, feed);
        }

        return new EvaluationInput(
            request,
            layers,
            barometer,
            feed,
            stages,
            FlowOf(request.Flow, feed),
            DeclaredClasses(request.Service, feed, rules),
            GasModels.Normalize(request.Method),
            HumidityField(request.Gas));
    }

    private BoundStage StageOf(StageInput stage, int index, Pressure? barometer, EffectiveRuleSet rules, GasMixture feed)
    {
        var path = Stage(index);
        CheckCatalogue(stage.Equipment, path, rules);
        var discharge = Absolute(stage.Discharge?.Pressure ?? throw Invalid(path + ".discharge.pressure", "Give the discharge pressure."), path + ".discharge.pressure", barometer, out var dischargeUnit);
        var efficiency = EfficiencyOf(stage, path, rules, out var source);
        TrainStage train;
        UnitToken? suctionUnit = null;
        if (stage.Suction is { } suction)
        {
            var p1 = Absolute(suction.Pressure!, path + ".suction.pressure", barometer, out var unit);
            suctionUnit = unit;
            var t1 = ParseTemperature(suction.Temperature!, path + ".suction.temperature");
            train = new TrainStage(discharge, efficiency, SuctionPressure: p1, SuctionTemperature: t1);
        }
        else if (stage.FedDirectly == true)
        {
            // The cooler is bypassed or out of service: the gas keeps the previous discharge temperature and takes only the
            // cooler's pressure drop, when one is given.
            train = new TrainStage(discharge, efficiency, Intercooler: Intercooler.Bypassed(DropOf(stage.Intercooler?.PressureDrop, path)));
        }
        else
        {
            train = new TrainStage(discharge, efficiency, Intercooler: CoolerOf(stage.Intercooler!, path));
        }

        var calibration = Calibrate(stage, index, barometer, rules, feed, ref train, ref source);
        return new BoundStage(
            index,
            stage,
            train,
            source,
            calibration,
            Optional(stage.Measured?.DischargeTemperature, path + ".measured.dischargeTemperature"),
            Optional(stage.Operation?.NormalDischargeTemperature, path + ".operation.normalDischargeTemperature"),
            Optional(stage.Operation?.CoolantInletTemperature, path + ".operation.coolantInletTemperature"),
            Optional(stage.Equipment?.DesignTemperature, path + ".equipment.designTemperature"),
            suctionUnit,
            dischargeUnit,
            OilOf(stage.OilInjection, path + ".oilInjection"),
            ValveLossOf(stage, rules));
    }

    private PressureDrop DropOf(QuantityInput? dropText, string path)
    {
        if (dropText is null)
        {
            return PressureDrop.None;
        }

        try
        {
            return dropText.Parse(units, QuantityKind.Fraction, out var fraction, out _)
                ? PressureDrop.OfUpstream(((Ratio)fraction!.Quantity).DecimalFractions)
                : PressureDrop.Absolute((Pressure)Parse(dropText, QuantityKind.PressureDifference, path + ".intercooler.pressureDrop").Quantity);
        }
        catch (ThermoInputException ex)
        {
            throw Unprocessable(path + ".intercooler.pressureDrop", ex.Reason);
        }
    }

    private Intercooler CoolerOf(IntercoolerInput c, string path)
    {
        var drop = DropOf(c.PressureDrop, path);

        try
        {
            return c.OutletTemperature is { } outlet
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
    }

    private BoundOilInjection? OilOf(OilInjectionInput? oil, string path) => oil is null
        ? null
        : new BoundOilInjection(
            oil.Flow is { } f ? (MassFlow)Parse(f, QuantityKind.MassFlow, path + ".flow").Quantity : null,
            Optional(oil.InletTemperature, path + ".inletTemperature"),
            oil.ShaftPower is { } p ? (Power)Parse(p, QuantityKind.Power, path + ".shaftPower").Quantity : null);

    /// <summary>The stage's valve-loss allowance per valve (a fraction), or NaN when its compressor type has none.</summary>
    private static double ValveLossOf(StageInput input, EffectiveRuleSet rules) =>
        input.Equipment?.CompressorType is { } id && rules.CompressorTypes.TryGetValue(id, out var type) && type.ValveLoss is { } loss
            ? loss.PerValveFraction
            : double.NaN;

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
        if (o2 is >= EvaluationPipeline.AirOxygenLow and <= EvaluationPipeline.AirOxygenHigh && gas.MoleFractionOf("N2") / dry >= 0.7)
        {
            classes.Add("air");
        }

        if (Hydrocarbons.Sum(gas.MoleFractionOf) / dry >= EvaluationPipeline.HydrocarbonShare)
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

    // The field that put water into the gas, for an error about the water.
    private static string HumidityField(GasInput? gas) =>
        gas?.RelativeHumidity is not null ? "gas.relativeHumidity" : gas?.DewPoint is not null ? "gas.dewPoint" : "gas.composition.H2O";

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

        var p1 = Absolute(first.Pressure, "stages[0].suction.pressure", barometer, out _);
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
            if (id is null)
            {
                return;
            }

            var list = known.Order(StringComparer.Ordinal).ToArray();
            if (!list.Contains(id, StringComparer.Ordinal))
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

    /// <summary>Fits the stage's calibration, when it has one, and lets it set the efficiency when the stage gave none.</summary>
    private StageCalibration? Calibrate(StageInput stage, int index, Pressure? barometer, EffectiveRuleSet rules, GasMixture gas, ref TrainStage train, ref (string Source, string? Basis) source)
    {
        if (stage.Calibration is not { } c)
        {
            return null;
        }

        var path = Stage(index) + ".calibration";
        var p1 = Absolute(c.Suction?.Pressure ?? throw Invalid(path + ".suction.pressure", "Give the suction pressure of the measured duty."), path + ".suction.pressure", barometer, out _);
        var t1 = ParseTemperature(c.Suction.Temperature ?? throw Invalid(path + ".suction.temperature", "Give the suction temperature of the measured duty."), path + ".suction.temperature");
        var p2 = Absolute(c.Discharge?.Pressure ?? throw Invalid(path + ".discharge.pressure", "Give the discharge pressure of the measured duty."), path + ".discharge.pressure", barometer, out _);
        var measured = ParseTemperature(c.MeasuredDischargeTemperature ?? throw Invalid(path + ".measuredDischargeTemperature", "A calibration needs the discharge temperature measured at that duty."), path + ".measuredDischargeTemperature");
        CalibrationFit fit;
        try
        {
            fit = CalibrationFitter.Fit(gas, p1, t1, p2, measured);
        }
        catch (ThermoInputException ex)
        {
            var field = ex.Member switch
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

        return new StageCalibration(fit, used, measured, note) { Duty = (p1, t1, p2) };
    }

    // Cooled: a jacket coolant temperature stated, or a machine whose injected oil or liquid removes heat.
    private static bool IsCooled(StageInput stage, EffectiveRuleSet rules) =>
        stage.Operation?.CoolantInletTemperature is not null
        || (stage.Equipment?.CompressorType is { } id && rules.CompressorTypes.TryGetValue(id, out var type) && type.PredictionIsUpperBound);

    private Temperature? Optional(QuantityInput? q, string path) => q is null ? null : ParseTemperature(q, path);

    private Temperature ParseTemperature(QuantityInput q, string path) => (Temperature)Parse(q, QuantityKind.Temperature, path).Quantity;

    private Pressure ParsePressure(QuantityInput q, string path, out UnitToken unit)
    {
        var parsed = Parse(q, QuantityKind.Pressure, path);
        unit = parsed.Token;
        return (Pressure)parsed.Quantity;
    }

    private Pressure Absolute(QuantityInput q, string path, Pressure? barometer, out UnitToken unit)
    {
        var p = ParsePressure(q, path, out unit);
        switch (unit.Basis)
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
        q.Parse(units, kind, out var parsed, out var error)
            ? parsed!
            : throw Invalid(path, $"'{q.Text}': {error!.Problem} Accepted units: {string.Join(", ", error.AcceptedTokens)}.");
}
