using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>A pressure drop through a cooler and its separator: absolute, or a fraction of the upstream pressure.</summary>
public readonly record struct PressureDrop
{
    private PressureDrop(double pascals, double fraction)
    {
        AbsolutePascals = pascals;
        Fraction = fraction;
    }

    /// <summary>No drop.</summary>
    public static PressureDrop None => default;

    /// <summary>The absolute drop in Pa (0 when given as a fraction).</summary>
    public double AbsolutePascals { get; }

    /// <summary>The drop as a fraction of the upstream absolute pressure (0 when given absolute).</summary>
    public double Fraction { get; }

    /// <summary>A drop of a fixed pressure difference (≥ 0).</summary>
    public static PressureDrop Absolute(Pressure drop)
    {
        var pa = drop.Pascals;
        return pa >= 0 && double.IsFinite(pa)
            ? new PressureDrop(pa, 0)
            : throw ThermoErrors.OutOfRange(nameof(drop), pa, "A pressure drop must be a finite difference ≥ 0.");
    }

    /// <summary>A drop of a fraction of the upstream pressure, in [0, 0.5).</summary>
    public static PressureDrop OfUpstream(double fraction) =>
        fraction >= 0 && fraction < 0.5
            ? new PressureDrop(0, fraction)
            : throw ThermoErrors.OutOfRange(nameof(fraction), fraction, "A fractional pressure drop must lie in [0, 0.5) (0 %–50 % of the upstream pressure).");

    /// <summary>The downstream absolute pressure, Pa.</summary>
    public double Downstream(double upstreamPascals) => (upstreamPascals * (1 - Fraction)) - AbsolutePascals;
}

/// <summary>
/// An intercooler between stages: a fixed outlet temperature, or an approach over a coolant temperature; and its pressure drop.
/// </summary>
public readonly record struct Intercooler
{
    private Intercooler(double outletKelvin, double approachKelvin, double coolantKelvin, PressureDrop drop)
    {
        OutletKelvin = outletKelvin;
        ApproachKelvin = approachKelvin;
        CoolantKelvin = coolantKelvin;
        PressureDrop = drop;
    }

    /// <summary>Given outlet temperature, K; NaN when given by approach.</summary>
    public double OutletKelvin { get; }

    /// <summary>Approach (outlet − coolant), K; NaN when the outlet is given.</summary>
    public double ApproachKelvin { get; }

    /// <summary>Coolant inlet temperature, K; NaN when the outlet is given.</summary>
    public double CoolantKelvin { get; }

    /// <summary>The pressure drop.</summary>
    public PressureDrop PressureDrop { get; }

    /// <summary>The gas outlet temperature, K; NaN for a bypassed cooler (the gas leaves as it came).</summary>
    public double GasOutletKelvin => double.IsNaN(OutletKelvin) ? CoolantKelvin + ApproachKelvin : OutletKelvin;

    /// <summary>True for a cooler that is bypassed or out of service: the gas keeps its temperature and takes only the pressure drop.</summary>
    public bool IsBypassed => double.IsNaN(OutletKelvin) && double.IsNaN(CoolantKelvin);

    /// <summary>
    /// A cooler bypassed or out of service (cooling water failed): the next stage is fed directly at the previous stage's
    /// discharge temperature, less the pressure drop the gas still takes through the cooler and its separator.
    /// </summary>
    public static Intercooler Bypassed(PressureDrop drop) => new(double.NaN, double.NaN, double.NaN, drop);

    /// <summary>A cooler with a fixed gas outlet temperature.</summary>
    public static Intercooler ToOutlet(Temperature outlet, PressureDrop drop) => new(outlet.Kelvins, double.NaN, double.NaN, drop);

    /// <summary>A cooler whose gas outlet is the coolant temperature plus an approach (≥ 0).</summary>
    public static Intercooler WithApproach(TemperatureDelta approach, Temperature coolant, PressureDrop drop)
    {
        var a = approach.Kelvins;
        return a >= 0 && double.IsFinite(a)
            ? new Intercooler(double.NaN, a, coolant.Kelvins, drop)
            : throw ThermoErrors.OutOfRange(nameof(approach), a, "The cooler approach must be a finite difference ≥ 0 K.");
    }
}

