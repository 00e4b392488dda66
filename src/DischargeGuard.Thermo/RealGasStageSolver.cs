using System.Globalization;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// Solves one compression stage with a real-gas model — Peng-Robinson (<see cref="RealGasMixture"/>) or GERG-2008
/// (<see cref="Gerg2008Mixture"/>), through the same paths: T2s from
/// s(T2s, P2) = s(T1, P1); with an isentropic efficiency T2 from h(T2, P2) = h1 + (h2s − h1)/ηs; with a polytropic
/// efficiency T2 by integrating dh = v·dP/ηp along the path (classic fourth-order Runge–Kutta in ln P, fixed steps of at
/// most <see cref="MaxLogPressureStep"/>, in ln T). The ideal-gas <see cref="StageSolver"/> answer is solved beside it. Suction,
/// isentropic-discharge and discharge states are phase-checked. Allocates nothing on success.
/// </summary>
public static class RealGasStageSolver
{
    /// <summary>
    /// Largest step in ln P of the polytropic integration (ratio 3 → 3 steps, ratio 10 → 5, ratio 30 → 7). Measured
    /// truncation error against 2000 steps: ≤ 2·10⁻⁴ K for those ratios (docs/real-gas.md).
    /// </summary>
    public const double MaxLogPressureStep = 0.5;

    /// <summary>Fewest steps of the polytropic integration.</summary>
    public const int MinPolytropicSteps = 2;

    /// <summary>Solves the stage with the default tolerance and iteration cap.</summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// (<see cref="ThermoInputException"/>) Non-positive pressures, discharge ≤ suction pressure, a pressure above
    /// <see cref="RealGasMixture.MaximumPressurePascals"/>, an efficiency outside (0, 1], a suction temperature outside the
    /// data range, a liquid or two-phase suction or discharge state, or no solution inside the data range. The exception
    /// names the member of <see cref="StageConditions"/>.
    /// </exception>
    public static RealGasStageResult Solve(RealGasMixture gas, in StageConditions conditions) => SolveCore(gas, conditions);

    /// <summary>Solves the stage with GERG-2008 and the default tolerance and iteration cap.</summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// (<see cref="ThermoInputException"/>) As <see cref="Solve(RealGasMixture, in StageConditions)"/>, with the GERG-2008
    /// limits: 60–700 K (and the ideal-gas data range, for the ideal-gas answer beside it) and pressures up to 70 MPa.
    /// </exception>
    public static RealGasStageResult Solve(Gerg2008Mixture gas, in StageConditions conditions) => SolveCore(gas, conditions);

    /// <summary>
    /// Solves the stage with GERG-2008; returns false (never throws) when a solve does not converge inside the model's
    /// range within <paramref name="maxIterations"/>. Inputs out of range and liquid or two-phase states still throw.
    /// </summary>
    /// <param name="gas">The GERG-2008 mixture.</param>
    /// <param name="conditions">The stage.</param>
    /// <param name="toleranceKelvin">Temperature tolerance of each Newton solve, K.</param>
    /// <param name="maxIterations">Iteration cap of each Newton solve.</param>
    /// <param name="result">The result; default when false.</param>
    public static bool TrySolve(Gerg2008Mixture gas, in StageConditions conditions, double toleranceKelvin, int maxIterations, out RealGasStageResult result) =>
        TrySolveCore(gas, conditions, toleranceKelvin, maxIterations, out result);

    internal static RealGasStageResult SolveCore(IRealGasModel gas, in StageConditions conditions)
    {
        ArgumentNullException.ThrowIfNull(gas);
        if (!TrySolveCore(gas, conditions, CompressionPath.DefaultToleranceKelvin, CompressionPath.DefaultMaxIterations, out var result))
        {
            throw ThermoErrors.OutOfRange(
                nameof(StageConditions.DischargePressure),
                null,
                string.Create(CultureInfo.InvariantCulture, $"The discharge temperature would lie outside the model's valid range {gas.MinimumKelvin:0.##}–{gas.MaximumKelvin:0.##} K (the equation of state's range and the ideal-gas data's, whichever is narrower)."));
        }

        return result;
    }

