using System.Globalization;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules.Units;
using DischargeGuard.Thermo;
using FluentValidation;
using UnitsNet;

namespace DischargeGuard.Evaluation.Validation;

/// <summary>The accepted words of the contract's enumerated fields.</summary>
public static class ContractValues
{
    /// <summary>Accepted <c>service</c> values.</summary>
    public static IReadOnlyList<string> Services { get; } = ["general", "air", "hydrocarbon", "oxygen", "chlorine", "acetylene", "sour", "co2"];

    /// <summary>Accepted <c>method</c> values.</summary>
    public static IReadOnlyList<string> Methods { get; } = ["auto", "ideal-gas", "peng-robinson", "gerg-2008", "real-gas"];

    /// <summary>Accepted <c>outputUnits</c> values.</summary>
    public static IReadOnlyList<string> OutputUnits { get; } = ["metric", "imperial"];

    /// <summary>Accepted composition bases.</summary>
    public static IReadOnlyList<string> Bases { get; } = ["mole", "mass"];

    /// <summary>Accepted standard-volume references.</summary>
    public static IReadOnlyList<string> References { get; } = StandardReference.All.Select(r => r.Id).ToArray();

    /// <summary>Most stages a request may carry.</summary>
    public const int MaxStages = 12;

    /// <summary>Most scenarios a request may carry.</summary>
    public const int MaxScenarios = 16;

    /// <summary>Accepted <c>trainEnvelopeSplit</c> values.</summary>
    public static IReadOnlyList<string> TrainEnvelopeSplits { get; } = ["stated", "equal"];

    internal static string List(IReadOnlyList<string> values) => string.Join(", ", values.Select(v => "'" + v + "'"));
}

/// <summary>Checks the shape, words and units of an <see cref="EvaluationRequest"/>; physics is the pipeline's job.</summary>
public sealed class EvaluationRequestValidator : AbstractValidator<EvaluationRequest>
{
    /// <summary>Creates the validator over a unit vocabulary (the shipped one by default).</summary>
    public EvaluationRequestValidator(UnitVocabulary? units = null)
    {
        var vocabulary = units ?? UnitVocabulary.Default;
        RuleFor(x => x.Asset)
            .NotEmpty().WithMessage("Give the asset tag of the machine (e.g. \"K-101A\").")
            .MaximumLength(100)
            .Matches(@"^[A-Za-z0-9](?:[A-Za-z0-9._\-/ ]*[A-Za-z0-9])?\z")
            .WithMessage("An asset tag uses letters, digits, space and . _ - / only, and begins and ends with a letter or digit (no trailing space, dot or line break).");
        RuleFor(x => x.Site!).SetValidator(new SiteInputValidator(vocabulary)).When(x => x.Site is not null);
        RuleFor(x => x.Service)
            .Must(v => v is null || ContractValues.Services.Contains(v))
            .WithMessage($"Accepted values: {ContractValues.List(ContractValues.Services)} (hydrogen-rich and oxygen-rich service are detected from the composition, air and hydrocarbon service also from an air-like or hydrocarbon-rich composition).");
        RuleFor(x => x.Gas).NotNull().WithMessage("Give the gas: {\"preset\": \"dry-air\"} or {\"composition\": {...}, \"basis\": \"mole\"}.");
        RuleFor(x => x.Gas!).SetValidator(new GasInputValidator(vocabulary)).When(x => x.Gas is not null);
        RuleFor(x => x.Method)
            .Must(v => v is null || ContractValues.Methods.Contains(v))
            .WithMessage($"Accepted values: {ContractValues.List(ContractValues.Methods)}.");
        RuleFor(x => x.OutputUnits)
            .Must(v => v is null || ContractValues.OutputUnits.Contains(v))
            .WithMessage($"Accepted values: {ContractValues.List(ContractValues.OutputUnits)}.");
        RuleFor(x => x.Flow!).SetValidator(new FlowInputValidator(vocabulary)).When(x => x.Flow is not null);
        RuleFor(x => x.Stages)
            .NotEmpty().WithMessage("Give at least one stage.")
            .Must(s => s is null || s.Count <= ContractValues.MaxStages).WithMessage($"At most {ContractValues.MaxStages} stages.");
        RuleForEach(x => x.Stages).NotNull().WithMessage("A stage cannot be null.").SetValidator(new StageInputValidator(vocabulary));
        RuleFor(x => x).Custom((request, context) => CheckStageOrderAndPressureBasis(request, context, vocabulary));
        RuleFor(x => x.TrainEnvelopeSplit)
            .Must(v => v is null || ContractValues.TrainEnvelopeSplits.Contains(v))
            .WithMessage($"Accepted values: {ContractValues.List(ContractValues.TrainEnvelopeSplits)}.");
        RuleFor(x => x.Scenarios)
            .Must(s => s is null || s.Count <= ContractValues.MaxScenarios).WithMessage($"At most {ContractValues.MaxScenarios} scenarios.");
        RuleFor(x => x).Custom((request, context) => CheckScenarios(request, context, vocabulary));
    }

