using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// The constant-k estimate beside the cp(T) result: T2s = T1·r^((k−1)/k) with k taken at suction temperature
/// (polytropic: T2 = T1·r^((k−1)/(k·ηp))), and its efficiency-corrected counterpart.
/// </summary>
/// <param name="KAtSuction">The k used, cp/cv at suction temperature.</param>
/// <param name="Isentropic">Isentropic discharge temperature with constant k.</param>
/// <param name="Estimated">Efficiency-corrected discharge temperature with constant k.</param>
/// <param name="DifferenceFromCpT">Estimated (constant k) minus estimated (cp(T)).</param>
/// <param name="DifferencePercentOfRise">That difference as a percentage of the cp(T) temperature rise.</param>
public readonly record struct ConstantKEstimate(
    double KAtSuction,
    Temperature Isentropic,
    Temperature Estimated,
    TemperatureDelta DifferenceFromCpT,
    double DifferencePercentOfRise);

/// <summary>The result of one stage with ideal-gas, temperature-dependent cp.</summary>
/// <param name="SuctionPressure">Absolute suction pressure.</param>
/// <param name="DischargePressure">Absolute discharge pressure.</param>
/// <param name="PressureRatio">P2/P1, dimensionless.</param>
/// <param name="SuctionTemperature">Suction temperature.</param>
/// <param name="IsentropicDischargeTemperature">T2s, the η = 1 prediction.</param>
/// <param name="EstimatedDischargeTemperature">T2 from the given efficiency.</param>
/// <param name="EstimatedLowerBound">T2 at the upper efficiency bound (equals T2 without uncertainty).</param>
/// <param name="EstimatedUpperBound">T2 at the lower efficiency bound (equals T2 without uncertainty).</param>
/// <param name="IsentropicEfficiency">ηs, given or equivalent to the given ηp.</param>
/// <param name="PolytropicEfficiency">ηp, given or equivalent to the given ηs.</param>
/// <param name="EfficiencyKind">Which of the two was given.</param>
/// <param name="TemperatureRise">T2 − T1.</param>
/// <param name="KSuction">cp/cv at suction temperature.</param>
/// <param name="KDischarge">cp/cv at the estimated discharge temperature.</param>
/// <param name="SpecificIsentropicWork">h2s − h1 per kg.</param>
/// <param name="SpecificActualWork">h2 − h1 per kg.</param>
/// <param name="Power">Gas power ṁ·(h2 − h1), when a mass flow was given.</param>
/// <param name="ConstantK">The constant-k estimate beside it.</param>
public readonly record struct StageResult(
    Pressure SuctionPressure,
    Pressure DischargePressure,
    double PressureRatio,
    Temperature SuctionTemperature,
    Temperature IsentropicDischargeTemperature,
    Temperature EstimatedDischargeTemperature,
    Temperature EstimatedLowerBound,
    Temperature EstimatedUpperBound,
    double IsentropicEfficiency,
    double PolytropicEfficiency,
    EfficiencyKind EfficiencyKind,
    TemperatureDelta TemperatureRise,
    double KSuction,
    double KDischarge,
    SpecificEnergy SpecificIsentropicWork,
    SpecificEnergy SpecificActualWork,
    Power? Power,
    ConstantKEstimate ConstantK)
{
    /// <summary>The temperature a rule or envelope calls <paramref name="quantity"/>.</summary>
    public Temperature TemperatureOf(TemperatureQuantity quantity) => quantity switch
    {
        TemperatureQuantity.Isentropic => IsentropicDischargeTemperature,
        TemperatureQuantity.Estimated => EstimatedDischargeTemperature,
        TemperatureQuantity.EstimatedUpperBound => EstimatedUpperBound,
        _ => throw new ArgumentOutOfRangeException(nameof(quantity), quantity, "Unknown temperature quantity."),
    };
}

/// <summary>The predicted discharge temperatures a limit can be checked against.</summary>
public enum TemperatureQuantity
{
    /// <summary>The ideal, η = 1 prediction (what design standards call the predicted discharge temperature).</summary>
    Isentropic,

    /// <summary>The estimate from the stage efficiency.</summary>
    Estimated,

    /// <summary>The estimate at the lower efficiency bound.</summary>
    EstimatedUpperBound,
}
