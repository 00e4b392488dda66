using System.Globalization;
using DischargeGuard.Thermo.Core;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// A fluid of fixed composition described by GERG-2008 (<see cref="Gerg2008"/>): properties at (T, ρ) and, through a
/// density solver that returns the gas root, at (T, p). Built once per composition (reducing functions and the folded
/// term list, see docs/real-gas.md); immutable and thread-safe; property evaluation allocates nothing.
/// </summary>
public sealed class Gerg2008Fluid
{
    private const double UnstableCheckReducedTemperature = 1.25;

    private readonly Gerg2008Equation _eos;
    private readonly double _waterFraction;

    private Gerg2008Fluid(Gerg2008Equation eos, KeyValuePair<string, double>[] composition)
    {
        _eos = eos;
        Composition = composition;
        foreach (var c in composition)
        {
            if (c.Key == "H2O")
            {
                _waterFraction = c.Value;
            }
        }
    }

    /// <summary>The components (catalogue species ids) and mole fractions, in the equation's component order.</summary>
    public IReadOnlyList<KeyValuePair<string, double>> Composition { get; }

    /// <summary>Molar mass from the equation's component molar masses, kg/mol.</summary>
    public double MolarMassKilogramsPerMole => _eos.MolarMassKilogramsPerMole;

    /// <summary>Reducing temperature T_r(x) of the mixture, K (the critical temperature for a pure fluid).</summary>
    public double ReducingTemperatureKelvin => _eos.ReducingTemperatureKelvin;

    /// <summary>Reducing density ρ_r(x) of the mixture, mol/m³ (the critical density for a pure fluid).</summary>
    public double ReducingDensityMolesPerCubicMeter => _eos.ReducingDensityMolesPerCubicMeter;

    internal Gerg2008Equation Eos => _eos;

    /// <summary>
    /// The fluid of the given mole fractions (species ids of <see cref="Gerg2008.ComponentIds"/>; zero fractions are
    /// dropped; the fractions must sum to 1 within 1e-4 and are normalised).
    /// </summary>
    /// <exception cref="InvalidCompositionException">A species is not a GERG-2008 component, a fraction is negative or not finite, or the sum is off.</exception>
    public static Gerg2008Fluid Create(IEnumerable<KeyValuePair<string, double>> moleFractions)
    {
        ArgumentNullException.ThrowIfNull(moleFractions);
        var data = Gerg2008Data.Default;
        var byIndex = new SortedDictionary<int, (string Id, double X)>();
        foreach (var (id, x) in moleFractions)
        {
            var i = data.IndexOf(id);
            if (i < 0)
            {
                throw new InvalidCompositionException($"'{id}' is not a GERG-2008 component (components: {string.Join(", ", Gerg2008.ComponentIds)}).", id);
            }

            if (!double.IsFinite(x) || x < 0)
            {
                throw new InvalidCompositionException(string.Create(CultureInfo.InvariantCulture, $"The mole fraction of '{id}' must be finite and not negative; got {x}."), id);
            }

            if (!byIndex.TryAdd(i, (id, x)))
            {
                throw new InvalidCompositionException($"'{id}' appears twice.", id);
            }
        }

        var sum = byIndex.Values.Sum(v => v.X);
        if (!(Math.Abs(sum - 1) <= 1e-4))
        {
            throw new InvalidCompositionException(string.Create(CultureInfo.InvariantCulture, $"The mole fractions sum to {sum:0.######}; they must sum to 1 within 0.0001."));
        }

        var present = byIndex.Where(kv => kv.Value.X > 0).ToArray();
        var index = present.Select(kv => kv.Key).ToArray();
        var fractions = present.Select(kv => kv.Value.X / sum).ToArray();
        var eos = Gerg2008Equation.Create(data, index, fractions);
        var composition = present.Select((kv, k) => new KeyValuePair<string, double>(kv.Value.Id, fractions[k])).ToArray();
        return new Gerg2008Fluid(eos, composition);
    }

    /// <summary>The fluid of a catalogue mixture.</summary>
    /// <exception cref="InvalidCompositionException">A species of the mixture is not a GERG-2008 component.</exception>
    public static Gerg2008Fluid Create(GasMixture gas)
    {
        ArgumentNullException.ThrowIfNull(gas);
        return Create(gas.Components.Select(c => new KeyValuePair<string, double>(c.Species.Id, c.MoleFraction)));
    }