    // Each scenario: a unique name, at least one change, stages that exist, a recycle fraction in [0, 1), and an override
    // whose merged request is itself valid (its errors keyed under scenarios[i].override).
    private void CheckScenarios(EvaluationRequest request, ValidationContext<EvaluationRequest> context, UnitVocabulary units)
    {
        if (request.Scenarios is not { } scenarios || request.Stages is not { Count: > 0 } stages || stages.Any(s => s is null))
        {
            return;
        }

        var names = new HashSet<string>(StringComparer.Ordinal);
        for (var i = 0; i < scenarios.Count; i++)
        {
            var path = string.Create(CultureInfo.InvariantCulture, $"scenarios[{i}]");
            if (scenarios[i] is not { } s)
            {
                context.AddFailure(path, "A scenario cannot be null.");
                continue;
            }

            if (s.Name is null || !System.Text.RegularExpressions.Regex.IsMatch(s.Name, @"^[a-z0-9](?:[a-z0-9\-]{0,62}[a-z0-9])?\z", System.Text.RegularExpressions.RegexOptions.None, TimeSpan.FromSeconds(1)))
            {
                context.AddFailure(path + ".name", "Give the scenario a name of lower-case letters, digits and hyphens (at most 64), e.g. \"hot-day\".");
            }
            else if (!names.Add(s.Name))
            {
                context.AddFailure(path + ".name", $"The name '{s.Name}' is used by an earlier scenario; names are unique.");
            }

            if (s is { Override: null, HotDay: null, FouledCooler: null, CoolingWaterFailure: null, Recycle: null })
            {
                context.AddFailure(path, "A scenario names at least one change: override, hotDay, fouledCooler, coolingWaterFailure or recycle.");
            }

            if (s.HotDay is { } hot)
            {
                if (hot.SuctionTemperatureRise is null && hot.CoolantTemperatureRise is null)
                {
                    context.AddFailure(path + ".hotDay", "Give suctionTemperatureRise and/or coolantTemperatureRise (differences, e.g. \"10 K\").");
                }

                Difference(hot.SuctionTemperatureRise, path + ".hotDay.suctionTemperatureRise");
                Difference(hot.CoolantTemperatureRise, path + ".hotDay.coolantTemperatureRise");
            }

            if (s.FouledCooler is { } fouled)
            {
                if (fouled.ApproachRise is null)
                {
                    context.AddFailure(path + ".fouledCooler.approachRise", "Give the rise of the cooler's approach (a difference, e.g. \"8 K\").");
                }

                Difference(fouled.ApproachRise, path + ".fouledCooler.approachRise");
                Stages(fouled.Stages, path + ".fouledCooler.stages");
            }

            if (s.CoolingWaterFailure is { } failure)
            {
                Stages(failure.Stages, path + ".coolingWaterFailure.stages");
            }

            if (s.Recycle is { } recycle)
            {
                if (recycle.Fraction is not { } x || !(x >= 0 && x < 1))
                {
                    context.AddFailure(path + ".recycle.fraction", "The recycled share of the first stage's suction flow is a fraction in [0, 1) (0.2 for 20 %).");
                }

                if (recycle.CooledTo is { } t && !units.TryParse(t.Text, QuantityKind.Temperature, out _, out var error))
                {
                    context.AddFailure(path + ".recycle.cooledTo", $"'{t.Text}': {error!.Problem} Accepted units: {string.Join(", ", error.AcceptedTokens)}.");
                }
            }

            if (s.Override is { } o)
            {
                CheckOverride(request, o, path + ".override", context);
            }

            void Difference(QuantityInput? q, string at)
            {
                if (q is null)
                {
                    return;
                }

                if (!units.TryParse(q.Text, QuantityKind.TemperatureDifference, out var parsed, out var error))
                {
                    context.AddFailure(at, $"'{q.Text}': {error!.Problem} Accepted units: {string.Join(", ", error.AcceptedTokens)}.");
                }
                else if (parsed!.Quantity is TemperatureDelta { Kelvins: < 0 })
                {
                    // A hot day and a fouled cooler are the harder cases: a negative rise would turn them into milder ones.
                    context.AddFailure(at, $"'{q.Text}': a rise is 0 K or more (a scenario asks about the harder case; state a milder one with override).");
                }
            }

            void Stages(IReadOnlyList<int>? named, string at)
            {
                if (named is null)
                {
                    return;
                }

                for (var k = 0; k < named.Count; k++)
                {
                    var n = named[k];
                    var itemPath = string.Create(CultureInfo.InvariantCulture, $"{at}[{k}]");
                    if (n < 0 || n >= stages.Count)
                    {
                        context.AddFailure(itemPath, string.Create(CultureInfo.InvariantCulture, $"Stage {n} does not exist: the train has stages 0 to {stages.Count - 1}."));
                    }
                    else if (n == 0 || stages[n].Intercooler is null)
                    {
                        context.AddFailure(itemPath, string.Create(CultureInfo.InvariantCulture, $"Stage {n} has no intercooler before it (the first stage never has one)."));
                    }
                }
            }
        }
    }

