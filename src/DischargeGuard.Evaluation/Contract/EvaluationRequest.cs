namespace DischargeGuard.Evaluation.Contract;

/// <summary>
/// A proposed stage or train to evaluate (<c>POST /v1/evaluations</c>). Every quantity carries its unit; state pressures
/// state their basis (absolute or gauge). Optional parts that are absent make the rules that need them "not checked".
/// </summary>
public sealed record EvaluationRequest
{
    /// <summary>Asset tag of the machine, e.g. "K-101A".</summary>
    public string? Asset { get; init; }

    /// <summary>Site id and its barometric pressure or elevation (needed for gauge pressures; selects the site rule layer).</summary>
    public SiteInput? Site { get; init; }

    /// <summary>Declared service: general, air, hydrocarbon, oxygen, chlorine, acetylene, sour or co2 (hydrogen-rich and oxygen-rich are detected; air and hydrocarbon also from the composition).</summary>
    public string? Service { get; init; }

    /// <summary>The gas: a preset, or a composition by mole or mass fraction.</summary>
    public GasInput? Gas { get; init; }

    /// <summary>auto (default), ideal-gas, peng-robinson (alias real-gas) or gerg-2008: the gas model the answer rests on; auto picks GERG-2008 where it covers every species and both states lie in its normal range, else Peng-Robinson (the ideal gas only where Peng-Robinson cannot answer and the switch criteria do not call for a real gas).</summary>
    public string? Method { get; init; }

    /// <summary>metric (default) or imperial.</summary>
    public string? OutputUnits { get; init; }

    /// <summary>Flow through the first stage, for power (optional).</summary>
    public FlowInput? Flow { get; init; }

    /// <summary>The stages in flow order.</summary>
    public IReadOnlyList<StageInput>? Stages { get; init; }

    /// <summary>
    /// Other cases of the same train, evaluated in the same call on the same rules, each with its own verdict, governing
    /// rule and margin: a hot day, a fouled cooler, a cooling-water failure, recycle, or an override of any input. The
    /// answer's verdict and governing limit are the worst of the base case and its scenarios.
    /// </summary>
    public IReadOnlyList<ScenarioInput>? Scenarios { get; init; }

    /// <summary>
    /// Asks for the train's envelope (<c>trainEnvelope</c> in the answer) and says how it redistributes the interstage
    /// pressures as the final discharge pressure rises or the suction pressure falls: <c>stated</c> (each stage keeps its
    /// share of the overall pressure ratio, in logarithms) or <c>equal</c> (every stage at the same ratio). Absent: no
    /// train envelope (it evaluates some thirty to forty trial trains).
    /// </summary>
    public string? TrainEnvelopeSplit { get; init; }
}

/// <summary>
/// One scenario: a name and one or more changes applied to the base case (in this order: override, hot day, fouled cooler,
/// cooling-water failure, recycle). A scenario is hypothetical: the base case's measured discharge temperatures do not
/// carry into it (an override may state its own).
/// </summary>
public sealed record ScenarioInput
{
    /// <summary>The scenario's name, unique in the request (lower-case letters, digits and hyphens), e.g. "hot-day".</summary>
    public string? Name { get; init; }

    /// <summary>A partial request merged onto the base request (any field but asset, site and scenarios; a stage list merges stage by stage).</summary>
    public EvaluationRequest? Override { get; init; }

    /// <summary>A hot day: warmer suction and, optionally, warmer cooling water.</summary>
    public HotDayInput? HotDay { get; init; }

    /// <summary>Fouled intercoolers: a larger approach.</summary>
    public FouledCoolerInput? FouledCooler { get; init; }

    /// <summary>Cooling water lost to intercoolers: the stages after them are fed directly.</summary>
    public CoolingWaterFailureInput? CoolingWaterFailure { get; init; }

    /// <summary>A fraction of the final discharge gas returned to the first stage's suction, cooled or not.</summary>
    public RecycleInput? Recycle { get; init; }
}

/// <summary>A hot day.</summary>
public sealed record HotDayInput
{
    /// <summary>Rise of the first stage's suction temperature (and of any later stage's own suction temperature), a difference, e.g. "10 K".</summary>
    public QuantityInput? SuctionTemperatureRise { get; init; }

    /// <summary>Rise of the intercoolers' coolant (their gas outlet rises with it), a difference, e.g. "5 K"; absent: coolers unchanged.</summary>
    public QuantityInput? CoolantTemperatureRise { get; init; }
}

/// <summary>Fouled intercoolers.</summary>
public sealed record FouledCoolerInput
{
    /// <summary>The stages whose cooler (before them) is fouled, zero-based; absent: every stage with a cooler.</summary>
    public IReadOnlyList<int>? Stages { get; init; }

    /// <summary>Rise of the approach (gas outlet over coolant), a difference, e.g. "8 K"; a cooler given by its outlet temperature has that outlet raised by as much.</summary>
    public QuantityInput? ApproachRise { get; init; }
}