    /// <summary>Properties at temperature and molar density (no phase check: any single-phase or metastable state).</summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// (<see cref="ThermoInputException"/>) Temperature outside 60–700 K, density not positive, or a pressure outside (0, 70 MPa] results.
    /// </exception>
    public Gerg2008State StateAt(Temperature temperature, Molarity density)
    {
        var t = temperature.Kelvins;
        var rho = density.MolesPerCubicMeter;
        Gerg2008.RequireTemperature(t, nameof(temperature));
        if (!(rho > 0) || !double.IsFinite(rho))
        {
            throw ThermoErrors.OutOfRange(nameof(density), rho, "The molar density must be positive and finite.");
        }

        var props = PropertiesAt(t, rho);
        Gerg2008.RequirePressure(props.PressurePascals, nameof(density));
        return new Gerg2008State(props);
    }

    /// <summary>Properties at temperature and pressure on the gas root, after the phase check (see <see cref="TryStateAt"/>).</summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// (<see cref="ThermoInputException"/>) Temperature outside 60–700 K, pressure outside (0, 70 MPa], a liquid or two-phase
    /// state, or a density solve that does not converge (named <c>pressure</c>).
    /// </exception>
    public Gerg2008State StateAt(Temperature temperature, Pressure pressure)
    {
        var t = temperature.Kelvins;
        var p = pressure.Pascals;
        Gerg2008.RequireTemperature(t, nameof(temperature));
        Gerg2008.RequirePressure(p, nameof(pressure));
        RequireVapour(t, p, nameof(pressure));
        if (!TryPropertiesAt(t, p, Gerg2008.DefaultDensityTolerance, Gerg2008.DefaultDensityIterations, out var props))
        {
            throw ThermoErrors.OutOfRange(nameof(pressure), p, "The GERG-2008 density solve did not converge to a gas root.");
        }

        return new Gerg2008State(props);
    }

    /// <summary>
    /// Properties at (T, p) on the gas root without the phase check: false (never throws) when the density solver finds no
    /// gas root (the pressure is above the vapour spinodal of the isotherm) or does not converge within
    /// <paramref name="maxIterations"/> to <paramref name="relativeTolerance"/> in density. Range checks still throw.
    /// </summary>
    public bool TryStateAt(Temperature temperature, Pressure pressure, double relativeTolerance, int maxIterations, out Gerg2008State state)
    {
        var t = temperature.Kelvins;
        var p = pressure.Pascals;
        Gerg2008.RequireTemperature(t, nameof(temperature));
        Gerg2008.RequirePressure(p, nameof(pressure));
        var ok = TryPropertiesAt(t, p, relativeTolerance, maxIterations, out var props);
        state = ok ? new Gerg2008State(props) : default;
        return ok;
    }

    /// <summary>
    /// Null when (T, p) is taken as gas; otherwise the reason it is not. Checks, below 1.25·T_r: (1) a gas root exists (the pressure is
    /// below the vapour spinodal of the isotherm at this composition); (2) below 1.25·T_r, a denser (liquid) root of
    /// lower Gibbs energy means the gas root is metastable: liquid or two-phase; (3) below T_r a gas root denser than
    /// ρ_r is liquid-like; and at any temperature (4) water above its saturation partial pressure condenses. As for the Peng-Robinson model,
    /// a mixture's dew point between those is not detected (no flash).
    /// </summary>
    internal string? PhaseProblem(double tKelvin, double pPascals)
    {
        var eos = _eos;
        if (tKelvin >= UnstableCheckReducedTemperature * eos.ReducingTemperatureKelvin)
        {
            // Well above the reducing temperature the isotherm has no loop: a gas root always exists (the density solver
            // of every property call still reports one it cannot find) and only water can condense.
            return WaterProblem(tKelvin, pPascals);
        }

        var n1 = eos.PolynomialTermCount;
        var n2 = eos.GaussianTermCount;
        Span<double> polyTau = stackalloc double[n1];
        Span<double> gaussTau = stackalloc double[n2];
        eos.TemperatureTerms(tKelvin, polyTau, gaussTau);
        var inv = CultureInfo.InvariantCulture;
        if (!eos.TrySolveGasDensity(tKelvin, pPascals, polyTau, gaussTau, 0, Gerg2008.DefaultDensityTolerance, Gerg2008.DefaultDensityIterations, out var rhoGas))
        {
            return string.Create(inv, $"At {tKelvin:0.##} K and {pPascals / 1000:0.###} kPa GERG-2008 has no gas root (the pressure is above the gas branch of the isotherm): the fluid would be liquid or two-phase; the real-gas stage needs gas.");
        }

        var tr = eos.ReducingTemperatureKelvin;
        var rhoR = eos.ReducingDensityMolesPerCubicMeter;
        if (tKelvin < UnstableCheckReducedTemperature * tr
            && eos.TryFindDenserRoot(tKelvin, pPascals, polyTau, gaussTau, rhoGas, Gerg2008.DefaultDensityTolerance, Gerg2008.DefaultDensityIterations, out var rhoLiquid))
        {
            var gGas = GibbsOverRt(tKelvin, rhoGas, polyTau, gaussTau);
            var gLiquid = GibbsOverRt(tKelvin, rhoLiquid, polyTau, gaussTau);
            if (gLiquid < gGas)
            {
                return string.Create(inv, $"At {tKelvin:0.##} K and {pPascals / 1000:0.###} kPa the GERG-2008 liquid root ({rhoLiquid / 1000:0.###} mol/L) is more stable than the gas root ({rhoGas / 1000:0.###} mol/L): the fluid would be liquid or two-phase; the real-gas stage needs gas.");
            }
        }

        if (tKelvin < tr && rhoGas > rhoR)
        {
            return string.Create(inv, $"At {tKelvin:0.##} K and {pPascals / 1000:0.###} kPa the only GERG-2008 root is liquid-like ({rhoGas / 1000:0.###} mol/L, denser than the reducing density {rhoR / 1000:0.###} mol/L, below the reducing temperature {tr:0.#} K): the real-gas stage needs gas.");
        }

        return WaterProblem(tKelvin, pPascals);
    }