    private void CheckOverride(EvaluationRequest request, EvaluationRequest o, string path, ValidationContext<EvaluationRequest> context)
    {
        foreach (var (field, given) in new[] { ("asset", o.Asset is not null), ("site", o.Site is not null), ("scenarios", o.Scenarios is not null), ("trainEnvelopeSplit", o.TrainEnvelopeSplit is not null) })
        {
            if (given)
            {
                context.AddFailure(path + "." + field, "A scenario is evaluated for the base request's asset and site, on the same rules; it cannot change " + field + ".");
            }
        }

        if (o.Stages is { } patchStages && patchStages.Count > request.Stages!.Count)
        {
            context.AddFailure(path + ".stages", string.Create(CultureInfo.InvariantCulture,
                $"The override names {patchStages.Count} stages but the train has {request.Stages.Count}: stage {request.Stages.Count} does not exist (an override changes stages; it does not add them)."));
            return;
        }

        if (o.Asset is not null || o.Site is not null || o.Scenarios is not null)
        {
            return;
        }

        // The base request's own errors are reported at their own paths, not again under every override.
        var own = Validate(Pipeline.ScenarioRequests.Merge(request, null)).Errors.Select(f => (f.PropertyName, f.ErrorMessage)).ToHashSet();
        var merged = Pipeline.ScenarioRequests.Merge(request, o);
        foreach (var failure in Validate(merged).Errors.Where(f => !own.Contains((f.PropertyName, f.ErrorMessage))))
        {
            context.AddFailure(path + "." + Pipeline.ContractPaths.FromValidator(failure.PropertyName), failure.ErrorMessage);
        }
    }

    // Rules that need the stage index or the site: which stage gives a suction, and gauge pressures needing a barometer.
    private static void CheckStageOrderAndPressureBasis(EvaluationRequest request, ValidationContext<EvaluationRequest> context, UnitVocabulary units)
    {
        if (request.Stages is null)
        {
            return;
        }

        var hasBarometer = request.Site?.BarometricPressure is not null || request.Site?.Elevation is not null;
        for (var i = 0; i < request.Stages.Count; i++)
        {
            var stage = request.Stages[i];
            if (stage is null)
            {
                continue;
            }

            var path = string.Create(CultureInfo.InvariantCulture, $"stages[{i}]");
            if (i == 0)
            {
                if (stage.Suction is null)
                {
                    context.AddFailure(path + ".suction", "The first stage needs its suction pressure and temperature.");
                }

                if (stage.Intercooler is not null)
                {
                    context.AddFailure(path + ".intercooler", "The first stage takes its suction directly; an intercooler belongs to a later stage.");
                }

                if (stage.FedDirectly == true)
                {
                    context.AddFailure(path + ".fedDirectly", "The first stage has no previous stage to be fed by; fedDirectly belongs to a later stage (its cooler bypassed or out of service).");
                }
            }
            else if (stage.FedDirectly == true && stage.Suction is not null)
            {
                context.AddFailure(path + ".fedDirectly", "A stage fed directly takes its suction from the previous stage's discharge; give no suction (an intercooler's pressure drop may be given).");
            }
            else if (stage.FedDirectly == true)
            {
                // Fed directly: the suction follows from the previous discharge (less any cooler pressure drop).
            }
            else if (stage.Suction is not null && stage.Intercooler is not null)
            {
                context.AddFailure(path + ".intercooler", "A later stage gives either an intercooler or a suction, never both.");
            }
            else if (stage.Suction is null && stage.Intercooler is null)
            {
                context.AddFailure(path, "A later stage gives either an intercooler (its suction is the previous discharge through the cooler), its own suction, or fedDirectly: true (its cooler bypassed or out of service).");
            }

            if (!hasBarometer)
            {
                foreach (var (field, q) in new[] { ("suction.pressure", stage.Suction?.Pressure), ("discharge.pressure", stage.Discharge?.Pressure) })
                {
                    if (q is not null && q.Parse(units, QuantityKind.Pressure, out var parsed, out _) && parsed!.Basis == PressureBasis.Gauge)
                    {
                        context.AddFailure(
                            path + "." + field,
                            $"'{q.Text}' is a gauge pressure; give site.barometricPressure (e.g. \"98.6 kPa\") or site.elevation (e.g. \"350 m\") so it can be made absolute, or write it absolute (bara, psia, kPa(a), MPa(a)).");
                    }
                }
            }
        }
    }
}