/// <summary>Cooling water lost to intercoolers.</summary>
public sealed record CoolingWaterFailureInput
{
    /// <summary>The stages whose cooler (before them) has lost its cooling, zero-based; absent: every stage with a cooler.</summary>
    public IReadOnlyList<int>? Stages { get; init; }
}

/// <summary>Recycle from the final discharge to the first stage's suction, mixed at the suction pressure.</summary>
public sealed record RecycleInput
{
    /// <summary>The recycled share of the first stage's suction mass flow, in [0, 1).</summary>
    public double? Fraction { get; init; }

    /// <summary>Temperature of the recycled gas after its cooler; absent: returned uncooled at the final discharge temperature.</summary>
    public QuantityInput? CooledTo { get; init; }
}

/// <summary>The site: its id and either its barometric pressure or its elevation.</summary>
public sealed record SiteInput
{
    /// <summary>Site id; selects rules/sites/&lt;id&gt;.yaml when present.</summary>
    public string? Id { get; init; }

    /// <summary>Elevation above mean sea level (e.g. "350 m"); the ISO 2533 atmosphere gives the barometric pressure.</summary>
    public QuantityInput? Elevation { get; init; }

    /// <summary>Barometric pressure (absolute by nature; plain units, e.g. "98.6 kPa").</summary>
    public QuantityInput? BarometricPressure { get; init; }
}

/// <summary>The gas: a preset or a composition; optionally humid.</summary>
public sealed record GasInput
{
    /// <summary>Preset id (see <c>GET /v1/gases</c>).</summary>
    public string? Preset { get; init; }

    /// <summary>Fractions keyed by species formula or plain name, summing to 1 within 1e-4.</summary>
    public IReadOnlyDictionary<string, double>? Composition { get; init; }

    /// <summary>mole (default) or mass.</summary>
    public string? Basis { get; init; }

    /// <summary>Relative humidity at first-stage suction, a fraction 0–1.</summary>
    public double? RelativeHumidity { get; init; }

    /// <summary>Water dew point at first-stage suction pressure (instead of a relative humidity).</summary>
    public QuantityInput? DewPoint { get; init; }
}

/// <summary>Flow through the first stage: a mass flow or a standard volume flow with its reference conditions.</summary>
public sealed record FlowInput
{
    /// <summary>Mass flow, e.g. "2.5 kg/s".</summary>
    public QuantityInput? Mass { get; init; }

    /// <summary>Standard volume flow, e.g. "1200 m³/h".</summary>
    public QuantityInput? StandardVolume { get; init; }

    /// <summary>Reference conditions of the standard volume: normal (0 °C, 101.325 kPa), iso-13443 (15 °C, 101.325 kPa) or us-60f (60 °F, 14.696 psia).</summary>
    public string? Reference { get; init; }
}

/// <summary>One stage.</summary>
public sealed record StageInput
{
    /// <summary>Suction state (first stage; a later stage gives either this or an intercooler).</summary>
    public SuctionInput? Suction { get; init; }

    /// <summary>Intercooler before this stage (later stages only).</summary>
    public IntercoolerInput? Intercooler { get; init; }

    /// <summary>
    /// A later stage fed directly by the previous stage's discharge, its cooler bypassed or out of service: the suction is
    /// the previous discharge temperature and pressure, less the intercooler's pressure drop when one is given (the
    /// cooler's temperatures are then not used). Refused on the first stage.
    /// </summary>
    public bool? FedDirectly { get; init; }

    /// <summary>Discharge state.</summary>
    public DischargeInput? Discharge { get; init; }

    /// <summary>Efficiency; absent means the compressor type's default from the rule file.</summary>
    public EfficiencyInput? Efficiency { get; init; }

    /// <summary>Compressor type, lubricant, valve and seal material (ids from the rule file's catalogues).</summary>
    public EquipmentInput? Equipment { get; init; }

    /// <summary>Operating data for set-point and cooling rules.</summary>
    public OperationInput? Operation { get; init; }

    /// <summary>Measured values.</summary>
    public MeasuredInput? Measured { get; init; }

    /// <summary>
    /// A duty at which this machine was measured: what the measurement implies (an efficiency, or on a cooled stage an
    /// apparent polytropic exponent) is used for the proposed duty when the stage gives no efficiency of its own.
    /// </summary>
    public CalibrationInput? Calibration { get; init; }

    /// <summary>Injected oil of an oil-flooded machine (screw, vane): its mass flow and inlet temperature.</summary>
    public OilInjectionInput? OilInjection { get; init; }
}

/// <summary>A measured duty of the same machine: suction state, discharge pressure and the measured discharge temperature.</summary>
public sealed record CalibrationInput
{
    /// <summary>Suction state at the measured duty.</summary>
    public SuctionInput? Suction { get; init; }

