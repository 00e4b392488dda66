using DischargeGuard.Rules.Model;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>The phase at a stage's suction, its dew points and the superheat above the hydrocarbon one.</summary>
/// <param name="Phase">Gas, saturated, two-phase or liquid; null when the gas has a species without Peng-Robinson constants.</param>
/// <param name="HydrocarbonDewPoint">The upper hydrocarbon dew point at suction pressure, when one exists.</param>
/// <param name="HydrocarbonDewPointNote">Why there is none, or how it was found after separation.</param>
/// <param name="WaterDewPoint">The water dew point at suction pressure, for a humid gas.</param>
/// <param name="SuperheatAboveHydrocarbonDewPoint">Suction temperature minus the hydrocarbon dew point.</param>
internal sealed record SuctionPhase(StagePhase? Phase, Temperature? HydrocarbonDewPoint, string? HydrocarbonDewPointNote, Temperature? WaterDewPoint,
    TemperatureDelta? SuperheatAboveHydrocarbonDewPoint);

/// <summary>
/// Runs the Peng-Robinson stability test and dew-point search (<see cref="PhaseStability"/>) at a stage's suction and
/// discharge for every evaluation and every method, and reads the result as the rule engine's <see cref="StagePhase"/>.
/// </summary>
internal static class StagePhases
{
    /// <summary>The stage gas's phase model, built once for its suction and discharge checks; null when a species has no Peng-Robinson constants.</summary>
    /// <param name="gas">The stage's gas.</param>
    public static PhaseStabilityModel? Prepare(GasMixture gas)
    {
        try
        {
            return PhaseStability.Prepare(gas);
        }
        catch (InvalidCompositionException)
        {
            return null;
        }
    }

    private static Temperature? WaterDewPoint(GasMixture gas, Pressure pressure)
    {
        try
        {
            return HumidGas.DewPoint(gas, pressure);
        }
        catch (ThermoInputException)
        {
            return null;
        }
    }

    /// <summary>Relative humidity read as saturated (the water left after a cooler's drop-out is exactly saturated, up to rounding).</summary>
    private const double SaturatedHumidity = 1 - 1e-6;

    /// <summary>The phase at suction.</summary>
    /// <param name="model">The gas's phase model from <see cref="Prepare"/>.</param>
    /// <param name="gas">The stage's gas (with any water left after an upstream cooler).</param>
    /// <param name="temperature">Suction temperature.</param>
    /// <param name="pressure">Suction pressure, absolute.</param>
    /// <param name="separatedUpstream">True when a cooler and its separator feed the stage: condensate formed there is removed.</param>
    public static SuctionPhase AtSuction(PhaseStabilityModel? model, GasMixture gas, Temperature temperature, Pressure pressure, bool separatedUpstream)
    {
        if (model is null)
        {
            // A species without Peng-Robinson constants: the phase cannot be decided, and the rules that need it say so.
            return new SuctionPhase(null, null, "not computed: a species has no Peng-Robinson constants", WaterDewPoint(gas, pressure), null);
        }

        PhaseCheck check;
        try
        {
            check = model.Check(temperature, pressure);
        }
        catch (ThermoInputException) when (temperature.Kelvins > PhaseStability.MaximumKelvin)
        {
            // Far above every critical temperature: a gas. (The gas data and the envelope refuse such states on their own.)
            return new SuctionPhase(StagePhase.Gas, null, "above the stability test's range: a gas", null, null);
        }
        catch (ThermoInputException)
        {
            return new SuctionPhase(null, null, "not computed: the state is outside the stability test's range", null, null);
        }
        catch (InvalidOperationException)
        {
            // Only water: judged by its saturation alone.
            return new SuctionPhase(HumidGas.RelativeHumidity(gas, temperature, pressure) >= SaturatedHumidity ? StagePhase.Saturated : StagePhase.Gas, null, "no gas besides water", WaterDewPoint(gas, pressure), null);
        }

        var waterSaturated = HumidGas.RelativeHumidity(gas, temperature, pressure) >= SaturatedHumidity;
        var dew = check.HydrocarbonDewPoint;
        var note = dew.Status switch
        {
            DewPointStatus.AboveCricondenbar => "above the cricondenbar: no dew point at this pressure",
            DewPointStatus.NoCondensable => "no condensable component at this pressure",
            DewPointStatus.NoneAboveSearchFloor => "no dew point above the search floor",
            _ => null,
        };
        switch (check.HydrocarbonPhase)
        {
            case FluidPhase.Liquid:
                return new SuctionPhase(StagePhase.Liquid, dew.Temperature, note, check.WaterDewPoint, check.SuperheatAboveHydrocarbonDewPoint);
            case FluidPhase.TwoPhase when separatedUpstream:
                // The cooler condensed hydrocarbon and its separator removed it: the vapour goes on at its dew point.
                return new SuctionPhase(StagePhase.Saturated, temperature, "condensate formed in the cooler and is separated: the vapour leaves at its dew point (the separated vapour's composition is not re-flashed)",
                    check.WaterDewPoint, TemperatureDelta.Zero);
            case FluidPhase.TwoPhase:
                return new SuctionPhase(StagePhase.TwoPhase, dew.Temperature, note, check.WaterDewPoint, check.SuperheatAboveHydrocarbonDewPoint);
            default:
                return new SuctionPhase(waterSaturated ? StagePhase.Saturated : StagePhase.Gas, dew.Temperature, note, check.WaterDewPoint, check.SuperheatAboveHydrocarbonDewPoint);
        }
    }

    /// <summary>The phase at the predicted discharge state; null when it cannot be decided.</summary>
    /// <param name="model">The gas's phase model from <see cref="Prepare"/>.</param>
    /// <param name="gas">The stage's gas.</param>
    /// <param name="temperature">Predicted discharge temperature.</param>
    /// <param name="pressure">Discharge pressure, absolute.</param>
    public static StagePhase? AtDischarge(PhaseStabilityModel? model, GasMixture gas, Temperature temperature, Pressure pressure)
    {
        if (model is null)
        {
            return null;
        }

        if (temperature.Kelvins > PhaseStability.MaximumKelvin)
        {
            return StagePhase.Gas;
        }

        try
        {
            // Hydrocarbons by the stability test alone (no dew-point search: only the phase matters here); water by its
            // saturation at the discharge state.
            var test = model.TestStability(temperature, pressure);
            return !test.Stable ? StagePhase.TwoPhase
                : test.FeedPhase == FluidPhase.Liquid ? StagePhase.Liquid
                : HumidGas.RelativeHumidity(gas, temperature, pressure) >= SaturatedHumidity ? StagePhase.Saturated : StagePhase.Gas;
        }
        catch (InvalidOperationException)
        {
            return HumidGas.RelativeHumidity(gas, temperature, pressure) >= SaturatedHumidity ? StagePhase.Saturated : StagePhase.Gas;
        }
        catch (ThermoInputException)
        {
            // Outside the stability test's range (e.g. above 100 MPa): the gas-phase answer stands without it.
            return null;
        }
    }
}