    /// <summary>
    /// Solves the stage; returns false (never throws) when a solve does not converge inside the data range within
    /// <paramref name="maxIterations"/>. Inputs out of range and liquid or two-phase states still throw, as in
    /// <see cref="Solve(RealGasMixture, in StageConditions)"/>.
    /// </summary>
    /// <param name="gas">The real-gas mixture.</param>
    /// <param name="conditions">The stage.</param>
    /// <param name="toleranceKelvin">Temperature tolerance of each Newton solve, K.</param>
    /// <param name="maxIterations">Iteration cap of each Newton solve.</param>
    /// <param name="result">The result; default when false.</param>
    public static bool TrySolve(RealGasMixture gas, in StageConditions conditions, double toleranceKelvin, int maxIterations, out RealGasStageResult result) =>
        TrySolveCore(gas, conditions, toleranceKelvin, maxIterations, out result);

    internal static bool TrySolveCore(IRealGasModel gas, in StageConditions conditions, double toleranceKelvin, int maxIterations, out RealGasStageResult result)
    {
        ArgumentNullException.ThrowIfNull(gas);
        result = default;
        var ideal = gas.IdealGas;
        var p1 = conditions.SuctionPressure.Pascals;
        var p2 = conditions.DischargePressure.Pascals;
        var t1 = conditions.SuctionTemperature.Kelvins;
        var efficiency = conditions.Efficiency;
        StageSolver.Validate(ideal, p1, p2, t1, efficiency);
        gas.RequireTemperature(t1, nameof(StageConditions.SuctionTemperature));
        gas.RequirePressure(p1, nameof(StageConditions.SuctionPressure));
        gas.RequirePressure(p2, nameof(StageConditions.DischargePressure));
        gas.RequireVapour(t1, p1, nameof(StageConditions.SuctionPressure));

        var ratio = p2 / p1;
        if (!StageSolver.TrySolveCore(ideal, t1, ratio, efficiency, out var idealNumbers))
        {
            return false;
        }

        var massFlow = conditions.MassFlow?.KilogramsPerSecond;
        var idealResult = new StageResult(idealNumbers, p1, p2, t1, efficiency.Kind, ideal.SpecificGasConstantJoulesPerKilogramKelvin, massFlow);

        var state1 = gas.Evaluate(t1, p1);
        if (!TrySolveTemperatureForEntropy(gas, state1.SOverR, p2, idealNumbers.T2s, toleranceKelvin, maxIterations, out var t2s))
        {
            return false;
        }

        var state2s = gas.Evaluate(t2s, p2);
        double t2, t2Low, t2High, etaS, etaP;
        var steps = 0;
        if (efficiency.Kind == EfficiencyKind.Isentropic)
        {
            // Start each solve from the ideal-gas answer shifted by the real-gas change of T2s.
            var shift = t2s - idealNumbers.T2s;
            if (!TrySolveFromIsentropic(gas, state1.HOverR, state2s.HOverR, efficiency.Value, p2, idealNumbers.T2 + shift, toleranceKelvin, maxIterations, out t2))
            {
                return false;
            }

            t2Low = t2;
            t2High = t2;
            if (efficiency.Uncertainty > 0
                && (!TrySolveFromIsentropic(gas, state1.HOverR, state2s.HOverR, efficiency.Low, p2, idealNumbers.T2High + shift, toleranceKelvin, maxIterations, out t2High)
                    || !TrySolveFromIsentropic(gas, state1.HOverR, state2s.HOverR, efficiency.High, p2, idealNumbers.T2Low + shift, toleranceKelvin, maxIterations, out t2Low)))
            {
                return false;
            }

            etaS = efficiency.Value;
            etaP = double.NaN;
        }
        else
        {
            steps = Math.Max(MinPolytropicSteps, (int)Math.Ceiling(Math.Log(ratio) / MaxLogPressureStep));
            t2 = IntegratePolytropic(gas, t1, p1, p2, efficiency.Value, steps);
            t2Low = t2;
            t2High = t2;
            if (efficiency.Uncertainty > 0)
            {
                t2High = IntegratePolytropic(gas, t1, p1, p2, efficiency.Low, steps);
                t2Low = IntegratePolytropic(gas, t1, p1, p2, efficiency.High, steps);
            }

            if (!(gas.InRange(t2) && gas.InRange(t2Low) && gas.InRange(t2High)))
            {
                return false;
            }

            etaP = efficiency.Value;
            etaS = double.NaN;
        }

        var state2 = gas.Evaluate(t2, p2);
        gas.RequireVapour(t2s, p2, nameof(StageConditions.DischargePressure));
        gas.RequireVapour(t2, p2, nameof(StageConditions.DischargePressure));
        var dh = state2.HOverR - state1.HOverR;
        if (double.IsNaN(etaS))
        {
            etaS = dh > 0 ? (state2s.HOverR - state1.HOverR) / dh : 1.0;
        }
        else
        {
            // Along a constant-ηp path T·ds = (1 − ηp)·dh, so ηp = 1 − Δs/∫dh/T; ∫dh/T ≈ Δh/T_lm (exact for constant cp).
            var ds = state2.SOverR - state1.SOverR;
            var tLogMean = Math.Abs(t2 - t1) > 1e-9 ? (t2 - t1) / Math.Log(t2 / t1) : t1;
            etaP = dh > 0 ? 1 - (ds * tLogMean / dh) : 1.0;
        }

        result = new RealGasStageResult(
            idealResult,
            p1,
            p2,
            t1,
            t2s,
            t2,
            t2Low,
            t2High,
            etaS,
            etaP,
            efficiency.Kind,
            state1.Z,
            state2s.Z,
            state2.Z,
            (state2s.HOverR - state1.HOverR) * ideal.SpecificGasConstantJoulesPerKilogramKelvin,
            dh * ideal.SpecificGasConstantJoulesPerKilogramKelvin,
            massFlow,
            steps,
            gas.DefaultedPairs);
        return true;
    }