/// <summary>Checks a <see cref="SiteInput"/>.</summary>
public sealed class SiteInputValidator : AbstractValidator<SiteInput>
{
    /// <summary>Creates the validator.</summary>
    public SiteInputValidator(UnitVocabulary units)
    {
        RuleFor(x => x.Id)
            .NotEmpty().WithMessage("Give the site id (it selects the site's rule layer).")
            .MaximumLength(64)
            .Matches(@"^[a-z0-9](?:[a-z0-9\-]*[a-z0-9])?\z")
            .WithMessage(s => "A site id uses lower-case letters, digits and hyphens, and begins and ends with a letter or digit (e.g. \"kestrel-ridge\")"
                + (SpelledAsSiteId(s.Id) is { } meant && meant != s.Id ? $"; did you mean {meant}?" : "."));
        RuleFor(x => x).Must(s => s.Elevation is null || s.BarometricPressure is null)
            .WithName("barometricPressure").WithMessage("Give the barometric pressure or the elevation, not both.");
        RuleFor(x => x.Elevation).Quantity(units, QuantityKind.Length).When(x => x.Elevation is not null);
        RuleFor(x => x.BarometricPressure).Quantity(units, QuantityKind.Pressure, allowedBases: [PressureBasis.NotStated, PressureBasis.Absolute],
            basisMessage: "A barometric pressure is absolute by nature; write it in a plain unit (kPa, hPa, mbar, bar, psi).").When(x => x.BarometricPressure is not null);
    }

    // "Marlow_Fen " is "marlow-fen" written with capitals, another separator or a trailing blank: name the id it spells.
    private static string? SpelledAsSiteId(string? id)
    {
        if (id is null)
        {
            return null;
        }

        var words = id.Split(['-', '_', ' ', '.', '/', '\t', '\r', '\n'], StringSplitOptions.RemoveEmptyEntries);
        var meant = string.Join('-', words).ToLowerInvariant();
        return meant.Length > 0 && meant.All(c => char.IsAsciiLetterLower(c) || char.IsAsciiDigit(c) || c == '-') ? meant : null;
    }
}

