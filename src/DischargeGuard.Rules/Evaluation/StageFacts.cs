using DischargeGuard.Rules.Model;
using UnitsNet;

namespace DischargeGuard.Rules.Evaluation;

/// <summary>
/// What the engine knows about one stage: the Thermo results, the stage's equipment and service, and the
/// optional field inputs. A null optional field means "input absent": rules that need it are listed as not checked.
/// Temperatures are absolute; pressures are absolute.
/// </summary>
public sealed record StageFacts
{
    /// <summary>0-based stage index in the train.</summary>
    public required int StageIndex { get; init; }
    /// <summary>Position in the train.</summary>
    public required StagePosition Position { get; init; }
    /// <summary>Compressor type id from the catalogue.</summary>
    public string? CompressorTypeId { get; init; }
    /// <summary>Lubricant id from the catalogue (null when unknown or not lubricated).</summary>
    public string? LubricantId { get; init; }
    /// <summary>Valve material id.</summary>
    public string? ValveMaterialId { get; init; }
    /// <summary>Gas-wetted seal material id.</summary>
    public string? SealMaterialId { get; init; }
    /// <summary>Ring, rider-band and packing material id (non-lubricated cylinders).</summary>
    public string? RingMaterialId { get; init; }
    /// <summary>Valve spring material id.</summary>
    public string? SpringMaterialId { get; init; }
    /// <summary>Discharge-side pressure-part material (carbon-steel, c-0.5mo, 1.25cr-0.5mo, 2.25cr-1mo, stainless).</summary>
    public string? DischargeMaterial { get; init; }
    /// <summary>
    /// The stage's gas composition (wet), mole fractions by species id summing to 1; null when unknown. Species-based
    /// service classes and partial-pressure applicability read it.
    /// </summary>
    public IReadOnlyDictionary<string, double>? MoleFractions { get; init; }
    /// <summary>Service classes the caller declares (chlorine, acetylene, sour, CO2, air, hydrocarbon, …).</summary>
    public IReadOnlyList<string> DeclaredServiceClasses { get; init; } = [];
    /// <summary>Gas molar mass, for hydrogen-rich detection.</summary>
    public MolarMass? GasMolarMass { get; init; }
    /// <summary>
    /// O2 mole fraction on the dry basis (water excluded), for the oxygen service classes: one basis for air,
    /// oxygen-rich and oxygen-depleted, whatever the humidity.
    /// </summary>
    public Ratio? OxygenMoleFraction { get; init; }
    /// <summary>O2 partial pressure at discharge (wet gas, absolute), for rules that need an oxidant; null when unknown.</summary>
    public Pressure? DischargeOxygenPartialPressure { get; init; }
    /// <summary>Which model's discharge temperatures the stage's checks rest on: "ideal-gas", "peng-robinson" or "gerg-2008".</summary>
    public string DecidedBy { get; init; } = "ideal-gas";
    /// <summary>
    /// Whether heat is removed during compression: a jacket coolant temperature stated, or a compressor type whose
    /// injected oil or liquid cools the gas (null: decide from the jacket coolant and the type).
    /// </summary>
    public bool? Cooled { get; init; }
    /// <summary>Phase at suction (after any intercooler); null when the phase check was not run.</summary>
    public StagePhase? SuctionPhase { get; init; }
    /// <summary>Phase at discharge; null when the phase check was not run.</summary>
    public StagePhase? DischargePhase { get; init; }
    /// <summary>
    /// Suction temperature minus the hydrocarbon dew point at suction pressure; null when there is no dew point at that
    /// pressure (no condensable component, or above the cricondenbar) or the check was not run.
    /// </summary>
    public TemperatureDelta? SuctionSuperheat { get; init; }
    /// <summary>Suction temperature.</summary>
    public required Temperature SuctionTemperature { get; init; }
    /// <summary>Suction pressure, absolute.</summary>
    public required Pressure SuctionPressure { get; init; }
    /// <summary>Discharge pressure, absolute.</summary>
    public required Pressure DischargePressure { get; init; }
    /// <summary>Ideal (η = 1) discharge temperature.</summary>
    public required Temperature Isentropic { get; init; }
    /// <summary>
    /// Ideal (η = 1) discharge temperature on the internal cylinder ratio (flange ratio with the compressor type's
    /// valve-loss allowance); null when the type has no allowance.
    /// </summary>
    public Temperature? IsentropicInternal { get; init; }
    /// <summary>Discharge temperature with the stage efficiency.</summary>
    public required Temperature Estimated { get; init; }
    /// <summary>Upper bound of the discharge temperature.</summary>
    public required Temperature EstimatedUpperBound { get; init; }
    /// <summary>True when the efficiency came from the compressor-type catalogue because the request gave none.</summary>
    public bool EfficiencyDefaulted { get; init; }
    /// <summary>Measured discharge temperature.</summary>
    public Temperature? MeasuredDischarge { get; init; }
    /// <summary>Normal operating discharge temperature (for the set-point proposal).</summary>
    public Temperature? NormalOperatingDischarge { get; init; }
    /// <summary>Jacket coolant inlet temperature.</summary>
    public Temperature? JacketCoolantInlet { get; init; }
    /// <summary>Whether the stage runs unloaded for long periods.</summary>
    public bool? UnloadedRunning { get; init; }
    /// <summary>
    /// This stage in the asset's earlier evaluations, oldest first (the current one excluded), for trend rules; empty
    /// when the caller has none.
    /// </summary>
    public IReadOnlyList<DeviationSample> DeviationHistory { get; init; } = [];
    /// <summary>
    /// |estimated T2 (Peng-Robinson) − estimated T2 (ideal gas)|; null when the real-gas result is not available.
    /// </summary>
    public TemperatureDelta? RealGasCorrection { get; init; }
    /// <summary>
    /// The lowest maximum allowable working temperature on the stage's discharge side (cylinder or casing, pulsation
    /// bottles, piping, cooler, relief system); null when the request did not state it.
    /// </summary>
    public Temperature? DesignTemperature { get; init; }
    /// <summary>Water dew point at discharge pressure; null when humidity is unknown.</summary>
    public Temperature? DischargeWaterDewPoint { get; init; }

    /// <summary>
    /// Temperature rise across the stage. Defaults to isentropic − suction, the adiabatic rise the API 618 cooling
    /// clause uses; a caller may set it (e.g. from its own prediction).
    /// </summary>
    public TemperatureDelta TemperatureRise
    {
        get => _temperatureRise ?? TemperatureDelta.FromKelvins(Isentropic.Kelvins - SuctionTemperature.Kelvins);
        init => _temperatureRise = value;
    }

    private readonly TemperatureDelta? _temperatureRise;

    /// <summary>Pressure ratio on absolute pressures.</summary>
    public double PressureRatio => DischargePressure.Pascals / SuctionPressure.Pascals;
}