    /// <summary>Discharge pressure at the measured duty.</summary>
    public DischargeInput? Discharge { get; init; }

    /// <summary>Discharge temperature measured at that duty.</summary>
    public QuantityInput? MeasuredDischargeTemperature { get; init; }
}

/// <summary>Oil injected into an oil-flooded machine.</summary>
public sealed record OilInjectionInput
{
    /// <summary>Oil mass flow, e.g. "2.4 kg/s" (needs the request's flow so the oil-to-gas ratio is known).</summary>
    public QuantityInput? Flow { get; init; }

    /// <summary>Oil temperature at injection (after the thermostatic valve and cooler), e.g. "60 °C".</summary>
    public QuantityInput? InletTemperature { get; init; }

    /// <summary>
    /// The package's shaft power at this duty, e.g. "37 kW" (data sheet or measured). With the request's flow it gives the
    /// specific work that heats gas and oil; it takes the place of an efficiency. Needs the request's flow.
    /// </summary>
    public QuantityInput? ShaftPower { get; init; }
}

/// <summary>Suction state.</summary>
public sealed record SuctionInput
{
    /// <summary>Suction pressure with its basis, e.g. "1.5 barg" or "250 kPa(a)".</summary>
    public QuantityInput? Pressure { get; init; }

    /// <summary>Suction temperature, e.g. "35 °C".</summary>
    public QuantityInput? Temperature { get; init; }
}

/// <summary>Intercooler: an outlet temperature, or an approach over a coolant temperature; and a pressure drop.</summary>
public sealed record IntercoolerInput
{
    /// <summary>Gas outlet temperature.</summary>
    public QuantityInput? OutletTemperature { get; init; }

    /// <summary>Approach of the gas outlet over the coolant temperature (a difference, e.g. "10 K").</summary>
    public QuantityInput? Approach { get; init; }

    /// <summary>Coolant inlet temperature (with an approach).</summary>
    public QuantityInput? CoolantTemperature { get; init; }

    /// <summary>Pressure drop through cooler and separator: a difference ("20 kPa") or a percentage of the upstream pressure ("2 %").</summary>
    public QuantityInput? PressureDrop { get; init; }
}

/// <summary>Discharge state.</summary>
public sealed record DischargeInput
{
    /// <summary>Discharge pressure with its basis.</summary>
    public QuantityInput? Pressure { get; init; }
}

/// <summary>An isentropic or a polytropic efficiency (one of the two), with an optional uncertainty in absolute points.</summary>
public sealed record EfficiencyInput
{
    /// <summary>Isentropic efficiency, 0–1.</summary>
    public double? Isentropic { get; init; }

    /// <summary>Polytropic efficiency, 0–1.</summary>
    public double? Polytropic { get; init; }

    /// <summary>Uncertainty in absolute points (0.03 means ±0.03).</summary>
    public double? Uncertainty { get; init; }
}

/// <summary>Equipment ids from the active rule set's catalogues.</summary>
public sealed record EquipmentInput
{
    /// <summary>Compressor type id.</summary>
    public string? CompressorType { get; init; }

    /// <summary>Lubricant id.</summary>
    public string? Lubricant { get; init; }

    /// <summary>Valve material id.</summary>
    public string? ValveMaterial { get; init; }

    /// <summary>Seal elastomer id.</summary>
    public string? SealMaterial { get; init; }

    /// <summary>Piston ring, rider band and packing material id (non-lubricated cylinders), from the catalogue's ring materials.</summary>
    public string? RingMaterial { get; init; }

    /// <summary>Valve spring material id, from the catalogue's spring materials (for the sour-service rule).</summary>
    public string? SpringMaterial { get; init; }

    /// <summary>
    /// Discharge-side pressure-part material (piping, vessels): carbon-steel, c-0.5mo, 1.25cr-0.5mo, 2.25cr-1mo or
    /// stainless. Used by the hydrogen-attack and wet-CO2 rules.
    /// </summary>
    public string? DischargeMaterial { get; init; }

    /// <summary>
    /// The lowest maximum allowable working temperature on the stage's discharge side (cylinder or casing, pulsation
    /// bottles, piping, cooler, relief system), e.g. "175 °C".
    /// </summary>
    public QuantityInput? DesignTemperature { get; init; }
}

/// <summary>Operating data.</summary>
public sealed record OperationInput
{
    /// <summary>Normal operating discharge temperature (for proposed alarm and trip set points).</summary>
    public QuantityInput? NormalDischargeTemperature { get; init; }

    /// <summary>Jacket coolant inlet temperature.</summary>
    public QuantityInput? CoolantInletTemperature { get; init; }

    /// <summary>Whether the stage runs unloaded for long periods.</summary>
    public bool? UnloadedRunning { get; init; }
}

/// <summary>Measured values.</summary>
public sealed record MeasuredInput
{
    /// <summary>Measured discharge temperature.</summary>
    public QuantityInput? DischargeTemperature { get; init; }
}
