using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>The operating point of one compression stage. Pressures are absolute.</summary>
/// <param name="SuctionPressure">Absolute suction pressure, &gt; 0.</param>
/// <param name="SuctionTemperature">Suction temperature, inside the gas data's range.</param>
/// <param name="DischargePressure">Absolute discharge pressure, &gt; suction pressure.</param>
/// <param name="Efficiency">Isentropic or polytropic efficiency.</param>
/// <param name="MassFlow">Mass flow through the stage, for power; null when unknown.</param>
public readonly record struct StageConditions(
    Pressure SuctionPressure,
    Temperature SuctionTemperature,
    Pressure DischargePressure,
    StageEfficiency Efficiency,
    MassFlow? MassFlow = null);