/// <summary>
/// One stage of a train. The first stage gives its suction; a later stage gives either an intercooler (its suction is the
/// previous discharge through the cooler) or its own suction (both pressure and temperature), never both; with neither,
/// it is fed directly (uncooled) by the previous stage's discharge.
/// </summary>
/// <param name="DischargePressure">Absolute discharge pressure.</param>
/// <param name="Efficiency">Stage efficiency.</param>
/// <param name="Intercooler">Cooler before this stage (later stages only).</param>
/// <param name="SuctionPressure">Absolute suction pressure (first stage, or a later stage without a cooler).</param>
/// <param name="SuctionTemperature">Suction temperature (first stage, or a later stage without a cooler).</param>
public readonly record struct TrainStage(
    Pressure DischargePressure,
    StageEfficiency Efficiency,
    Intercooler? Intercooler = null,
    Pressure? SuctionPressure = null,
    Temperature? SuctionTemperature = null);

/// <summary>Water condensed out of the gas in the cooler (or at the suction) before a stage.</summary>
/// <param name="MassFractionOfInlet">Condensed water as a fraction of the mass flow entering the cooler.</param>
/// <param name="MassFlow">Condensate rate, when the train's mass flow is known.</param>
/// <param name="WaterMoleFractionAfter">Water mole fraction of the saturated gas the stage sees.</param>
public readonly record struct Condensate(double MassFractionOfInlet, MassFlow? MassFlow, double WaterMoleFractionAfter);

/// <summary>One stage's result within a train.</summary>
/// <param name="Index">Zero-based stage index.</param>
/// <param name="Gas">The gas the stage compresses (differs from the feed after condensate drop-out).</param>
/// <param name="Stage">The stage result.</param>
/// <param name="Condensate">Water dropped out before this stage, when any.</param>
/// <param name="MassFlow">Mass flow through this stage, when known.</param>
public readonly record struct TrainStageResult(int Index, GasMixture Gas, StageResult Stage, Condensate? Condensate, MassFlow? MassFlow);

/// <summary>
/// Solves a multi-stage train: each later stage takes its suction from the previous discharge through an intercooler and
/// its pressure drop; water above saturation after a cooler drops out as condensate and the next stage sees the saturated
/// gas. Allocates nothing for dry gas when the caller supplies the destination span; a condensing train allocates the new
/// gas mixtures.
/// </summary>
public static class TrainSolver
{
    /// <summary>Solves the train into <paramref name="destination"/> (length ≥ stage count).</summary>
    /// <exception cref="ThermoInputException">A stage is inconsistent or out of range; the member is prefixed <c>stages[i]</c>.</exception>
    public static void Solve(GasMixture feed, ReadOnlySpan<TrainStage> stages, MassFlow? massFlow, Span<TrainStageResult> destination)
    {
        ArgumentNullException.ThrowIfNull(feed);
        if (stages.Length == 0)
        {
            throw ThermoErrors.OutOfRange("stages", 0, "A train needs at least one stage.");
        }

        if (destination.Length < stages.Length)
        {
            throw new ArgumentException("The destination is shorter than the train.", nameof(destination));
        }

        var gas = feed;
        var flow = massFlow?.KilogramsPerSecond;
        double previousDischarge = 0;
        double previousDischargeKelvin = 0;
        for (var i = 0; i < stages.Length; i++)
        {
            var s = stages[i];
            double p1, t1;
            if (i == 0)
            {
                if (s.Intercooler is not null)
                {
                    throw ThermoErrors.OutOfRange(i, "Intercooler", null, "The first stage takes its suction directly; it cannot have an intercooler.");
                }

                (p1, t1) = RequireSuction(s, i);
            }
            else if (s.Intercooler is { } cooler)
            {
                if (s.SuctionPressure is not null || s.SuctionTemperature is not null)
                {
                    throw ThermoErrors.OutOfRange(i, "Intercooler", null, "A later stage gives either an intercooler or its own suction, never both.");
                }

                p1 = cooler.PressureDrop.Downstream(previousDischarge);
                t1 = cooler.IsBypassed ? previousDischargeKelvin : cooler.GasOutletKelvin;
                if (!(p1 > 0))
                {
                    throw ThermoErrors.OutOfRange(i, "Intercooler.PressureDrop", p1, "The cooler's pressure drop leaves no positive suction pressure.");
                }
            }
            else if (s.SuctionPressure is null && s.SuctionTemperature is null)
            {
                // No cooler and no suction given: the stage is fed directly by the previous discharge (uncooled).
                p1 = previousDischarge;
                t1 = previousDischargeKelvin;
            }
            else
            {
                (p1, t1) = RequireSuction(s, i);
                if (p1 > previousDischarge * (1 + 1e-12))
                {
                    throw ThermoErrors.OutOfRange(i, "SuctionPressure", p1, "A later stage's suction pressure cannot exceed the previous stage's discharge pressure.");
                }
            }

            // Water above saturation at the stage's suction (after its cooler, or a wet feed) drops out first.
            Condensate? condensate = null;
            var before = gas;
            if (gas.WaterMoleFraction >= 1 && t1 >= WaterSaturation.MinimumKelvin && t1 <= WaterSaturation.CriticalKelvin && WaterSaturation.SaturationPressurePascals(t1) < p1)
            {
                // All water, below its saturation: nothing would be left to compress (the drop-out needs a dry part).
                throw ThermoErrors.OutOfRange(i, "SuctionTemperature", t1, "The gas is all water vapour and at this suction it lies below its saturation temperature: it would condense entirely.");
            }

            gas = DropOutWater(gas, t1, p1, out var massFraction);
            if (!ReferenceEquals(before, gas))
            {
                MassFlow? rate = flow is { } f ? UnitsNet.MassFlow.FromKilogramsPerSecond(f * massFraction) : null;
                condensate = new Condensate(massFraction, rate, gas.WaterMoleFraction);
                flow *= 1 - massFraction;
            }

            MassFlow? stageFlow = flow is { } sf ? UnitsNet.MassFlow.FromKilogramsPerSecond(sf) : null;
            var conditions = new StageConditions(Pressure.FromPascals(p1), Temperature.FromKelvins(t1), s.DischargePressure, s.Efficiency, stageFlow);
            StageResult result;
            try
            {
                result = StageSolver.Solve(gas, conditions);
            }
            catch (ThermoInputException ex)
            {
                throw ex.ForStage(i);
            }

            destination[i] = new TrainStageResult(i, gas, result, condensate, stageFlow);
            previousDischarge = s.DischargePressure.Pascals;
            previousDischargeKelvin = result.EstimatedDischargeTemperature.Kelvins;
        }
    }

