using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>
/// Feeds a governing limit to the Thermo envelope solver for one stage: the highest discharge pressure and the highest
/// suction temperature at which the governing quantity reaches its limit, the stage's other inputs and the other stages
/// held fixed.
/// </summary>
/// <remarks>
/// When a real-gas model decided the stage (Peng-Robinson or GERG-2008) the real-gas envelope solver runs with that model.
/// A humid gas's suction-temperature envelope (relative humidity held) uses Peng-Robinson for either real-gas model.
/// For the isentropic temperature on the internal ratio, the solver runs on the internal pressures p1·(1 − a) and
/// p2·(1 + a) (a: the valve-loss allowance per valve) and the discharge pressure found is taken back to the flange.
/// </remarks>
internal sealed class ThermoEnvelopeCalculator(GasMixture gas, StageConditions conditions, RealGasStage? realGas = null, double valveLossPerValve = double.NaN) : IEnvelopeCalculator
{
    private const string NotComputable = "The governing rule checks a quantity the envelope solver cannot move (a measured value, or a limit on something other than the predicted temperature or ratio).";

    public (EnvelopeBound<Pressure> MaxDischargePressure, EnvelopeBound<Temperature> MaxSuctionTemperature) Compute(StageFacts stage, CheckedQuantity quantity, Reading limit)
    {
        if (quantity == CheckedQuantity.PressureRatio && limit.Ratio is { } ratio)
        {
            return (new(EnvelopeBoundStatus.Found, Pressure.FromPascals(conditions.SuctionPressure.Pascals * ratio), "The pressure-ratio limit times the suction pressure."),
                new(EnvelopeBoundStatus.NotComputableForQuantity, null, "A pressure-ratio limit does not depend on the suction temperature."));
        }

        var internalRatio = quantity == CheckedQuantity.IsentropicInternal && double.IsFinite(valveLossPerValve);
        var c = internalRatio
            ? conditions with
            {
                SuctionPressure = Pressure.FromPascals(conditions.SuctionPressure.Pascals * (1 - valveLossPerValve)),
                DischargePressure = Pressure.FromPascals(conditions.DischargePressure.Pascals * (1 + valveLossPerValve)),
            }
            : conditions;
        TemperatureQuantity? q = quantity switch
        {
            CheckedQuantity.Isentropic => TemperatureQuantity.Isentropic,
            CheckedQuantity.IsentropicInternal when internalRatio => TemperatureQuantity.Isentropic,
            CheckedQuantity.Estimated => TemperatureQuantity.Estimated,
            CheckedQuantity.EstimatedUpperBound => TemperatureQuantity.EstimatedUpperBound,
            _ => null,
        };
        if (q is null || limit.Temperature is not { } t)
        {
            return (new(EnvelopeBoundStatus.NotComputableForQuantity, null, NotComputable), new(EnvelopeBoundStatus.NotComputableForQuantity, null, NotComputable));
        }

        var p = MaxDischargePressure(gas, c, q.Value, t, realGas);
        if (internalRatio && p.Value is { } internalP2)
        {
            p = p with { Value = Pressure.FromPascals(internalP2.Pascals / (1 + valveLossPerValve)) };
        }

        // A humid gas keeps its relative humidity, not its water fraction, as the suction temperature moves.
        var s = gas.WaterMoleFraction > 0
            ? HumidEnvelopeSolver.MaxSuctionTemperature(gas, c, q.Value, t, realGas is { Used: true })
            : realGas switch
            {
                { Method: GasModels.Gerg2008, Gerg: { } g } => RealGasEnvelopeSolver.MaxSuctionTemperature(g, c, q.Value, t),
                { Method: GasModels.PengRobinson, PengRobinson: { } pr } => RealGasEnvelopeSolver.MaxSuctionTemperature(pr, c, q.Value, t),
                _ => EnvelopeSolver.MaxSuctionTemperature(gas, c, q.Value, t),
            };
        return (new(Map(p.Status), p.Value, p.Note), new(Map(s.Status), s.Value, s.Note));
    }

    /// <summary>The highest discharge pressure at the limit with the model that decided the stage (ideal gas when none did).</summary>
    internal static EnvelopeResult<Pressure> MaxDischargePressure(GasMixture gas, in StageConditions conditions, TemperatureQuantity quantity, Temperature limit, RealGasStage? realGas) => realGas switch
    {
        { Method: GasModels.Gerg2008, Gerg: { } g } => RealGasEnvelopeSolver.MaxDischargePressure(g, conditions, quantity, limit),
        { Method: GasModels.PengRobinson, PengRobinson: { } pr } => RealGasEnvelopeSolver.MaxDischargePressure(pr, conditions, quantity, limit),
        _ => EnvelopeSolver.MaxDischargePressure(gas, conditions, quantity, limit),
    };

    private static EnvelopeBoundStatus Map(EnvelopeStatus status) => status switch
    {
        EnvelopeStatus.Found => EnvelopeBoundStatus.Found,
        EnvelopeStatus.AlreadyExceeded => EnvelopeBoundStatus.AlreadyExceeded,
        EnvelopeStatus.NotReachableInRange => EnvelopeBoundStatus.NotReachableInRange,
        _ => EnvelopeBoundStatus.NotComputableForQuantity,
    };
}
