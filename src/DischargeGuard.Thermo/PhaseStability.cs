using System.Globalization;
using DischargeGuard.Thermo.Core;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>The phase of a fluid at a state.</summary>
public enum FluidPhase
{
    /// <summary>One stable phase, vapour-like (or a supercritical fluid that is not liquid-like).</summary>
    Gas,

    /// <summary>One stable phase, liquid-like (a liquid, or a dense fluid below its pseudo-critical temperature).</summary>
    Liquid,

    /// <summary>Unstable as one phase: a second phase (liquid drops from a gas, or vapour from a liquid) forms.</summary>
    TwoPhase,
}

/// <summary>What the hydrocarbon dew-point search found at a pressure.</summary>
public enum DewPointStatus
{
    /// <summary>A dew point (for a pure component: its saturation temperature) was found.</summary>
    Found,

    /// <summary>
    /// No dew point at this pressure: above the cricondenbar of the mixture (for a pure component, at or above its
    /// critical pressure) the fluid turns liquid-like on cooling without forming a second phase.
    /// </summary>
    AboveCricondenbar,

    /// <summary>No condensation between the search start and <see cref="PhaseStability.SearchFloorKelvin"/>.</summary>
    NoneAboveSearchFloor,

    /// <summary>The gas holds nothing but water: there is no water-free fluid to condense.</summary>
    NoCondensable,
}

/// <summary>The hydrocarbon (water-free) dew point at one pressure.</summary>
/// <param name="Status">Whether a dew point exists, and why not if not.</param>
/// <param name="TemperatureKelvin">The dew-point temperature, K; NaN unless <see cref="DewPointStatus.Found"/>.</param>
public readonly record struct HydrocarbonDewPoint(DewPointStatus Status, double TemperatureKelvin)
{
    /// <summary>The dew-point temperature, or null when there is none (see <see cref="Status"/>).</summary>
    public Temperature? Temperature => Status == DewPointStatus.Found ? UnitsNet.Temperature.FromKelvins(TemperatureKelvin) : null;
}

/// <summary>
/// The phase check of a gas at one state (a stage's suction or discharge), from <see cref="PhaseStability.Check"/>.
/// </summary>
/// <param name="Phase">
/// The overall verdict: <see cref="FluidPhase.TwoPhase"/> when the water-free fluid is unstable or water condenses
/// (the state is below the water dew point); otherwise the water-free fluid's phase.
/// </param>
/// <param name="HydrocarbonPhase">The phase of the water-free fluid by the tangent-plane test and root choice.</param>
/// <param name="HydrocarbonDewPoint">The upper (highest-temperature) dew point of the water-free fluid at the pressure.</param>
/// <param name="WaterDewPointKelvin">
/// Water dew (or frost) point at the pressure, K, from the water partial pressure y_w·P and IAPWS saturation; NaN when
/// the gas holds no water or the point lies below 200 K.
/// </param>
/// <param name="MinimumReducedTangentPlaneDistance">
/// The lowest tangent-plane distance of the non-trivial stationary points found, per mole of trial phase over RT
/// (dimensionless): negative = unstable (a second phase lowers the Gibbs energy), positive = stable with that margin
/// against the nearest candidate phase, 0 when every trial went back to the feed (or for a pure component).
/// </param>
/// <param name="IncipientPhaseLiquidLike">When unstable: true if the phase that forms is liquid-like (drop-out from a gas).</param>
/// <param name="TemperatureKelvin">The checked temperature, K (the superheats are measured from it).</param>
public readonly record struct PhaseCheck(
    FluidPhase Phase,
    FluidPhase HydrocarbonPhase,
    HydrocarbonDewPoint HydrocarbonDewPoint,
    double WaterDewPointKelvin,
    double MinimumReducedTangentPlaneDistance,
    bool IncipientPhaseLiquidLike,
    double TemperatureKelvin)
{
    /// <summary>Water dew point, or null when the gas holds no water (or it lies below 200 K).</summary>
    public Temperature? WaterDewPoint => double.IsNaN(WaterDewPointKelvin) ? null : Temperature.FromKelvins(WaterDewPointKelvin);

    /// <summary>T − hydrocarbon dew point (negative = below it), or null when there is no dew point.</summary>
    public TemperatureDelta? SuperheatAboveHydrocarbonDewPoint => HydrocarbonDewPoint.Status == DewPointStatus.Found
        ? TemperatureDelta.FromKelvins(TemperatureKelvin - HydrocarbonDewPoint.TemperatureKelvin)
        : null;

    /// <summary>T − water dew point (negative = water condenses), or null when there is none.</summary>
    public TemperatureDelta? SuperheatAboveWaterDewPoint => double.IsNaN(WaterDewPointKelvin)
        ? null
        : TemperatureDelta.FromKelvins(TemperatureKelvin - WaterDewPointKelvin);

    /// <summary>True when anything but a single gas phase is present at the state.</summary>
    public bool LiquidPresent => Phase != FluidPhase.Gas;
}