/// <summary>Checks a <see cref="GasInput"/>, including species and the sum of fractions.</summary>
public sealed class GasInputValidator : AbstractValidator<GasInput>
{
    /// <summary>Creates the validator.</summary>
    public GasInputValidator(UnitVocabulary units)
    {
        RuleFor(x => x).Must(g => (g.Preset is null) != (g.Composition is null))
            .WithName("preset").WithMessage("Give either a preset or a composition (one of the two).");
        RuleFor(x => x.Preset)
            .Must(p => p is null || GasCatalog.Default.TryGetPreset(p, out _))
            .WithMessage(_ => $"Unknown preset. Accepted values: {ContractValues.List(GasCatalog.Default.Presets.Select(p => p.Id).ToArray())}.");
        RuleFor(x => x.Basis)
            .Must(b => b is null || ContractValues.Bases.Contains(b))
            .WithMessage($"Accepted values: {ContractValues.List(ContractValues.Bases)}.");
        RuleFor(x => x.RelativeHumidity)
            .InclusiveBetween(0, 1).WithMessage("A relative humidity is a fraction from 0 to 1 (0.6 for 60 %).");
        RuleFor(x => x).Must(g => g.RelativeHumidity is null || g.DewPoint is null)
            .WithName("dewPoint").WithMessage("Give a relative humidity or a dew point, not both.");
        RuleFor(x => x.DewPoint).Quantity(units, QuantityKind.Temperature).When(x => x.DewPoint is not null);
        RuleFor(x => x).Custom((gas, context) =>
        {
            if (gas.Composition is null)
            {
                return;
            }

            var ok = true;
            foreach (var (key, value) in gas.Composition)
            {
                if (!GasCatalog.Default.TryGetSpecies(key, out _))
                {
                    context.AddFailure("composition." + key, $"Unknown species '{key}'. Supported species: {GasCatalog.Default.SupportedSpeciesList} (plain names such as 'methane' are accepted too).");
                    ok = false;
                }
                else if (!double.IsFinite(value) || value < 0 || value > 1)
                {
                    context.AddFailure("composition." + key, "Each fraction must lie in [0, 1].");
                    ok = false;
                }
            }

            if (ok)
            {
                try
                {
                    GasCatalog.Default.CreateMixture(gas.Composition, gas.Basis == "mass" ? CompositionBasis.Mass : CompositionBasis.Mole);
                }
                catch (InvalidCompositionException ex)
                {
                    context.AddFailure(ex.SpeciesKey is null ? "composition" : "composition." + ex.SpeciesKey, ex.Message.Split(" (Parameter", StringSplitOptions.None)[0]);
                }
            }
        });
    }
}

/// <summary>Checks a <see cref="FlowInput"/>.</summary>
public sealed class FlowInputValidator : AbstractValidator<FlowInput>
{
    // Units that embed a reference condition; here the reference is its own field.
    private static readonly string[] StandardVolumeTokens = ["Nm³/h", "Nm3/h", "Sm³/h", "Sm3/h", "scfm", "SCFM", "MMSCFD"];

    /// <summary>Creates the validator.</summary>
    public FlowInputValidator(UnitVocabulary units)
    {
        RuleFor(x => x).Must(f => (f.Mass is null) != (f.StandardVolume is null))
            .WithName("mass").WithMessage("Give either a mass flow or a standard volume flow (one of the two).");
        RuleFor(x => x.Mass).Quantity(units, QuantityKind.MassFlow).When(x => x.Mass is not null);
        RuleFor(x => x.StandardVolume)
            .Must(q => !StandardVolumeTokens.Any(t => q!.Text.TrimEnd().EndsWith(" " + t, StringComparison.Ordinal)))
            .WithMessage(f => $"'{f.StandardVolume!.Text}': write the standard volume flow in m³/h, m³/s or ft³/min and name its reference conditions in flow.reference ({ContractValues.List(ContractValues.References)}); the unit itself carries no reference here.")
            .DependentRules(() => RuleFor(x => x.StandardVolume).Quantity(units, QuantityKind.VolumeFlow))
            .When(x => x.StandardVolume is not null);
        RuleFor(x => x.Reference)
            .NotEmpty().When(x => x.StandardVolume is not null).WithMessage($"A standard volume flow needs its reference conditions: {ContractValues.List(ContractValues.References)}.")
            .Must(r => r is null || ContractValues.References.Contains(r)).WithMessage($"Accepted values: {ContractValues.List(ContractValues.References)}.");
    }
}

/// <summary>Checks one <see cref="StageInput"/> (the order rules are on the request validator).</summary>
public sealed class StageInputValidator : AbstractValidator<StageInput>
{
    private static readonly PressureBasis[] StateBases = [PressureBasis.Absolute, PressureBasis.Gauge];
    private const string StateBasisMessage = "State the pressure basis: absolute (bara, psia, kPa(a), MPa(a), atm, Pa) or gauge (barg, psig, kPa(g), MPa(g)); a bare bar, psi, kPa or MPa is ambiguous here.";

