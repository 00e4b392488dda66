using System.Globalization;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>An oil-flooded stage's energy balance: what it used and what it gave.</summary>
internal sealed record FloodedStage(Temperature Suction, double OilToGasMassRatio, Temperature OilInlet, SpecificEnergy ShaftWork, Temperature Discharge, Temperature AdiabaticWithoutOil, string Source, string Basis);

// Oil-flooded screws and vanes: the shaft work heats gas and injected oil together, which leave at one temperature.
public sealed partial class EvaluationPipeline
{
    /// <summary>Oil specific heat, J/(kg·K): about 2.0 kJ/(kg·K) for mineral and PAO compressor oils near 60–90 °C — common practice, no single source.</summary>
    internal const double OilSpecificHeatJoulesPerKilogramKelvin = 2000;

    private FloodedStage? FloodedOf(StageInput input, int index, EffectiveRuleSet rules, TrainStageResult s, (string Source, string? Basis) efficiencySource)
    {
        var type = input.Equipment?.CompressorType is { } id && rules.CompressorTypes.TryGetValue(id, out var t) ? t : null;
        if (input.OilInjection is null && type?.OilInjection is null)
        {
            return null;
        }

        var path = string.Create(CultureInfo.InvariantCulture, $"stages[{index}].oilInjection");
        double ratio;
        Temperature oilIn;
        string source;
        string basis;
        var given = input.OilInjection;
        if (given?.Flow is { } flowText)
        {
            var oil = (MassFlow)Parse(flowText, Rules.Units.QuantityKind.MassFlow, path + ".flow").Quantity;
            if (s.MassFlow is not { } gasFlow)
            {
                throw Invalid(path + ".flow", "An oil mass flow needs the gas mass flow to give the oil-to-gas ratio: give the request's flow (mass or standard volume).");
            }

            ratio = oil.KilogramsPerSecond / gasFlow.KilogramsPerSecond;
            oilIn = ParseTemperature(given.InletTemperature ?? throw Invalid(path + ".inletTemperature", "An oil flow needs its inlet temperature."), path + ".inletTemperature");
            source = "request";
            basis = "oil flow and inlet temperature from the request";
        }
        else
        {
            var d = type?.OilInjection ?? throw Invalid(path + ".flow", "Give the oil mass flow with its inlet temperature: the compressor type has no package default for its oil injection.");
            ratio = d.OilToGasMassRatio;
            oilIn = given?.InletTemperature is { } tIn ? ParseTemperature(tIn, path + ".inletTemperature") : d.InletTemperature;
            source = "rule-default";
            basis = d.Basis;
        }

        if (!(ratio > 0))
        {
            throw Unprocessable(path + ".flow", "The oil flow must be greater than zero.");
        }

        var work = s.Stage.SpecificActualWork;
        string? powerBasis = null;
        if (given?.ShaftPower is { } powerText)
        {
            // Shaft power over the gas mass flow is the specific work of the package (gas and oil leave together).
            var power = (Power)Parse(powerText, Rules.Units.QuantityKind.Power, path + ".shaftPower").Quantity;
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
            powerBasis = string.Create(CultureInfo.InvariantCulture, $"shaft work from the stated shaft power {watts / 1000:0.###} kW over the gas mass flow {gasFlow.KilogramsPerSecond:0.####} kg/s");
        }

        Temperature t2;
        try
        {
            t2 = FloodedStageSolver.Solve(s.Gas, s.Stage.SuctionTemperature, work, ratio, OilSpecificHeatJoulesPerKilogramKelvin, oilIn);
        }
        catch (ThermoInputException ex)
        {
            throw Unprocessable(path, ex.Reason);
        }

        var workBasis = powerBasis ?? (efficiencySource.Source == "rule-default"
            ? "shaft work from the compressor type's default efficiency (rule file, a default): " + efficiencySource.Basis
            : "shaft work from the " + efficiencySource.Source + " efficiency");
        return new FloodedStage(s.Stage.SuctionTemperature, ratio, oilIn, work, t2, s.Stage.EstimatedDischargeTemperature, source,
            $"{basis}; oil cp {OilSpecificHeatJoulesPerKilogramKelvin / 1000:0.0} kJ/(kg·K) (common practice, no single source); {workBasis}");
    }

    private static StageFacts WithFlooded(StageFacts facts, FloodedStage? flooded) =>
        flooded is null ? facts : facts with { Estimated = flooded.Discharge, Cooled = true };

    private static IEnvelopeCalculator EnvelopeWithFlooded(IEnvelopeCalculator inner, FloodedStage? flooded) =>
        flooded is null ? inner : new FloodedEnvelopeCalculator(inner);

    private static StageDto WithFlooded(StageDto stage, FloodedStage? flooded, OutputUnitSystem u)
    {
        if (flooded is null || stage.DischargeTemperature is not { } temps)
        {
            return stage;
        }

        var t2 = u.Temperature(flooded.Discharge);
        return stage with
        {
            DischargeTemperature = temps with
            {
                Estimated = t2,
                EstimatedLowerBound = t2,
                Flooded = new FloodedDto(
                    Math.Round(flooded.OilToGasMassRatio, 6), u.Temperature(flooded.OilInlet), OilSpecificHeatJoulesPerKilogramKelvin / 1000,
                    u.SpecificEnergy(flooded.ShaftWork), u.Temperature(flooded.AdiabaticWithoutOil), flooded.Source, flooded.Basis),
            },
            TemperatureRise = u.DifferenceKelvin(flooded.Discharge.Kelvins - flooded.Suction.Kelvins),
        };
    }

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
