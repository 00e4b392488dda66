using System.Globalization;
using DischargeGuard.Thermo.Core;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// A gas mixture described by the Peng-Robinson equation of state (the <c>Core.PengRobinsonMixture</c>; see
/// docs/real-gas.md) on top of the ideal-gas NASA polynomials of a
/// <see cref="GasMixture"/>: h(T, P) = h_ig(T) + (H − H_ig)(T, P) and s(T, P) = S°(T) − R ln(P/P°) + (S − S_ig)(T, P),
/// P° = 1 bar, on the vapour (largest) root. The per-mixture constants (b_i, the √(a_i a_j)(1 − k_ij) matrix, κ_i) are
/// computed once here. Immutable and thread-safe.
/// </summary>
public sealed class RealGasMixture : IRealGasModel
{
    /// <summary>Highest pressure accepted, Pa (100 MPa: the top of the reference data this model was compared with).</summary>
    public const double MaximumPressurePascals = 100e6;

    private readonly PengRobinsonMixture _eos;
    private readonly double _waterFraction;
    private readonly CriticalConstants[] _constants;
    private readonly SpeciesPair[] _defaulted;
    private readonly BinaryInteraction[] _used;

    private RealGasMixture(GasMixture idealGas, PengRobinsonMixture eos, CriticalConstants[] constants, SpeciesPair[] defaulted, BinaryInteraction[] used)
    {
        IdealGas = idealGas;
        _eos = eos;
        _constants = constants;
        _defaulted = defaulted;
        _used = used;
        Constants = constants;
        DefaultedPairs = defaulted;
        Interactions = used;
        _waterFraction = idealGas.WaterMoleFraction;
        double tpc = 0, ppc = 0;
        var components = idealGas.Components;
        for (var i = 0; i < constants.Length; i++)
        {
            tpc += components[i].MoleFraction * constants[i].CriticalTemperatureKelvin;
            ppc += components[i].MoleFraction * constants[i].CriticalPressurePascals;
        }

        PseudoCriticalTemperatureKelvin = tpc;
        PseudoCriticalPressurePascals = ppc;
    }

    /// <summary>The ideal-gas mixture underneath (its composition, molar mass and data range).</summary>
    public GasMixture IdealGas { get; }

    /// <summary>The critical constants used, in the order of <see cref="GasMixture.Components"/>.</summary>
    public IReadOnlyList<CriticalConstants> Constants { get; }

    /// <summary>Pairs of this mixture with no published k_ij in the data, taken as k_ij = 0.</summary>
    public IReadOnlyList<SpeciesPair> DefaultedPairs { get; }

    /// <summary>The published k_ij pairs this mixture uses.</summary>
    public IReadOnlyList<BinaryInteraction> Interactions { get; }

    /// <summary>Pseudo-critical temperature by Kay's rule, Σ x_i Tc_i, K.</summary>
    public double PseudoCriticalTemperatureKelvin { get; }

    /// <summary>Pseudo-critical pressure by Kay's rule, Σ x_i Pc_i, Pa.</summary>
    public double PseudoCriticalPressurePascals { get; }

    /// <summary>Pseudo-critical temperature by Kay's rule.</summary>
    public Temperature PseudoCriticalTemperature => Temperature.FromKelvins(PseudoCriticalTemperatureKelvin);

    /// <summary>Pseudo-critical pressure by Kay's rule.</summary>
    public Pressure PseudoCriticalPressure => Pressure.FromPascals(PseudoCriticalPressurePascals);

    internal PengRobinsonMixture Eos => _eos;

    double IRealGasModel.MinimumKelvin => IdealGas.MinimumKelvin;

    double IRealGasModel.MaximumKelvin => IdealGas.MaximumKelvin;

    double IRealGasModel.MaximumPressurePascals => MaximumPressurePascals;

    bool IRealGasModel.InRange(double tKelvin) => IdealGas.InRange(tKelvin);

    void IRealGasModel.RequireTemperature(double tKelvin, string member) => IdealGas.RequireInRange(tKelvin, member);

    void IRealGasModel.RequirePressure(double pPascals, string member) => RequirePressure(pPascals, member);

    void IRealGasModel.RequireVapour(double tKelvin, double pPascals, string member) => RequireVapour(tKelvin, pPascals, member);

    RealGasPoint IRealGasModel.Evaluate(double tKelvin, double pPascals) => Evaluate(tKelvin, pPascals);