    /// <summary>
    /// Temperature at which the real-gas s/R at <paramref name="pPascals"/> equals <paramref name="entropyOverR"/>:
    /// Newton on s with the real-gas cp/T as derivative, kept inside a bracket that starts as the data range, bisection
    /// when a step leaves it; stopped as <see cref="CompressionPath.TrySolveTemperatureForEntropy"/>.
    /// </summary>
    internal static bool TrySolveTemperatureForEntropy(IRealGasModel gas, double entropyOverR, double pPascals, double guessKelvin, double toleranceKelvin, int maxIterations, out double tKelvin) =>
        TrySolveTemperature(gas, Target.Entropy, entropyOverR, pPascals, guessKelvin, toleranceKelvin, maxIterations, out tKelvin);

    /// <summary>Temperature at which the real-gas h/R at <paramref name="pPascals"/> equals <paramref name="enthalpyOverRKelvin"/>.</summary>
    /// <remarks>Newton on h with the real-gas cp, bracketed as <see cref="TrySolveTemperatureForEntropy"/>.</remarks>
    internal static bool TrySolveTemperatureForEnthalpy(IRealGasModel gas, double enthalpyOverRKelvin, double pPascals, double guessKelvin, double toleranceKelvin, int maxIterations, out double tKelvin) =>
        TrySolveTemperature(gas, Target.Enthalpy, enthalpyOverRKelvin, pPascals, guessKelvin, toleranceKelvin, maxIterations, out tKelvin);

    private enum Target
    {
        Entropy,
        Enthalpy,
    }

    // The safeguarded Newton both inversions share: s/R (derivative cp/(R·T)) or h/R (derivative cp/R) against T at fixed P,
    // kept inside a bracket that starts as the data range, bisecting when a step leaves it.
    private static bool TrySolveTemperature(IRealGasModel gas, Target target, double value, double pPascals, double guessKelvin, double toleranceKelvin, int maxIterations, out double tKelvin)
    {
        var lo = gas.MinimumKelvin;
        var hi = gas.MaximumKelvin;
        var t = guessKelvin > lo && guessKelvin < hi ? guessKelvin : 0.5 * (lo + hi);
        for (var i = 0; i < maxIterations; i++)
        {
            var point = gas.Evaluate(t, pPascals);
            double f, step;
            if (target == Target.Entropy)
            {
                f = point.SOverR - value;
                step = point.CpOverR > 0 ? f * t / point.CpOverR : double.NaN;
            }
            else
            {
                f = point.HOverR - value;
                step = point.CpOverR > 0 ? f / point.CpOverR : double.NaN;
            }

            var next = t - step;
            if (Converged(step, t, toleranceKelvin) && next >= lo && next <= hi)
            {
                tKelvin = next;
                return true;
            }

            if (f > 0)
            {
                hi = t;
            }
            else
            {
                lo = t;
            }

            if (!(next > lo && next < hi))
            {
                if (hi - lo <= toleranceKelvin)
                {
                    break;
                }

                next = 0.5 * (lo + hi);
            }

            t = next;
        }

        tKelvin = double.NaN;
        return false;
    }