/// <summary>The detailed outcome of <see cref="PhaseStabilityModel.TestStability"/>.</summary>
/// <param name="Stable">True when no trial phase lowers the Gibbs energy.</param>
/// <param name="FeedPhase">The feed's own root: <see cref="FluidPhase.Gas"/> (vapour-like) or <see cref="FluidPhase.Liquid"/>.</param>
/// <param name="MinimumReducedTangentPlaneDistance">As in <see cref="PhaseCheck"/>, dimensionless.</param>
/// <param name="IncipientPhaseLiquidLike">When a stationary point was found: whether it is liquid-like.</param>
/// <param name="IncipientMoleFractions">
/// Composition (mole fractions by species id) of the lowest stationary point found, or null when every trial returned
/// to the feed. When unstable it is the incipient phase.
/// </param>
public sealed record StabilityResult(
    bool Stable,
    FluidPhase FeedPhase,
    double MinimumReducedTangentPlaneDistance,
    bool IncipientPhaseLiquidLike,
    IReadOnlyDictionary<string, double>? IncipientMoleFractions);

/// <summary>
/// Whether a gas at a state is one gas phase, a liquid, or two-phase, and how far it is above its dew points. The
/// hydrocarbon side uses the Peng-Robinson equation with the embedded critical constants and k_ij (as
/// <see cref="RealGasMixture"/>) on the WATER-FREE gas: the tangent-plane stability test of Michelsen (Fluid Phase
/// Equilibria 9, 1–19, 1982) from Wilson K-value and pure-component trial phases, solved by successive substitution
/// with dominant-eigenvalue acceleration; the upper dew point by scanning that test downward in temperature in
/// <see cref="ScanStepKelvin"/> steps and bisecting to 0.01 K; a pure component by its exact PR saturation curve (equal
/// fugacities of the two roots). Water is judged from its partial pressure against the IAPWS saturation pressure
/// (<see cref="HumidGas.DewPoint"/>). Pure code, no I/O. This is a screening aid: it does not replace the
/// manufacturer's limits, local codes or a licensed engineer's review.
/// </summary>
public static class PhaseStability
{
    /// <summary>Lowest temperature the dew-point search goes down to, K.</summary>
    public const double SearchFloorKelvin = PhaseEquilibrium.SearchFloorKelvin;

    /// <summary>Step of the downward dew-point scan, K. A two-phase region narrower than this in T can be missed.</summary>
    public const double ScanStepKelvin = PhaseEquilibrium.ScanStepKelvin;

    /// <summary>Dew points are refined to within this, K.</summary>
    public const double DewPointToleranceKelvin = 0.01;

    /// <summary>Lowest temperature accepted, K.</summary>
    public const double MinimumKelvin = 50;

    /// <summary>Highest temperature accepted, K.</summary>
    public const double MaximumKelvin = 2000;

    /// <summary>
    /// The phase check of <paramref name="gasWithWater"/> at (<paramref name="temperature"/>, absolute
    /// <paramref name="pressure"/>). Prepares the water-free model on every call; to check many states of one gas,
    /// call <see cref="Prepare"/> once and <see cref="PhaseStabilityModel.Check"/> per state.
    /// </summary>
    /// <exception cref="ThermoInputException">T outside 50–2000 K or P outside (0, 100 MPa] (ParamName temperature / pressure).</exception>
    public static PhaseCheck Check(GasMixture gasWithWater, Temperature temperature, Pressure pressure) =>
        Prepare(gasWithWater).Check(temperature, pressure);

    /// <summary>
    /// The reusable phase model of a gas (water is split off here); immutable and thread-safe. One prepared for the same
    /// composition (same species, mole fractions equal bit for bit) may be returned.
    /// </summary>
    /// <exception cref="InvalidCompositionException">A species has no Peng-Robinson constants.</exception>
    public static PhaseStabilityModel Prepare(GasMixture gasWithWater)
    {
        ArgumentNullException.ThrowIfNull(gasWithWater);
        return Models.GetOrAdd(new CompositionKey(gasWithWater), gasWithWater, static g => new PhaseStabilityModel(g));
    }

    private static readonly ModelCache<CompositionKey, PhaseStabilityModel> Models = new(128);