    // Models with the embedded data, by exact composition (a batch on one gas builds its model once), and the
    // composition-independent part by species list (a gas whose fractions move, as in the humid envelope, reuses it).
    private static readonly ModelCache<CompositionKey, RealGasMixture> ByComposition = new(128);
    private static readonly ModelCache<SpeciesListKey, RealGasMixture> BySpecies = new(64);

    /// <summary>
    /// The real-gas mixture of <paramref name="gas"/> with the embedded data (<see cref="PengRobinsonData.Default"/>).
    /// Models are immutable, so one prepared for the same composition (same species, mole fractions equal bit for bit)
    /// may be returned; its <see cref="IdealGas"/> is then a mixture of that same composition.
    /// </summary>
    /// <exception cref="InvalidCompositionException">A species has no critical constants in the data.</exception>
    public static RealGasMixture Create(GasMixture gas)
    {
        ArgumentNullException.ThrowIfNull(gas);
        return ByComposition.GetOrAdd(new CompositionKey(gas), gas, static g => ForComposition(g));
    }

    /// <summary>
    /// The model of <paramref name="gas"/> with the embedded data, built on the cached composition-independent constants
    /// of its species list and not itself cached: for trial compositions that are used once.
    /// </summary>
    /// <exception cref="InvalidCompositionException">A species has no critical constants in the data.</exception>
    internal static RealGasMixture ForComposition(GasMixture gas)
    {
        var template = BySpecies.GetOrAdd(new SpeciesListKey(gas), gas, static g => Create(g, PengRobinsonData.Default));
        if (new CompositionKey(template.IdealGas).Equals(new CompositionKey(gas)))
        {
            return template;
        }

        var components = gas.ComponentSpan;
        Span<double> x = components.Length <= 64 ? stackalloc double[components.Length] : new double[components.Length];
        for (var i = 0; i < components.Length; i++)
        {
            x[i] = components[i].MoleFraction;
        }

        return new RealGasMixture(gas, template._eos.WithMoleFractions(x), template._constants, template._defaulted, template._used);
    }

    /// <summary>The real-gas mixture of <paramref name="gas"/> with the given data (not cached).</summary>
    /// <exception cref="InvalidCompositionException">A species has no critical constants in the data.</exception>
    public static RealGasMixture Create(GasMixture gas, PengRobinsonData data)
    {
        ArgumentNullException.ThrowIfNull(gas);
        ArgumentNullException.ThrowIfNull(data);
        var components = gas.Components;
        var n = components.Count;
        var constants = new CriticalConstants[n];
        var tc = new double[n];
        var pc = new double[n];
        var omega = new double[n];
        var quantum = new bool[n];
        var x = new double[n];
        for (var i = 0; i < n; i++)
        {
            var id = components[i].Species.Id;
            if (!data.TryGetConstants(id, out var c))
            {
                throw new InvalidCompositionException($"No Peng-Robinson critical constants for species '{id}'.", id);
            }

            constants[i] = c;
            tc[i] = c.CriticalTemperatureKelvin;
            pc[i] = c.CriticalPressurePascals;
            omega[i] = c.AcentricFactor;
            quantum[i] = c.QuantumGas;
            x[i] = components[i].MoleFraction;
        }

        var kij = new double[n * n];
        var defaulted = new List<SpeciesPair>();
        var used = new List<BinaryInteraction>();
        for (var i = 0; i < n; i++)
        {
            for (var j = i + 1; j < n; j++)
            {
                if (data.TryGetInteraction(constants[i].SpeciesId, constants[j].SpeciesId, out var pair))
                {
                    kij[(i * n) + j] = pair.Kij;
                    kij[(j * n) + i] = pair.Kij;
                    used.Add(pair);
                }
                else
                {
                    defaulted.Add(new SpeciesPair(constants[i].SpeciesId, constants[j].SpeciesId));
                }
            }
        }

        var eos = new PengRobinsonMixture(tc, pc, omega, quantum, kij, x);
        return new RealGasMixture(gas, eos, constants, [.. defaulted], [.. used]);
    }