    /// <summary>Creates the validator.</summary>
    public StageInputValidator(UnitVocabulary units)
    {
        RuleFor(x => x.Suction!).ChildRules(s =>
        {
            s.RuleFor(x => x.Pressure).NotNull().WithMessage("Give the suction pressure with its basis (e.g. \"1.5 barg\").")
                .Quantity(units, QuantityKind.Pressure, StateBases, StateBasisMessage);
            s.RuleFor(x => x.Temperature).NotNull().WithMessage("Give the suction temperature (e.g. \"35 °C\").")
                .Quantity(units, QuantityKind.Temperature);
        }).When(x => x.Suction is not null);
        RuleFor(x => x.Intercooler!).ChildRules(c =>
        {
            c.RuleFor(x => x.CoolantTemperature).NotNull().When(x => x.Approach is not null).WithMessage("An approach needs the coolant temperature.");
            c.RuleFor(x => x.OutletTemperature).Quantity(units, QuantityKind.Temperature).When(x => x.OutletTemperature is not null);
            c.RuleFor(x => x.Approach).Quantity(units, QuantityKind.TemperatureDifference).When(x => x.Approach is not null);
            c.RuleFor(x => x.CoolantTemperature).Quantity(units, QuantityKind.Temperature).When(x => x.CoolantTemperature is not null);
            c.RuleFor(x => x.PressureDrop).Must(q => q is null || q.Parse(units, QuantityKind.PressureDifference, out _, out _) || q.Parse(units, QuantityKind.Fraction, out _, out _))
                .WithMessage(q => $"'{q.PressureDrop?.Text}' is neither a pressure difference nor a percentage. Accepted units: {string.Join(", ", units.AcceptedTokens(QuantityKind.PressureDifference))}, or % of the upstream pressure.");
        }).When(x => x.Intercooler is not null);
        // A cooler bypassed by a stage fed directly keeps only its pressure drop, so its temperatures are not required.
        RuleFor(x => x.Intercooler!).ChildRules(c =>
            c.RuleFor(x => x).Must(x => (x.OutletTemperature is not null) != (x.Approach is not null))
                .WithName("outletTemperature").WithMessage("Give either the cooler's gas outlet temperature or an approach with a coolant temperature."))
            .When(x => x.Intercooler is not null && x.FedDirectly != true);
        RuleFor(x => x.Discharge).NotNull().WithMessage("Give the discharge pressure with its basis (e.g. \"6.8 barg\").");
        RuleFor(x => x.Discharge!.Pressure).NotNull().WithMessage("Give the discharge pressure with its basis (e.g. \"6.8 barg\").")
            .Quantity(units, QuantityKind.Pressure, StateBases, StateBasisMessage).When(x => x.Discharge is not null);
        RuleFor(x => x.Efficiency!).ChildRules(e =>
        {
            e.RuleFor(x => x).Must(x => (x.Isentropic is null) != (x.Polytropic is null))
                .WithName("isentropic").WithMessage("Give either an isentropic or a polytropic efficiency (one of the two), or leave efficiency out to use the compressor type's default.");
            e.RuleFor(x => x.Isentropic).GreaterThan(0).WithMessage("An efficiency is a fraction in (0, 1] (0.80 for 80 %).")
                .LessThanOrEqualTo(1).WithMessage("An efficiency is a fraction in (0, 1] (0.80 for 80 %).");
            e.RuleFor(x => x.Polytropic).GreaterThan(0).WithMessage("An efficiency is a fraction in (0, 1] (0.82 for 82 %).")
                .LessThanOrEqualTo(1).WithMessage("An efficiency is a fraction in (0, 1] (0.82 for 82 %).");
            e.RuleFor(x => x.Uncertainty).GreaterThanOrEqualTo(0).WithMessage("The uncertainty is in absolute points, from 0 up to 0.5 (0.03 for ±3 points).")
                .LessThan(0.5).WithMessage("The uncertainty is in absolute points, from 0 up to 0.5 (0.03 for ±3 points).");
            e.RuleFor(x => x).Must(x => x.Uncertainty is null || (x.Isentropic ?? x.Polytropic ?? 1) - x.Uncertainty > 0)
                .WithName("uncertainty").WithMessage("The uncertainty must leave a positive lower efficiency.");
        }).When(x => x.Efficiency is not null);
        RuleFor(x => x.Equipment!).ChildRules(e =>
        {
            e.RuleFor(x => x.CompressorType).MaximumLength(64);
            e.RuleFor(x => x.Lubricant).MaximumLength(64);
            e.RuleFor(x => x.ValveMaterial).MaximumLength(64);
            e.RuleFor(x => x.SealMaterial).MaximumLength(64);
            e.RuleFor(x => x.RingMaterial).MaximumLength(64);
            e.RuleFor(x => x.SpringMaterial).MaximumLength(64);
            e.RuleFor(x => x.DischargeMaterial).Must(m => Rules.Model.DischargeMaterials.IsKnown(m)).When(x => x.DischargeMaterial is not null)
                .WithMessage("The discharge material is one of: " + string.Join(", ", Rules.Model.DischargeMaterials.All) + ".");
        }).When(x => x.Equipment is not null);
        RuleFor(x => x.Operation!).ChildRules(o =>
        {
            o.RuleFor(x => x.NormalDischargeTemperature).Quantity(units, QuantityKind.Temperature).When(x => x.NormalDischargeTemperature is not null);
            o.RuleFor(x => x.CoolantInletTemperature).Quantity(units, QuantityKind.Temperature).When(x => x.CoolantInletTemperature is not null);
        }).When(x => x.Operation is not null);
        RuleFor(x => x.Measured!).ChildRules(m =>
            m.RuleFor(x => x.DischargeTemperature).Quantity(units, QuantityKind.Temperature).When(x => x.DischargeTemperature is not null))
            .When(x => x.Measured is not null);
        RuleFor(x => x.Equipment!.DesignTemperature).Quantity(units, QuantityKind.Temperature).When(x => x.Equipment?.DesignTemperature is not null);
        RuleFor(x => x.Calibration!).ChildRules(c =>
        {
            c.RuleFor(x => x.Suction).NotNull().WithMessage("Give the suction pressure and temperature of the measured duty.");
            c.RuleFor(x => x.Suction!.Pressure).NotNull().WithMessage("Give the suction pressure of the measured duty with its basis.")
                .Quantity(units, QuantityKind.Pressure, StateBases, StateBasisMessage).When(x => x.Suction is not null);
            c.RuleFor(x => x.Suction!.Temperature).NotNull().WithMessage("Give the suction temperature of the measured duty.")
                .Quantity(units, QuantityKind.Temperature).When(x => x.Suction is not null);
            c.RuleFor(x => x.Discharge).NotNull().WithMessage("Give the discharge pressure of the measured duty.");
            c.RuleFor(x => x.Discharge!.Pressure).NotNull().WithMessage("Give the discharge pressure of the measured duty with its basis.")
                .Quantity(units, QuantityKind.Pressure, StateBases, StateBasisMessage).When(x => x.Discharge is not null);
            c.RuleFor(x => x.MeasuredDischargeTemperature).NotNull().WithMessage("A calibration needs the discharge temperature measured at that duty (e.g. \"141 °C\").")
                .Quantity(units, QuantityKind.Temperature);
        }).When(x => x.Calibration is not null);
        RuleFor(x => x.OilInjection!).ChildRules(o =>
        {
            o.RuleFor(x => x.InletTemperature).NotNull().When(x => x.Flow is not null)
                .WithMessage("An oil flow needs its inlet temperature (the oil temperature at injection, after the thermostatic valve), e.g. \"60 °C\".");
            o.RuleFor(x => x.Flow).Quantity(units, QuantityKind.MassFlow).When(x => x.Flow is not null);
            o.RuleFor(x => x.InletTemperature).Quantity(units, QuantityKind.Temperature).When(x => x.InletTemperature is not null);
            o.RuleFor(x => x.ShaftPower).Quantity(units, QuantityKind.Power).When(x => x.ShaftPower is not null);
        }).When(x => x.OilInjection is not null);
    }
}

/// <summary>FluentValidation helpers for quantity strings.</summary>
public static class QuantityRuleExtensions
{
    /// <summary>The value must read as a quantity of <paramref name="kind"/> (and, for pressures, one of <paramref name="allowedBases"/>).</summary>
    public static IRuleBuilderOptionsConditions<T, QuantityInput?> Quantity<T>(
        this IRuleBuilder<T, QuantityInput?> rule, UnitVocabulary units, QuantityKind kind, PressureBasis[]? allowedBases = null, string? basisMessage = null) =>
        rule.Custom((q, context) =>
        {
            if (q is null)
            {
                return;
            }

            if (!q.Parse(units, kind, out var parsed, out var error))
            {
                context.AddFailure($"'{q.Text}': {error!.Problem} Accepted units: {string.Join(", ", error.AcceptedTokens)}.");
                return;
            }

            if (allowedBases is not null && !allowedBases.Contains(parsed!.Basis))
            {
                context.AddFailure($"'{q.Text}': {basisMessage}");
            }
        });
}