    private string? WaterProblem(double tKelvin, double pPascals)
    {
        if (_waterFraction > 0 && tKelvin >= WaterSaturation.MinimumKelvin && tKelvin < WaterSaturation.CriticalKelvin)
        {
            var pw = _waterFraction * pPascals;
            var sat = WaterSaturation.SaturationPressurePascals(tKelvin);
            if (pw > sat)
            {
                return string.Create(CultureInfo.InvariantCulture, $"At {tKelvin:0.##} K and {pPascals / 1000:0.###} kPa the water partial pressure {pw:0.#} Pa is above its saturation pressure {sat:0.#} Pa: water would condense.");
            }
        }

        return null;
    }

    /// <summary>Throws when (T, p) is not gas by <see cref="PhaseProblem"/>.</summary>
    internal void RequireVapour(double tKelvin, double pPascals, string member)
    {
        var reason = PhaseProblem(tKelvin, pPascals);
        if (reason is not null)
        {
            throw ThermoErrors.OutOfRange(member, pPascals, reason);
        }
    }

    /// <summary>All properties at (T, ρ) (no checks).</summary>
    internal GergProperties PropertiesAt(double tKelvin, double rhoMolesPerCubicMeter)
    {
        var eos = _eos;
        Span<double> polyTau = stackalloc double[eos.PolynomialTermCount];
        Span<double> gaussTau = stackalloc double[eos.GaussianTermCount];
        eos.TemperatureTerms(tKelvin, polyTau, gaussTau);
        var ar = eos.Residual(rhoMolesPerCubicMeter / eos.ReducingDensityMolesPerCubicMeter, polyTau, gaussTau, full: true);
        var a0 = eos.Ideal(tKelvin);
        return eos.Properties(tKelvin, rhoMolesPerCubicMeter, ar, a0);
    }

    /// <summary>All properties at (T, p) on the gas root (no range or phase checks; the hot path of the stage solvers).</summary>
    internal bool TryPropertiesAt(double tKelvin, double pPascals, double relativeTolerance, int maxIterations, out GergProperties properties)
    {
        var eos = _eos;
        Span<double> polyTau = stackalloc double[eos.PolynomialTermCount];
        Span<double> gaussTau = stackalloc double[eos.GaussianTermCount];
        eos.TemperatureTerms(tKelvin, polyTau, gaussTau);
        if (!eos.TrySolveGasDensity(tKelvin, pPascals, polyTau, gaussTau, 0, relativeTolerance, maxIterations, out var rho))
        {
            properties = default;
            return false;
        }

        var ar = eos.Residual(rho / eos.ReducingDensityMolesPerCubicMeter, polyTau, gaussTau, full: true);
        var a0 = eos.Ideal(tKelvin);
        properties = eos.Properties(tKelvin, rho, ar, a0);
        return true;
    }