    /// <summary>
    /// Peng-Robinson saturation pressure of a pure species at <paramref name="temperature"/> (equal fugacities of the
    /// liquid and vapour roots), or null at or above its critical temperature.
    /// </summary>
    /// <exception cref="InvalidCompositionException">Unknown species or no Peng-Robinson constants.</exception>
    public static Pressure? PureSaturationPressure(string speciesId, Temperature temperature)
    {
        var p = Pure(speciesId).PureSaturationPressure(temperature.Kelvins);
        return double.IsNaN(p) ? null : Pressure.FromPascals(p);
    }

    /// <summary>Peng-Robinson saturation temperature of a pure species at <paramref name="pressure"/>, or null at or above Pc.</summary>
    /// <exception cref="InvalidCompositionException">Unknown species or no Peng-Robinson constants.</exception>
    public static Temperature? PureSaturationTemperature(string speciesId, Pressure pressure)
    {
        var t = Pure(speciesId).PureSaturationTemperature(pressure.Pascals);
        return double.IsNaN(t) ? null : Temperature.FromKelvins(t);
    }

    internal static void RequireState(double tKelvin, double pPascals)
    {
        if (!(tKelvin >= MinimumKelvin && tKelvin <= MaximumKelvin))
        {
            throw ThermoErrors.OutOfRange("temperature", tKelvin, string.Create(CultureInfo.InvariantCulture, $"The phase check needs a temperature in {MinimumKelvin}–{MaximumKelvin} K; got {tKelvin:0.###} K."));
        }

        RealGasMixture.RequirePressure(pPascals, "pressure");
    }

    private static PhaseEquilibrium Pure(string speciesId)
    {
        ArgumentNullException.ThrowIfNull(speciesId);
        var gas = GasCatalog.Default.CreateMixture([new(speciesId, 1.0)], CompositionBasis.Mole);
        return new PhaseEquilibrium(RealGasMixture.Create(gas).Eos);
    }
}

/// <summary>
/// The phase model of one gas: its water fraction and the Peng-Robinson model of its water-free part, built once by
/// <see cref="PhaseStability.Prepare"/>. Immutable in all it answers (it remembers its last few dew points) and
/// thread-safe. Method: see <see cref="PhaseStability"/>.
/// </summary>
public sealed class PhaseStabilityModel
{
    private const int DewMemoSize = 8;

    private readonly PhaseEquilibrium? _dry;
    private readonly string[] _ids;
    private readonly GasMixture _gas;
    private volatile (double PressurePascals, HydrocarbonDewPoint DewPoint)[] _dewMemo = [];

    internal PhaseStabilityModel(GasMixture gasWithWater)
    {
        _gas = gasWithWater;
        var species = new List<Species>();
        var moles = new List<double>();
        foreach (var c in gasWithWater.Components)
        {
            if (c.Species.Id != "H2O")
            {
                species.Add(c.Species);
                moles.Add(c.MoleFraction);
            }
        }

        if (species.Count == 0)
        {
            _ids = [];
            return;
        }

        var dry = species.Count == gasWithWater.Components.Count ? gasWithWater : GasMixture.FromAmounts([.. species], [.. moles]);
        DryGas = dry;
        _ids = dry.Components.Select(c => c.Species.Id).ToArray();
        _dry = new PhaseEquilibrium(RealGasMixture.Create(dry).Eos);
    }

    /// <summary>The water-free gas the hydrocarbon checks run on (null when the gas is only water).</summary>
    public GasMixture? DryGas { get; }

    /// <summary>Phase, dew points and superheats at (<paramref name="temperature"/>, absolute <paramref name="pressure"/>).</summary>
    /// <exception cref="ThermoInputException">T outside 50–2000 K or P outside (0, 100 MPa].</exception>
    public PhaseCheck Check(Temperature temperature, Pressure pressure)
    {
        var t = temperature.Kelvins;
        var p = pressure.Pascals;
        PhaseStability.RequireState(t, p);
        var water = WaterDewPointKelvin(p);
        FluidPhase hc;
        double tpd = 0;
        var incipientLiquid = false;
        HydrocarbonDewPoint dew;
        if (_dry is null)
        {
            hc = FluidPhase.Gas;
            dew = new HydrocarbonDewPoint(DewPointStatus.NoCondensable, double.NaN);
        }
        else if (_dry.Count == 1)
        {
            var pSat = _dry.PureSaturationPressure(t);
            hc = !double.IsNaN(pSat) && p > pSat ? FluidPhase.Liquid : FluidPhase.Gas;
            dew = PureDew(p);
        }
        else
        {
            var r = _dry.Test(t, p, true, false, default, default);
            tpd = r.MinimumReducedDistance;
            incipientLiquid = r.Unstable && r.IncipientLiquidLike;
            hc = r.Unstable ? FluidPhase.TwoPhase : r.FeedLiquidLike ? FluidPhase.Liquid : FluidPhase.Gas;
            dew = MixtureDew(p);
        }

        var phase = hc == FluidPhase.Gas && !double.IsNaN(water) && t < water ? FluidPhase.TwoPhase : hc;
        return new PhaseCheck(phase, hc, dew, water, tpd, incipientLiquid, t);
    }

