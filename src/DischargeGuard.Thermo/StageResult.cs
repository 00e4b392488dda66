using UnitsNet;
using UnitsNet.Units;

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

/// <summary>
/// The result of one stage with ideal-gas, temperature-dependent cp. Stored as SI doubles (so building it on the solve
/// path is cheap) and exposed as quantities.
/// </summary>
public readonly record struct StageResult
{
    private readonly double _p1Pascals;
    private readonly double _p2Pascals;
    private readonly double _t1Kelvin;
    private readonly double _t2sKelvin;
    private readonly double _t2Kelvin;
    private readonly double _t2LowKelvin;
    private readonly double _t2HighKelvin;
    private readonly double _workIsentropicJoulesPerKilogram;
    private readonly double _workActualJoulesPerKilogram;
    private readonly double _powerWatts;
    private readonly double _t2sConstantKKelvin;
    private readonly double _t2ConstantKKelvin;

    internal StageResult(in StageSolver.StageNumbers n, double p1Pascals, double p2Pascals, double t1Kelvin, EfficiencyKind kind, double gasConstantJoulesPerKilogramKelvin, double? massFlowKilogramsPerSecond)
    {
        _p1Pascals = p1Pascals;
        _p2Pascals = p2Pascals;
        _t1Kelvin = t1Kelvin;
        _t2sKelvin = n.T2s;
        _t2Kelvin = n.T2;
        _t2LowKelvin = n.T2Low;
        _t2HighKelvin = n.T2High;
        _workIsentropicJoulesPerKilogram = (n.H2sOverR - n.H1OverR) * gasConstantJoulesPerKilogramKelvin;
        _workActualJoulesPerKilogram = (n.H2OverR - n.H1OverR) * gasConstantJoulesPerKilogramKelvin;
        _powerWatts = massFlowKilogramsPerSecond is { } m ? m * _workActualJoulesPerKilogram : double.NaN;
        _t2sConstantKKelvin = n.T2sConstantK;
        _t2ConstantKKelvin = n.T2ConstantK;
        IsentropicEfficiency = n.IsentropicEfficiency;
        PolytropicEfficiency = n.PolytropicEfficiency;
        EfficiencyKind = kind;
        KSuction = n.KSuction;
        KDischarge = n.KDischarge;
    }

    /// <summary>Absolute suction pressure.</summary>
    public Pressure SuctionPressure => new(_p1Pascals, PressureUnit.Pascal);

    /// <summary>Absolute discharge pressure.</summary>
    public Pressure DischargePressure => new(_p2Pascals, PressureUnit.Pascal);

    /// <summary>P2/P1, dimensionless.</summary>
    public double PressureRatio => _p2Pascals / _p1Pascals;

    /// <summary>Suction temperature.</summary>
    public Temperature SuctionTemperature => new(_t1Kelvin, TemperatureUnit.Kelvin);

    /// <summary>T2s, the η = 1 prediction.</summary>
    public Temperature IsentropicDischargeTemperature => new(_t2sKelvin, TemperatureUnit.Kelvin);

    /// <summary>T2 from the given efficiency.</summary>
    public Temperature EstimatedDischargeTemperature => new(_t2Kelvin, TemperatureUnit.Kelvin);

    /// <summary>T2 at the upper efficiency bound (equals T2 without uncertainty).</summary>
    public Temperature EstimatedLowerBound => new(_t2LowKelvin, TemperatureUnit.Kelvin);

    /// <summary>T2 at the lower efficiency bound (equals T2 without uncertainty).</summary>
    public Temperature EstimatedUpperBound => new(_t2HighKelvin, TemperatureUnit.Kelvin);

    /// <summary>ηs, given or equivalent to the given ηp.</summary>
    public double IsentropicEfficiency { get; }

    /// <summary>ηp, given or equivalent to the given ηs.</summary>
    public double PolytropicEfficiency { get; }

    /// <summary>Which of the two was given.</summary>
    public EfficiencyKind EfficiencyKind { get; }

    /// <summary>T2 − T1.</summary>
    public TemperatureDelta TemperatureRise => new(_t2Kelvin - _t1Kelvin, TemperatureDeltaUnit.Kelvin);

    /// <summary>cp/cv at suction temperature.</summary>
    public double KSuction { get; }

    /// <summary>cp/cv at the estimated discharge temperature.</summary>
    public double KDischarge { get; }

    /// <summary>h2s − h1 per kg.</summary>
    public SpecificEnergy SpecificIsentropicWork => new(_workIsentropicJoulesPerKilogram, SpecificEnergyUnit.JoulePerKilogram);

    /// <summary>h2 − h1 per kg.</summary>
    public SpecificEnergy SpecificActualWork => new(_workActualJoulesPerKilogram, SpecificEnergyUnit.JoulePerKilogram);

    /// <summary>Gas power ṁ·(h2 − h1), when a mass flow was given.</summary>
    public Power? Power => double.IsNaN(_powerWatts) ? null : UnitsNet.Power.FromWatts(_powerWatts);

    /// <summary>The constant-k estimate beside it.</summary>
    public ConstantKEstimate ConstantK
    {
        get
        {
            var rise = _t2Kelvin - _t1Kelvin;
            var diff = _t2ConstantKKelvin - _t2Kelvin;
            return new ConstantKEstimate(
                KSuction,
                new Temperature(_t2sConstantKKelvin, TemperatureUnit.Kelvin),
                new Temperature(_t2ConstantKKelvin, TemperatureUnit.Kelvin),
                new TemperatureDelta(diff, TemperatureDeltaUnit.Kelvin),
                rise > 0 ? 100.0 * diff / rise : 0.0);
        }
    }

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