    /// <summary>
    /// T2 of a constant-ηp path from (T1, P1) to P2: dT/d(ln P) = [Z·R·T·(1/ηp − 1) + P·T·(∂v/∂T)_P]/cp, from
    /// dh = v·dP/ηp and dh = cp·dT + [v − T(∂v/∂T)_P]·dP. Integrated in y = ln T (whose slope is nearly constant, so RK4
    /// is accurate with few steps) with classic RK4 in <paramref name="steps"/> equal steps of ln P. Returns NaN when the
    /// path leaves the data range.
    /// </summary>
    internal static double IntegratePolytropic(IRealGasModel gas, double t1Kelvin, double p1Pascals, double p2Pascals, double polytropicEfficiency, int steps)
    {
        var x = Math.Log(p1Pascals);
        var h = (Math.Log(p2Pascals) - x) / steps;
        var y = Math.Log(t1Kelvin);
        var factor = (1 / polytropicEfficiency) - 1;
        var lo = Math.Log(gas.MinimumKelvin);
        var hi = Math.Log(gas.MaximumKelvin);
        for (var k = 0; k < steps; k++)
        {
            var pMid = Math.Exp(x + (0.5 * h));
            var k1 = LogSlope(gas, y, Math.Exp(x), factor);
            var yb = y + (0.5 * h * k1);
            var k2 = yb >= lo && yb <= hi ? LogSlope(gas, yb, pMid, factor) : double.NaN;
            var yc = y + (0.5 * h * k2);
            var k3 = yc >= lo && yc <= hi ? LogSlope(gas, yc, pMid, factor) : double.NaN;
            var yd = y + (h * k3);
            var k4 = yd >= lo && yd <= hi ? LogSlope(gas, yd, Math.Exp(x + h), factor) : double.NaN;
            y += h / 6 * (k1 + (2 * k2) + (2 * k3) + k4);
            x += h;
            if (!(y >= lo && y <= hi))
            {
                return double.NaN;
            }
        }

        return Math.Exp(y);
    }

    // d(ln T)/d(ln P) at (e^lnT, P).
    private static double LogSlope(IRealGasModel gas, double lnT, double pPascals, double factor)
    {
        var r = ThermoConstants.MolarGasConstantJoulesPerMoleKelvin;
        var t = Math.Exp(lnT);
        var point = gas.Evaluate(t, pPascals);
        var cp = point.CpOverR * r;
        return ((point.Z * r * factor) + (pPascals * point.Residual.DvDtAtConstantP)) / cp;
    }

    private static bool TrySolveFromIsentropic(IRealGasModel gas, double h1OverR, double h2sOverR, double eta, double pPascals, double guessKelvin, double toleranceKelvin, int maxIterations, out double t2)
    {
        var h2 = h1OverR + ((h2sOverR - h1OverR) / eta);
        return TrySolveTemperatureForEnthalpy(gas, h2, pPascals, guessKelvin, toleranceKelvin, maxIterations, out t2);
    }

    // As CompressionPath: Newton's remaining error after a step h is about h²/(2T) for these smooth functions.
    private static bool Converged(double step, double t, double tolerance) =>
        Math.Abs(step) <= tolerance || step * step <= 2 * t * tolerance;
}