    /// <summary>Solves the train and returns a new array of stage results.</summary>
    public static TrainStageResult[] Solve(GasMixture feed, ReadOnlySpan<TrainStage> stages, MassFlow? massFlow = null)
    {
        var results = new TrainStageResult[stages.Length];
        Solve(feed, stages, massFlow, results);
        return results;
    }

    /// <summary>The stage ratio that splits <paramref name="overallRatio"/> equally over <paramref name="stageCount"/> stages: R^(1/N).</summary>
    public static double EqualStageRatio(double overallRatio, int stageCount)
    {
        if (!(overallRatio > 1) || !double.IsFinite(overallRatio))
        {
            throw ThermoErrors.OutOfRange(nameof(overallRatio), overallRatio, "The overall pressure ratio must be a finite number > 1.");
        }

        if (stageCount < 1)
        {
            throw ThermoErrors.OutOfRange(nameof(stageCount), stageCount, "The stage count must be ≥ 1.");
        }

        return Math.Pow(overallRatio, 1.0 / stageCount);
    }

    /// <summary>
    /// The gas after water above saturation at (<paramref name="tKelvin"/>, <paramref name="pPascals"/>) has condensed;
    /// the same instance when nothing condenses.
    /// </summary>
    internal static GasMixture DropOutWater(GasMixture gas, double tKelvin, double pPascals, out double condensedMassFraction)
    {
        condensedMassFraction = 0;
        var y = gas.WaterMoleFraction;
        if (y <= 0 || tKelvin > WaterSaturation.CriticalKelvin || tKelvin < WaterSaturation.MinimumKelvin)
        {
            return gas;
        }

        var ySat = WaterSaturation.SaturationPressurePascals(tKelvin) / pPascals;
        if (y <= ySat)
        {
            return gas;
        }

        // Per mole of wet gas in: the dry part stays, water falls to saturation.
        var dry = 1 - y;
        var waterLeft = ySat * dry / (1 - ySat);
        var condensedMoles = y - waterLeft;
        condensedMassFraction = condensedMoles * GasCatalog.Default.Water.MolarMassKilogramsPerMole / gas.MolarMassKilogramsPerMole;
        return gas.WithWaterFraction(GasCatalog.Default.Water, waterLeft / (dry + waterLeft));
    }

    private static (double P, double T) RequireSuction(in TrainStage s, int i)
    {
        if (s.SuctionPressure is not { } p)
        {
            throw ThermoErrors.OutOfRange(i, "SuctionPressure", null, "This stage needs its suction pressure (or, for a later stage, an intercooler).");
        }

        if (s.SuctionTemperature is not { } t)
        {
            throw ThermoErrors.OutOfRange(i, "SuctionTemperature", null, "This stage needs its suction temperature (or, for a later stage, an intercooler).");
        }

        return (p.Pascals, t.Kelvins);
    }
}