    /// <summary>The tangent-plane stability test of the water-free gas at (T, P), with the incipient phase.</summary>
    /// <exception cref="ThermoInputException">T outside 50–2000 K or P outside (0, 100 MPa].</exception>
    /// <exception cref="InvalidOperationException">The gas is only water.</exception>
    public StabilityResult TestStability(Temperature temperature, Pressure pressure)
    {
        var t = temperature.Kelvins;
        var p = pressure.Pascals;
        PhaseStability.RequireState(t, p);
        var dry = _dry ?? throw new InvalidOperationException("The gas holds nothing but water.");
        var incipient = new double[dry.Count];
        var r = dry.Test(t, p, true, false, default, incipient);
        Dictionary<string, double>? fractions = null;
        if (r.FoundStationaryPoint)
        {
            fractions = new Dictionary<string, double>(StringComparer.Ordinal);
            for (var i = 0; i < _ids.Length; i++)
            {
                fractions[_ids[i]] = incipient[i];
            }
        }

        return new StabilityResult(!r.Unstable, r.FeedLiquidLike ? FluidPhase.Liquid : FluidPhase.Gas, r.MinimumReducedDistance, r.IncipientLiquidLike, fractions);
    }

    /// <summary>
    /// The upper (highest-temperature) dew point of the water-free gas at absolute <paramref name="pressure"/>; for a
    /// pure component its saturation temperature.
    /// </summary>
    /// <exception cref="ThermoInputException">P outside (0, 100 MPa].</exception>
    public HydrocarbonDewPoint HydrocarbonDewPointAt(Pressure pressure)
    {
        var p = pressure.Pascals;
        RealGasMixture.RequirePressure(p, "pressure");
        return _dry is null ? new HydrocarbonDewPoint(DewPointStatus.NoCondensable, double.NaN)
            : _dry.Count == 1 ? PureDew(p)
            : MixtureDew(p);
    }

    /// <summary>The water dew (or frost) point at absolute <paramref name="pressure"/>, or null (no water, or below 200 K).</summary>
    public Temperature? WaterDewPointAt(Pressure pressure)
    {
        var t = WaterDewPointKelvin(pressure.Pascals);
        return double.IsNaN(t) ? null : Temperature.FromKelvins(t);
    }

    private double WaterDewPointKelvin(double pPascals)
    {
        var y = _gas.WaterMoleFraction;
        if (y <= 0 || y * pPascals < WaterSaturation.SaturationPressurePascals(WaterSaturation.MinimumKelvin))
        {
            return double.NaN;
        }

        return HumidGas.DewPoint(_gas, Pressure.FromPascals(pPascals))!.Value.Kelvins;
    }

    private HydrocarbonDewPoint PureDew(double pPascals)
    {
        var t = _dry!.PureSaturationTemperature(pPascals);
        return double.IsNaN(t) ? new HydrocarbonDewPoint(DewPointStatus.AboveCricondenbar, double.NaN) : new HydrocarbonDewPoint(DewPointStatus.Found, t);
    }

    private HydrocarbonDewPoint MixtureDew(double pPascals)
    {
        // The dew point depends on the composition and the pressure only, and the model is shared by every request on
        // this gas (PhaseStability.Prepare keeps it): the last few pressures' answers are kept, matched bit for bit.
        var memo = _dewMemo;
        foreach (var (p, dew) in memo)
        {
            if (BitConverter.DoubleToInt64Bits(p) == BitConverter.DoubleToInt64Bits(pPascals))
            {
                return dew;
            }
        }

        var s = _dry!.UpperDewPoint(pPascals, PhaseStability.DewPointToleranceKelvin);
        var found = s.Outcome switch
        {
            DewPointOutcome.Found => new HydrocarbonDewPoint(DewPointStatus.Found, s.TemperatureKelvin),
            DewPointOutcome.AboveCricondenbar => new HydrocarbonDewPoint(DewPointStatus.AboveCricondenbar, double.NaN),
            _ => new HydrocarbonDewPoint(DewPointStatus.NoneAboveSearchFloor, double.NaN),
        };

        // Copy on write: readers see an old or a new array, never a torn one; a lost update only costs a search.
        var next = new (double, HydrocarbonDewPoint)[Math.Min(memo.Length + 1, DewMemoSize)];
        next[0] = (pPascals, found);
        Array.Copy(memo, 0, next, 1, next.Length - 1);
        _dewMemo = next;
        return found;
    }
}
