using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// The design standard's predicted temperature on the internal cylinder ratio: the flange pressures moved by the
/// compressor type's valve-loss allowance, suction p1·(1 − a) inside the cylinder and discharge p2·(1 + a).
/// </summary>
internal static class InternalRatio
{
    /// <summary>Adds the η = 1 temperature on the internal ratio (with the model that decides the stage) to the facts.</summary>
    public static StageFacts WithIsentropicInternal(StageFacts facts, TrainStageResult s, double valveLossPerValve, RealGasStage realGas, StageConditions conditions)
    {
        if (!double.IsFinite(valveLossPerValve))
        {
            return facts;
        }

        var c = conditions with
        {
            SuctionPressure = Pressure.FromPascals(conditions.SuctionPressure.Pascals * (1 - valveLossPerValve)),
            DischargePressure = Pressure.FromPascals(conditions.DischargePressure.Pascals * (1 + valveLossPerValve)),
            Efficiency = StageEfficiency.Isentropic(1),
            MassFlow = null,
        };
        try
        {
            var t2s = realGas switch
            {
                { Used: true, Method: GasModels.Gerg2008, Gerg: { } g } => RealGasStageSolver.Solve(g, c).IsentropicDischargeTemperature,
                { Used: true, PengRobinson: { } pr } => RealGasStageSolver.Solve(pr, c).IsentropicDischargeTemperature,
                _ => StageSolver.Solve(s.Gas, c).IsentropicDischargeTemperature,
            };
            return facts with { IsentropicInternal = t2s };
        }
        catch (ThermoInputException)
        {
            // Outside the data on the internal pressures: the quantity stays absent and its rules are listed as not checked.
            return facts;
        }
    }
}