    private double GibbsOverRt(double tKelvin, double rho, ReadOnlySpan<double> polyTau, ReadOnlySpan<double> gaussTau)
    {
        var eos = _eos;
        var ar = eos.Residual(rho / eos.ReducingDensityMolesPerCubicMeter, polyTau, gaussTau, full: true);
        var a0 = eos.Ideal(tKelvin);
        return 1 + ar.A01 + a0.A00 + Math.Log(rho / eos.ReferenceDensityMolesPerCubicMeter) + ar.A00;
    }
}

/// <summary>
/// GERG-2008 properties at one state. Energies and entropies are on the reference state of the NIST reference
/// implementation (ideal gas h = 0 at 298.15 K; s = 0 at 298.15 K and 101.325 kPa; ideal mixing included).
/// </summary>
public readonly record struct Gerg2008State
{
    internal Gerg2008State(in GergProperties p)
    {
        TemperatureKelvin = p.TemperatureKelvin;
        DensityMolesPerCubicMeter = p.DensityMolesPerCubicMeter;
        PressurePascals = p.PressurePascals;
        Z = p.Z;
        DpDrhoPascalCubicMetersPerMole = p.DpDrho;
        D2pDrho2PascalMeters6PerMole2 = p.D2pDrho2;
        DpDtPascalsPerKelvin = p.DpDt;
        InternalEnergyJoulesPerMole = p.InternalEnergy;
        EnthalpyJoulesPerMole = p.Enthalpy;
        EntropyJoulesPerMoleKelvin = p.Entropy;
        CvJoulesPerMoleKelvin = p.Cv;
        CpJoulesPerMoleKelvin = p.Cp;
        SpeedOfSoundMetersPerSecond = p.SpeedOfSound;
        GibbsEnergyJoulesPerMole = p.Gibbs;
        HelmholtzEnergyJoulesPerMole = p.Helmholtz;
        JouleThomsonKelvinPerPascal = p.JouleThomson;
        IsentropicExponent = p.IsentropicExponent;
    }

    /// <summary>T, K.</summary>
    public double TemperatureKelvin { get; }

    /// <summary>Molar density, mol/m³.</summary>
    public double DensityMolesPerCubicMeter { get; }

    /// <summary>p, Pa.</summary>
    public double PressurePascals { get; }

    /// <summary>Compressibility factor p/(ρRT), dimensionless.</summary>
    public double Z { get; }

    /// <summary>(∂p/∂ρ)_T, Pa·m³/mol.</summary>
    public double DpDrhoPascalCubicMetersPerMole { get; }

    /// <summary>(∂²p/∂ρ²)_T, Pa·m⁶/mol².</summary>
    public double D2pDrho2PascalMeters6PerMole2 { get; }

    /// <summary>(∂p/∂T)_ρ, Pa/K.</summary>
    public double DpDtPascalsPerKelvin { get; }

    /// <summary>Molar internal energy, J/mol.</summary>
    public double InternalEnergyJoulesPerMole { get; }

    /// <summary>Molar enthalpy, J/mol.</summary>
    public double EnthalpyJoulesPerMole { get; }

    /// <summary>Molar entropy, J/(mol·K).</summary>
    public double EntropyJoulesPerMoleKelvin { get; }

    /// <summary>Isochoric heat capacity, J/(mol·K).</summary>
    public double CvJoulesPerMoleKelvin { get; }

    /// <summary>Isobaric heat capacity, J/(mol·K).</summary>
    public double CpJoulesPerMoleKelvin { get; }

    /// <summary>Speed of sound, m/s.</summary>
    public double SpeedOfSoundMetersPerSecond { get; }

    /// <summary>Molar Gibbs energy, J/mol.</summary>
    public double GibbsEnergyJoulesPerMole { get; }

    /// <summary>Molar Helmholtz energy, J/mol.</summary>
    public double HelmholtzEnergyJoulesPerMole { get; }

    /// <summary>Joule-Thomson coefficient (∂T/∂p)_h, K/Pa.</summary>
    public double JouleThomsonKelvinPerPascal { get; }

    /// <summary>Isentropic exponent −(v/p)(∂p/∂v)_s = w²M/(ZRT), dimensionless.</summary>
    public double IsentropicExponent { get; }

    /// <summary>Pressure as a quantity.</summary>
    public Pressure Pressure => Pressure.FromPascals(PressurePascals);

    /// <summary>Molar density as a quantity.</summary>
    public Molarity Density => Molarity.FromMolesPerCubicMeter(DensityMolesPerCubicMeter);

    /// <summary>Speed of sound as a quantity.</summary>
    public Speed SpeedOfSound => Speed.FromMetersPerSecond(SpeedOfSoundMetersPerSecond);
}