    /// <summary>Properties at (T, P) on the vapour root, after the phase check.</summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// Temperature outside the ideal-gas data range, pressure ≤ 0 or above <see cref="MaximumPressurePascals"/>, or a
    /// liquid or two-phase state (<see cref="ThermoInputException"/> naming <c>pressure</c>).
    /// </exception>
    public RealGasState StateAt(Temperature temperature, Pressure pressure)
    {
        var t = temperature.Kelvins;
        var p = pressure.Pascals;
        IdealGas.RequireInRange(t, nameof(temperature));
        RequirePressure(p, nameof(pressure));
        RequireVapour(t, p, nameof(pressure));
        var point = Evaluate(t, p);
        var r = ThermoConstants.MolarGasConstantJoulesPerMoleKelvin;
        return new RealGasState(
            point.Z,
            point.HOverR * r,
            point.SOverR * r,
            point.Residual.Enthalpy,
            point.Residual.Entropy,
            point.CpOverR * r,
            IdealGas.MolarMassKilogramsPerMole / point.Residual.MolarVolume,
            t / PseudoCriticalTemperatureKelvin,
            p / PseudoCriticalPressurePascals);
    }

    /// <summary>Compressibility factor Z on the vapour root at (T, P), without phase or range checks (for screening).</summary>
    public double CompressibilityAt(double tKelvin, double pPascals)
    {
        var att = _eos.AttractionAt(tKelvin);
        var (a, b) = _eos.Dimensionless(tKelvin, pPascals, att.A);
        return PengRobinsonMixture.LargestRoot(a, b);
    }

    internal static void RequirePressure(double pPascals, string member)
    {
        if (!(pPascals > 0) || !(pPascals <= MaximumPressurePascals))
        {
            throw ThermoErrors.OutOfRange(
                member,
                pPascals,
                string.Create(CultureInfo.InvariantCulture, $"The absolute pressure must lie in (0, {MaximumPressurePascals / 1e6:0} MPa] for the real-gas model; got {pPascals:0.###} Pa."));
        }
    }

    /// <summary>Throws when (T, P) is liquid or two-phase by the checks described in docs/real-gas.md.</summary>
    internal void RequireVapour(double tKelvin, double pPascals, string member)
    {
        var reason = PhaseProblem(tKelvin, pPascals);
        if (reason is not null)
        {
            throw ThermoErrors.OutOfRange(member, pPascals, reason);
        }
    }

    /// <summary>Null when (T, P) is taken as vapour; otherwise the reason it is not.</summary>
    /// <remarks>
    /// Three checks. (1) Three real roots: the root with the lower residual Gibbs energy (at the same composition) is the
    /// stable one of the two; the liquid root winning means liquid or two-phase. (2) One real root below the Kay's-rule
    /// pseudo-critical temperature with V/b below the PR critical V_c/b: a liquid-like state. (3) Water in the gas and
    /// its partial pressure y_w·P above the saturation pressure at T: water condenses. A mixture's hydrocarbon dew point
    /// between those is not detected (no flash here).
    /// </remarks>
    /// <summary>Relative tolerance on the water partial pressure against saturation (rounding of a saturated gas).</summary>
    internal const double SaturationTolerance = 1e-9;

    internal string? PhaseProblem(double tKelvin, double pPascals)
    {
        var att = _eos.AttractionAt(tKelvin);
        var (a, b) = _eos.Dimensionless(tKelvin, pPascals, att.A);
        var roots = PengRobinsonMixture.Roots(a, b, out var zv, out var zl);
        if (roots == 3)
        {
            var gv = _eos.ResidualAt(tKelvin, pPascals, zv, att).Gibbs;
            var gl = _eos.ResidualAt(tKelvin, pPascals, zl, att).Gibbs;
            if (gl < gv)
            {
                return string.Create(
                    CultureInfo.InvariantCulture,
                    $"At {tKelvin:0.##} K and {pPascals / 1000:0.###} kPa the Peng-Robinson liquid root is the stable one (Z = {zl:0.####} against vapour Z = {zv:0.####}): the gas would be liquid or two-phase; the real-gas stage needs vapour.");
            }
        }
        else if (tKelvin < PseudoCriticalTemperatureKelvin && zv / b < PengRobinsonMixture.CriticalVolumeOverB)
        {
            return string.Create(
                CultureInfo.InvariantCulture,
                $"At {tKelvin:0.##} K and {pPascals / 1000:0.###} kPa the only Peng-Robinson root is liquid-like (Z = {zv:0.####}, below the pseudo-critical temperature {PseudoCriticalTemperatureKelvin:0.#} K): the gas would be liquid or two-phase; the real-gas stage needs vapour.");
        }

        if (_waterFraction > 0 && tKelvin >= WaterSaturation.MinimumKelvin && tKelvin < WaterSaturation.CriticalKelvin)
        {
            var pw = _waterFraction * pPascals;
            var sat = WaterSaturation.SaturationPressurePascals(tKelvin);

            // A gas exactly at saturation (after a cooler drops its condensate, or RH = 1) is a gas: the water fraction
            // left by the drop-out is computed from this same saturation pressure, so allow its rounding.
            if (pw > sat * (1 + SaturationTolerance))
            {
                return string.Create(
                    CultureInfo.InvariantCulture,
                    $"At {tKelvin:0.##} K and {pPascals / 1000:0.###} kPa the water partial pressure {pw:0.#} Pa is above its saturation pressure {sat:0.#} Pa: water would condense.");
            }
        }

        return null;
    }

