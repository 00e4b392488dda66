using DischargeGuard.Rules;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Thermo;
using UnitsNet;
using static DischargeGuard.Evaluation.Pipeline.ContractPaths;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// An oil-flooded stage's energy balance (screws and vanes): the shaft work heats gas and injected oil together, which
/// leave at one temperature. What it used and what it gave.
/// </summary>
internal sealed record FloodedStage(Temperature Suction, double OilToGasMassRatio, Temperature OilInlet, SpecificEnergy ShaftWork, Temperature Discharge, Temperature AdiabaticWithoutOil, string Source, string Basis)
{
    /// <summary>The oil balance of a stage that injects oil (by its request or its compressor type), or null.</summary>
    public static FloodedStage? Of(BoundStage bound, EffectiveRuleSet rules, TrainStageResult s)
    {
        var input = bound.Input;
        var type = input.Equipment?.CompressorType is { } id && rules.CompressorTypes.TryGetValue(id, out var t) ? t : null;
        if (input.OilInjection is null && type?.OilInjection is null)
        {
            return null;
        }

        var path = Stage(bound.Index) + ".oilInjection";
        double ratio;
        Temperature oilIn;
        string source;
        string basis;
        var given = bound.Oil;
        if (given?.Flow is { } oil)
        {
            if (s.MassFlow is not { } gasFlow)
            {
                throw Invalid(path + ".flow", "An oil mass flow needs the gas mass flow to give the oil-to-gas ratio: give the request's flow (mass or standard volume).");
            }

            ratio = oil.KilogramsPerSecond / gasFlow.KilogramsPerSecond;
            oilIn = given.InletTemperature ?? throw Invalid(path + ".inletTemperature", "An oil flow needs its inlet temperature.");
            source = "request";
            basis = "oil flow and inlet temperature from the request";
        }
        else
        {
            var d = type?.OilInjection ?? throw Invalid(path + ".flow", "Give the oil mass flow with its inlet temperature: the compressor type has no package default for its oil injection.");
            ratio = d.OilToGasMassRatio;
            oilIn = given?.InletTemperature ?? d.InletTemperature;
            source = "rule-default";
            basis = d.Basis;
        }

        if (!(ratio > 0))
        {
            throw Unprocessable(path + ".flow", "The oil flow must be greater than zero.");
        }

        var work = s.Stage.SpecificActualWork;
        string? powerBasis = null;
        if (given?.ShaftPower is { } power)
        {
            // Shaft power over the gas mass flow is the specific work of the package (gas and oil leave together).
            if (s.MassFlow is not { } gasFlow)
            {
                throw Invalid(path + ".shaftPower", "A shaft power needs the gas mass flow to give the specific work: give the request's flow (mass or standard volume).");
            }

            var watts = (double)power.Watts;
            if (!(watts > 0))
            {
                throw Unprocessable(path + ".shaftPower", "The shaft power must be greater than zero.");
            }

            work = SpecificEnergy.FromJoulesPerKilogram(watts / gasFlow.KilogramsPerSecond);
            powerBasis = string.Create(System.Globalization.CultureInfo.InvariantCulture, $"shaft work from the stated shaft power {watts / 1000:0.###} kW over the gas mass flow {gasFlow.KilogramsPerSecond:0.####} kg/s");
        }

        Temperature t2;
        try
        {
            t2 = FloodedStageSolver.Solve(s.Gas, s.Stage.SuctionTemperature, work, ratio, EvaluationPipeline.OilSpecificHeatJoulesPerKilogramKelvin, oilIn);
        }
        catch (ThermoInputException ex)
        {
            throw Unprocessable(path, ex.Reason);
        }

        var efficiencySource = bound.EfficiencySource;
        var workBasis = powerBasis ?? (efficiencySource.Source == "rule-default"
            ? "shaft work from the compressor type's default efficiency (rule file, a default): " + efficiencySource.Basis
            : "shaft work from the " + efficiencySource.Source + " efficiency");
        return new FloodedStage(s.Stage.SuctionTemperature, ratio, oilIn, work, t2, s.Stage.EstimatedDischargeTemperature, source,
            System.FormattableString.Invariant($"{basis}; oil cp {EvaluationPipeline.OilSpecificHeatJoulesPerKilogramKelvin / 1000:0.0} kJ/(kg·K) (common practice, no single source); {workBasis}"));
    }

    /// <summary>The facts with the oil balance's estimate.</summary>
    public static StageFacts WithFlooded(StageFacts facts, FloodedStage? flooded) =>
        flooded is null ? facts : facts with { Estimated = flooded.Discharge, Cooled = true };

    /// <summary>The stage's envelope calculator: none for the estimate of a flooded stage.</summary>
    public static IEnvelopeCalculator Envelope(IEnvelopeCalculator inner, FloodedStage? flooded) =>
        flooded is null ? inner : new FloodedEnvelopeCalculator(inner);

    /// <summary>The estimate of a flooded stage comes from the oil balance, which the Thermo envelope solver does not model.</summary>
    private sealed class FloodedEnvelopeCalculator(IEnvelopeCalculator inner) : IEnvelopeCalculator
    {
        private const string Note = "The estimate of an oil-flooded stage comes from its oil energy balance; no envelope is computed for it.";

        public (EnvelopeBound<Pressure> MaxDischargePressure, EnvelopeBound<Temperature> MaxSuctionTemperature) Compute(StageFacts stage, CheckedQuantity quantity, Reading limit) =>
            quantity == CheckedQuantity.Estimated
                ? (new(EnvelopeBoundStatus.NotComputableForQuantity, null, Note), new(EnvelopeBoundStatus.NotComputableForQuantity, null, Note))
                : inner.Compute(stage, quantity, limit);
    }
}
