using System.Globalization;

namespace DischargeGuard.Thermo;

/// <summary>Which efficiency definition a stage's efficiency uses.</summary>
public enum EfficiencyKind
{
    /// <summary>Isentropic (adiabatic) efficiency ηs = (h2s − h1)/(h2 − h1).</summary>
    Isentropic,

    /// <summary>Polytropic efficiency ηp, constant along the path.</summary>
    Polytropic,
}

/// <summary>
/// A stage efficiency with an optional symmetric uncertainty in absolute points (0.80 ± 0.03 means 0.77–0.83).
/// </summary>
public readonly record struct StageEfficiency
{
    private StageEfficiency(EfficiencyKind kind, double value, double uncertainty)
    {
        if (!(value > 0 && value <= 1))
        {
            throw ThermoErrors.OutOfRange(nameof(value), value, "The efficiency must lie in (0, 1].");
        }

        if (!(uncertainty >= 0) || !double.IsFinite(uncertainty) || !(value - uncertainty > 0))
        {
            throw ThermoErrors.OutOfRange(
                nameof(uncertainty),
                uncertainty,
                string.Create(CultureInfo.InvariantCulture, $"The efficiency uncertainty must be ≥ 0 and leave a positive lower bound (efficiency {value:0.###})."));
        }

        Kind = kind;
        Value = value;
        Uncertainty = uncertainty;
    }

    /// <summary>The definition.</summary>
    public EfficiencyKind Kind { get; }

    /// <summary>The efficiency, in (0, 1].</summary>
    public double Value { get; }

    /// <summary>The uncertainty, absolute points, ≥ 0.</summary>
    public double Uncertainty { get; }

    /// <summary>The lower efficiency bound (gives the upper temperature bound).</summary>
    public double Low => Value - Uncertainty;

    /// <summary>The upper efficiency bound, capped at 1 (gives the lower temperature bound).</summary>
    public double High => Math.Min(1.0, Value + Uncertainty);

    /// <summary>An isentropic efficiency in (0, 1], with an optional uncertainty.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Outside (0, 1], or the uncertainty leaves no positive lower bound.</exception>
    public static StageEfficiency Isentropic(double value, double uncertainty = 0) => new(EfficiencyKind.Isentropic, value, uncertainty);

    /// <summary>A polytropic efficiency in (0, 1], with an optional uncertainty.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Outside (0, 1], or the uncertainty leaves no positive lower bound.</exception>
    public static StageEfficiency Polytropic(double value, double uncertainty = 0) => new(EfficiencyKind.Polytropic, value, uncertainty);

    /// <summary>This efficiency with another value and the same kind and uncertainty.</summary>
    public StageEfficiency WithValue(double value) => new(Kind, value, Math.Min(Uncertainty, value * 0.999999));
}
