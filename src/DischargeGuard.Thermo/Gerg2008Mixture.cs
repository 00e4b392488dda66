using DischargeGuard.Thermo.Core;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// A gas mixture described by GERG-2008 (<see cref="Gerg2008Fluid"/>) for the real-gas stage and envelope solvers
/// (<see cref="RealGasStageSolver"/>, <see cref="RealGasEnvelopeSolver"/>), with the catalogue's ideal-gas mixture beside
/// it for the ideal-gas answer. Unlike <see cref="RealGasMixture"/>, enthalpy and entropy come entirely from GERG-2008
/// (its own ideal-gas part), not from the NASA polynomials. Immutable and thread-safe.
/// </summary>
public sealed class Gerg2008Mixture : IRealGasModel
{
    private static readonly SpeciesPair[] NoPairs = [];

    private Gerg2008Mixture(GasMixture idealGas, Gerg2008Fluid fluid)
    {
        IdealGas = idealGas;
        Fluid = fluid;
        MinimumKelvin = Math.Max(idealGas.MinimumKelvin, Gerg2008.MinimumKelvin);
        MaximumKelvin = Math.Min(idealGas.MaximumKelvin, Gerg2008.MaximumKelvin);
    }

    /// <summary>The ideal-gas mixture of the same composition (NASA polynomials), for the ideal-gas answer beside the real gas.</summary>
    public GasMixture IdealGas { get; }

    /// <summary>The GERG-2008 fluid.</summary>
    public Gerg2008Fluid Fluid { get; }

    /// <summary>Lowest temperature of the stage solves, K: the higher of 60 K and the ideal-gas data's lower limit.</summary>
    public double MinimumKelvin { get; }

    /// <summary>Highest temperature of the stage solves, K: the lower of 700 K and the ideal-gas data's upper limit.</summary>
    public double MaximumKelvin { get; }

    /// <summary>Highest pressure accepted, Pa (GERG-2008's extended range, 70 MPa).</summary>
    public double MaximumPressurePascals => Gerg2008.MaximumPressurePascals;

    /// <summary>Always empty: GERG-2008 has parameters for every pair of its components.</summary>
    public IReadOnlyList<SpeciesPair> DefaultedPairs => NoPairs;

    // The folded coefficients cost ~10 µs and ~27 KB per composition: kept by exact composition for a batch on one gas.
    private static readonly ModelCache<CompositionKey, Gerg2008Mixture> ByComposition = new(128);

    /// <summary>
    /// The GERG-2008 mixture of a catalogue mixture. Models are immutable, so one prepared for the same composition
    /// (same species, mole fractions equal bit for bit) may be returned; its <see cref="IdealGas"/> is then a mixture of
    /// that same composition.
    /// </summary>
    /// <exception cref="InvalidCompositionException">A species is not a GERG-2008 component (see <see cref="Gerg2008.AreAllComponents"/>).</exception>
    public static Gerg2008Mixture Create(GasMixture gas)
    {
        ArgumentNullException.ThrowIfNull(gas);
        return ByComposition.GetOrAdd(new CompositionKey(gas), gas, static g => new Gerg2008Mixture(g, Gerg2008Fluid.Create(g)));
    }

    /// <summary>Properties at (T, p) on the gas root after the phase check, as <see cref="Gerg2008Fluid.StateAt(Temperature, Pressure)"/>.</summary>
    /// <exception cref="ArgumentOutOfRangeException">As <see cref="Gerg2008Fluid.StateAt(Temperature, Pressure)"/>.</exception>
    public Gerg2008State StateAt(Temperature temperature, Pressure pressure) => Fluid.StateAt(temperature, pressure);

    /// <summary>True when both states lie in GERG-2008's normal range (90–450 K, up to 35 MPa).</summary>
    public static bool IsInNormalRange(Temperature suctionTemperature, Pressure suctionPressure, Temperature dischargeTemperature, Pressure dischargePressure) =>
        Gerg2008.IsInNormalRange(suctionTemperature, suctionPressure) && Gerg2008.IsInNormalRange(dischargeTemperature, dischargePressure);

    /// <inheritdoc cref="IRealGasModel.InRange"/>
    internal bool InRange(double tKelvin) => tKelvin >= MinimumKelvin && tKelvin <= MaximumKelvin;

    bool IRealGasModel.InRange(double tKelvin) => InRange(tKelvin);

    void IRealGasModel.RequireTemperature(double tKelvin, string member)
    {
        Gerg2008.RequireTemperature(tKelvin, member);
        IdealGas.RequireInRange(tKelvin, member);
    }

    void IRealGasModel.RequirePressure(double pPascals, string member) => Gerg2008.RequirePressure(pPascals, member);

    void IRealGasModel.RequireVapour(double tKelvin, double pPascals, string member) => Fluid.RequireVapour(tKelvin, pPascals, member);

    RealGasPoint IRealGasModel.Evaluate(double tKelvin, double pPascals) => Evaluate(tKelvin, pPascals);

    /// <summary>Hot-path values on the gas root; NaN when the density solver finds none.</summary>
    internal RealGasPoint Evaluate(double tKelvin, double pPascals)
    {
        if (!Fluid.TryPropertiesAt(tKelvin, pPascals, Gerg2008.DefaultDensityTolerance, Gerg2008.DefaultDensityIterations, out var g))
        {
            return new RealGasPoint(double.NaN, double.NaN, double.NaN, double.NaN, default);
        }

        var r = ThermoConstants.MolarGasConstantJoulesPerMoleKelvin;
        var rho = g.DensityMolesPerCubicMeter;
        var rEos = Fluid.Eos.R;
        var cvIdeal = g.Cv - g.ResidualCv;
        var cpResidual = g.Cp - cvIdeal - rEos;
        var residual = new Residual(
            g.Z,
            1 / rho,
            g.ResidualEnthalpy,
            g.ResidualEntropy,
            g.ResidualEnthalpy - (tKelvin * g.ResidualEntropy),
            g.ResidualCv,
            cpResidual,
            g.DpDt / (rho * rho * g.DpDrho),
            -rho * rho * g.DpDrho);
        return new RealGasPoint(g.Z, g.Enthalpy / r, g.Entropy / r, g.Cp / r, residual);
    }
}