/// <summary>
/// The result of one stage with the Peng-Robinson real gas, and the ideal-gas (cp(T)) result of the same stage beside it.
/// Stored as SI doubles and exposed as quantities.
/// </summary>
public readonly record struct RealGasStageResult
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

    internal RealGasStageResult(
        StageResult idealGas,
        double p1Pascals,
        double p2Pascals,
        double t1Kelvin,
        double t2sKelvin,
        double t2Kelvin,
        double t2LowKelvin,
        double t2HighKelvin,
        double isentropicEfficiency,
        double polytropicEfficiency,
        EfficiencyKind kind,
        double zSuction,
        double zIsentropicDischarge,
        double zDischarge,
        double workIsentropicJoulesPerKilogram,
        double workActualJoulesPerKilogram,
        double? massFlowKilogramsPerSecond,
        int polytropicSteps,
        IReadOnlyList<SpeciesPair> defaultedPairs)
    {
        IdealGas = idealGas;
        _p1Pascals = p1Pascals;
        _p2Pascals = p2Pascals;
        _t1Kelvin = t1Kelvin;
        _t2sKelvin = t2sKelvin;
        _t2Kelvin = t2Kelvin;
        _t2LowKelvin = t2LowKelvin;
        _t2HighKelvin = t2HighKelvin;
        IsentropicEfficiency = isentropicEfficiency;
        PolytropicEfficiency = polytropicEfficiency;
        EfficiencyKind = kind;
        ZSuction = zSuction;
        ZIsentropicDischarge = zIsentropicDischarge;
        ZDischarge = zDischarge;
        _workIsentropicJoulesPerKilogram = workIsentropicJoulesPerKilogram;
        _workActualJoulesPerKilogram = workActualJoulesPerKilogram;
        _powerWatts = massFlowKilogramsPerSecond is { } m ? m * workActualJoulesPerKilogram : double.NaN;
        PolytropicSteps = polytropicSteps;
        DefaultedPairs = defaultedPairs;
    }

    /// <summary>The ideal-gas (cp(T)) result of the same stage, for comparison.</summary>
    public StageResult IdealGas { get; }

    /// <summary>Absolute suction pressure.</summary>
    public Pressure SuctionPressure => Pressure.FromPascals(_p1Pascals);

    /// <summary>Absolute discharge pressure.</summary>
    public Pressure DischargePressure => Pressure.FromPascals(_p2Pascals);

    /// <summary>P2/P1, dimensionless.</summary>
    public double PressureRatio => _p2Pascals / _p1Pascals;

    /// <summary>Suction temperature.</summary>
    public Temperature SuctionTemperature => Temperature.FromKelvins(_t1Kelvin);

    /// <summary>Real-gas T2s, from s(T2s, P2) = s(T1, P1).</summary>
    public Temperature IsentropicDischargeTemperature => Temperature.FromKelvins(_t2sKelvin);

    /// <summary>Real-gas T2 from the given efficiency.</summary>
    public Temperature EstimatedDischargeTemperature => Temperature.FromKelvins(_t2Kelvin);

    /// <summary>T2 at the upper efficiency bound (equals T2 without uncertainty).</summary>
    public Temperature EstimatedLowerBound => Temperature.FromKelvins(_t2LowKelvin);

    /// <summary>T2 at the lower efficiency bound (equals T2 without uncertainty).</summary>
    public Temperature EstimatedUpperBound => Temperature.FromKelvins(_t2HighKelvin);

    /// <summary>Real-gas T2 minus ideal-gas T2.</summary>
    public TemperatureDelta DifferenceFromIdealGas => TemperatureDelta.FromKelvins(_t2Kelvin - IdealGas.EstimatedDischargeTemperature.Kelvins);

    /// <summary>Real-gas T2s minus ideal-gas T2s.</summary>
    public TemperatureDelta IsentropicDifferenceFromIdealGas => TemperatureDelta.FromKelvins(_t2sKelvin - IdealGas.IsentropicDischargeTemperature.Kelvins);

    /// <summary>ηs: given, or (h2s − h1)/(h2 − h1) for a given ηp.</summary>
    public double IsentropicEfficiency { get; }

    /// <summary>ηp: given, or for a given ηs the estimate 1 − Δs·T_lm/Δh (T_lm the log-mean of T1 and T2).</summary>
    public double PolytropicEfficiency { get; }

    /// <summary>Which efficiency was given.</summary>
    public EfficiencyKind EfficiencyKind { get; }

    /// <summary>Z at suction (T1, P1), dimensionless.</summary>
    public double ZSuction { get; }

    /// <summary>Z at (T2s, P2), dimensionless.</summary>
    public double ZIsentropicDischarge { get; }

    /// <summary>Z at discharge (T2, P2), dimensionless.</summary>
    public double ZDischarge { get; }

    /// <summary>h2s − h1 per kg (real gas).</summary>
    public SpecificEnergy SpecificIsentropicWork => SpecificEnergy.FromJoulesPerKilogram(_workIsentropicJoulesPerKilogram);

    /// <summary>h2 − h1 per kg (real gas).</summary>
    public SpecificEnergy SpecificActualWork => SpecificEnergy.FromJoulesPerKilogram(_workActualJoulesPerKilogram);

    /// <summary>Gas power ṁ·(h2 − h1), when a mass flow was given.</summary>
    public Power? Power => double.IsNaN(_powerWatts) ? null : UnitsNet.Power.FromWatts(_powerWatts);

    /// <summary>RK4 steps in ln P of the polytropic integration (0 for an isentropic-efficiency stage).</summary>
    public int PolytropicSteps { get; }

    /// <summary>Pairs of the mixture whose k_ij was taken as 0 (no published value in the data).</summary>
    public IReadOnlyList<SpeciesPair> DefaultedPairs { get; }

    /// <summary>The temperature a rule or envelope calls <paramref name="quantity"/>.</summary>
    public Temperature TemperatureOf(TemperatureQuantity quantity) => quantity switch
    {
        TemperatureQuantity.Isentropic => IsentropicDischargeTemperature,
        TemperatureQuantity.Estimated => EstimatedDischargeTemperature,
        TemperatureQuantity.EstimatedUpperBound => EstimatedUpperBound,
        _ => throw new ArgumentOutOfRangeException(nameof(quantity), quantity, "Unknown temperature quantity."),
    };
}