    /// <summary>All hot-path properties at (T, P) on the vapour root (no checks).</summary>
    internal RealGasPoint Evaluate(double tKelvin, double pPascals)
    {
        var r = ThermoConstants.MolarGasConstantJoulesPerMoleKelvin;
        var hIg = IdealGas.EnthalpyOverR(tKelvin, out var cpIg);
        var sIg = IdealGas.EntropyOverR(tKelvin) - Math.Log(pPascals / ThermoConstants.StandardStatePressurePascals);
        var att = _eos.AttractionAt(tKelvin);
        var (a, b) = _eos.Dimensionless(tKelvin, pPascals, att.A);
        var z = PengRobinsonMixture.LargestRoot(a, b);
        var res = _eos.ResidualAt(tKelvin, pPascals, z, att);
        return new RealGasPoint(z, hIg + (res.Enthalpy / r), sIg + (res.Entropy / r), cpIg + (res.Cp / r), res);
    }
}

/// <summary>Real-gas properties at one state (vapour root).</summary>
/// <param name="Z">Compressibility factor PV/(RT), dimensionless.</param>
/// <param name="MolarEnthalpyJoulesPerMole">h = h_ig + (H − H_ig), J/mol, on the enthalpy-of-formation basis of the NASA data.</param>
/// <param name="MolarEntropyJoulesPerMoleKelvin">s = S°(T) − R ln(P/1 bar) + (S − S_ig), J/(mol·K), mixing term included.</param>
/// <param name="ResidualEnthalpyJoulesPerMole">H − H_ig at the same T and P, J/mol.</param>
/// <param name="ResidualEntropyJoulesPerMoleKelvin">S − S_ig at the same T and P, J/(mol·K).</param>
/// <param name="MolarCpJoulesPerMoleKelvin">Real-gas cp, J/(mol·K).</param>
/// <param name="DensityKilogramsPerCubicMeter">Mass density, kg/m³.</param>
/// <param name="ReducedTemperature">T over the Kay's-rule pseudo-critical temperature, dimensionless.</param>
/// <param name="ReducedPressure">P over the Kay's-rule pseudo-critical pressure, dimensionless.</param>
public readonly record struct RealGasState(
    double Z,
    double MolarEnthalpyJoulesPerMole,
    double MolarEntropyJoulesPerMoleKelvin,
    double ResidualEnthalpyJoulesPerMole,
    double ResidualEntropyJoulesPerMoleKelvin,
    double MolarCpJoulesPerMoleKelvin,
    double DensityKilogramsPerCubicMeter,
    double ReducedTemperature,
    double ReducedPressure)
{
    /// <summary>h as a quantity.</summary>
    public MolarEnergy MolarEnthalpy => MolarEnergy.FromJoulesPerMole(MolarEnthalpyJoulesPerMole);

    /// <summary>s as a quantity.</summary>
    public MolarEntropy MolarEntropy => MolarEntropy.FromJoulesPerMoleKelvin(MolarEntropyJoulesPerMoleKelvin);

    /// <summary>Density as a quantity.</summary>
    public Density Density => Density.FromKilogramsPerCubicMeter(DensityKilogramsPerCubicMeter);
}

/// <summary>Hot-path values: Z, h/R (K), s/R and cp/R (dimensionless), and the residual block.</summary>
internal readonly record struct RealGasPoint(double Z, double HOverR, double SOverR, double CpOverR, Residual Residual);
