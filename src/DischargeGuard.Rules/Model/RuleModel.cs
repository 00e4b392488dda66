using System.Globalization;
using UnitsNet;

namespace DischargeGuard.Rules.Model;

/// <summary>Where something was written: file (as the loader names it), 1-based line and column.</summary>
/// <param name="File">The file name relative to the rules directory, or the name given to the loader.</param>
/// <param name="Line">1-based line.</param>
/// <param name="Column">1-based column.</param>
public sealed record SourceLocation(string File, long Line, long Column)
{
    /// <inheritdoc />
    public override string ToString() => string.Create(CultureInfo.InvariantCulture, $"{File}:{Line}:{Column}");
}

/// <summary>A lubricant in the catalogue.</summary>
/// <param name="Id">Stable id.</param>
/// <param name="Title">Human title.</param>
/// <param name="BaseStock">Base stock (mineral, pao, diester, polyolester, pag, silicone, phosphate-ester).</param>
/// <param name="Class">Classification (e.g. "DIN 51506 VDL", "ISO 6743-3 DAB").</param>
/// <param name="FlashPoint">Flash point (open cup), if known.</param>
/// <param name="AutoignitionTemperature">Autoignition temperature at 1 atm, if known.</param>
/// <param name="RatedMaxDischarge">Maximum discharge temperature the class or maker rates the oil for, if known.</param>
/// <param name="Basis">Where the numbers come from.</param>
public sealed record Lubricant(string Id, string Title, string BaseStock, string? Class, Temperature? FlashPoint,
    Temperature? AutoignitionTemperature, Temperature? RatedMaxDischarge, string Basis);

/// <summary>What a material is used for.</summary>
public enum MaterialUse
{
    /// <summary>Valve plates, rings, poppets.</summary>
    Valve,
    /// <summary>Gas-wetted seal elastomers (O-rings).</summary>
    Seal,
    /// <summary>Piston rings, rider bands and packing rings of non-lubricated cylinders.</summary>
    Ring,
    /// <summary>Valve springs.</summary>
    Spring,
}

/// <summary>A valve, seal or ring material in the catalogue.</summary>
/// <param name="Id">Stable id.</param>
/// <param name="Title">Human title.</param>
/// <param name="Use">Valve or seal.</param>
/// <param name="ContinuousLimit">Continuous-service temperature limit; null means no temperature check applies (e.g. metal plates).</param>
/// <param name="Basis">Where the number comes from.</param>
/// <param name="OxygenCompatible">
/// Whether the material is suited to oxygen-rich service; null when the catalogue does not say (a rule that needs it
/// then lists the material as not checked).
/// </param>
/// <param name="SourService">
/// Whether the material is qualified for sour (H2S) service (NACE MR0175 / ISO 15156 for metals, an H2S-resistant
/// compound for elastomers); null when the catalogue does not say.
/// </param>
/// <param name="RgdRated">Whether an elastomer grade is rated for rapid gas decompression; null when the catalogue does not say.</param>
public sealed record Material(string Id, string Title, MaterialUse Use, Temperature? ContinuousLimit, string Basis, bool? OxygenCompatible = null,
    bool? SourService = null, bool? RgdRated = null);

/// <summary>How a default efficiency is defined.</summary>
public enum EfficiencyKind
{
    /// <summary>Isentropic (adiabatic) efficiency.</summary>
    Isentropic,
    /// <summary>Polytropic efficiency.</summary>
    Polytropic,
    /// <summary>No efficiency applies (oil-flooded screws: the oil sets the temperature).</summary>
    NotApplicable,
}

/// <summary>A compressor type in the catalogue.</summary>
/// <param name="Id">Stable id.</param>
/// <param name="Title">Human title.</param>
/// <param name="Family">reciprocating, screw, centrifugal, scroll, vane, …</param>
/// <param name="Lubricated">Whether the gas path is lubricated.</param>
/// <param name="EfficiencyKind">Kind of the default efficiency.</param>
/// <param name="DefaultEfficiency">The efficiency used when a request gives none (0–1], null when not applicable.</param>
/// <param name="EfficiencyBasis">Where the default efficiency comes from.</param>
/// <param name="PredictionIsUpperBound">Whether an adiabatic prediction is only an upper bound for this type (oil-flooded screws).</param>
public sealed record CompressorType(string Id, string Title, string Family, bool Lubricated, EfficiencyKind EfficiencyKind,
    double? DefaultEfficiency, string EfficiencyBasis, bool PredictionIsUpperBound)
{
    /// <summary>
    /// Pressure lost across each valve as a fraction of the line pressure (suction and discharge valve alike), for the
    /// internal cylinder ratio r_int = r·(1 + a)/(1 − a); null when the type has none (no <c>isentropicInternal</c>).
    /// </summary>
    public ValveLossAllowance? ValveLoss { get; init; }

    /// <summary>The package's oil injection when the request states none (oil-flooded machines); null when the type injects no oil.</summary>
    public OilInjectionDefault? OilInjection { get; init; }
}

/// <summary>A valve-loss allowance for the internal cylinder ratio.</summary>
/// <param name="PerValveFraction">Pressure lost per valve as a fraction of the line pressure, [0, 0.5).</param>
/// <param name="Basis">Where it comes from.</param>
public sealed record ValveLossAllowance(double PerValveFraction, string Basis);

/// <summary>A package's oil injection, for oil-flooded machines when the request gives none.</summary>
/// <param name="OilToGasMassRatio">Oil mass flow over gas mass flow, dimensionless, &gt; 0.</param>
/// <param name="InletTemperature">Oil temperature at injection (the thermostatic valve's set point).</param>
/// <param name="Basis">Where the numbers come from.</param>
public sealed record OilInjectionDefault(double OilToGasMassRatio, Temperature InletTemperature, string Basis);

/// <summary>How a service class is recognised.</summary>
public enum ServiceDetection
{
    /// <summary>The caller declares it.</summary>
    Declared,
    /// <summary>Detected when the gas molar mass is at or below a threshold.</summary>
    MolarMassAtMost,
    /// <summary>
    /// Detected when the dry-basis O2 mole fraction is above a threshold (and, when an upper bound is given, below it).
    /// </summary>
    OxygenFractionAbove,
    /// <summary>Detected when the dry-basis mole fraction of a named species is above a threshold.</summary>
    SpeciesFractionAbove,
    /// <summary>Detected when the partial pressure of a named species at discharge (wet gas, absolute) is above a threshold.</summary>
    PartialPressureAbove,
}

/// <summary>A service class in the catalogue.</summary>
/// <param name="Id">Stable id.</param>
/// <param name="Title">Human title.</param>
/// <param name="Detection">How it is recognised.</param>
/// <param name="MolarMassThreshold">Threshold for <see cref="ServiceDetection.MolarMassAtMost"/>.</param>
/// <param name="OxygenFractionThreshold">Threshold for <see cref="ServiceDetection.OxygenFractionAbove"/> (dry basis, exclusive).</param>
/// <param name="Basis">Where the threshold comes from.</param>
/// <param name="OxygenFractionBelow">Optional exclusive upper bound of the dry-basis O2 mole fraction (oxygen-depleted gases).</param>
/// <param name="Species">The species id (formula) for <see cref="ServiceDetection.SpeciesFractionAbove"/> and <see cref="ServiceDetection.PartialPressureAbove"/>.</param>
/// <param name="SpeciesFractionThreshold">Threshold for <see cref="ServiceDetection.SpeciesFractionAbove"/> (dry basis, exclusive).</param>
/// <param name="PartialPressureThreshold">Threshold for <see cref="ServiceDetection.PartialPressureAbove"/> (absolute, exclusive).</param>
public sealed record ServiceClass(string Id, string Title, ServiceDetection Detection, MolarMass? MolarMassThreshold,
    Ratio? OxygenFractionThreshold, string Basis, Ratio? OxygenFractionBelow = null, string? Species = null,
    Ratio? SpeciesFractionThreshold = null, Pressure? PartialPressureThreshold = null);

/// <summary>What a rule applies to. Empty lists mean "any". All criteria must hold.</summary>
public sealed record AppliesTo
{
    /// <summary>Compressor type ids (any of).</summary>
    public IReadOnlyList<string> CompressorTypes { get; init; } = [];
    /// <summary>Compressor type ids excluded.</summary>
    public IReadOnlyList<string> NotCompressorTypes { get; init; } = [];
    /// <summary>Service class ids (any of).</summary>
    public IReadOnlyList<string> ServiceClasses { get; init; } = [];
    /// <summary>Service class ids excluded.</summary>
    public IReadOnlyList<string> NotServiceClasses { get; init; } = [];
    /// <summary>Lubricant base stocks (any of).</summary>
    public IReadOnlyList<string> BaseStocks { get; init; } = [];
    /// <summary>Valve material ids (any of).</summary>
    public IReadOnlyList<string> ValveMaterials { get; init; } = [];
    /// <summary>Seal material ids (any of).</summary>
    public IReadOnlyList<string> SealMaterials { get; init; } = [];
    /// <summary>Stage positions (any of).</summary>
    public IReadOnlyList<StagePosition> StagePositions { get; init; } = [];
    /// <summary>When set, the rule applies only when the unloaded-running flag has this value (the flag is then a required input).</summary>
    public bool? UnloadedRunning { get; init; }
    /// <summary>When set, the rule applies only to compressor types whose gas path is (true) or is not (false) lubricated.</summary>
    public bool? Lubricated { get; init; }
    /// <summary>
    /// When set, the rule applies only when the stage is (true) or is not (false) cooled: a jacket coolant temperature
    /// stated, or a compressor type whose injected oil or liquid removes heat.
    /// </summary>
    public bool? Cooled { get; init; }
    /// <summary>When set, the rule applies only when the valve material's oxygen compatibility has this value.</summary>
    public bool? ValveMaterialOxygenCompatible { get; init; }
    /// <summary>When set, the rule applies only when the seal material's oxygen compatibility has this value.</summary>
    public bool? SealMaterialOxygenCompatible { get; init; }
    /// <summary>When set, the rule applies only when the valve material's sour-service qualification has this value.</summary>
    public bool? ValveMaterialSourService { get; init; }
    /// <summary>When set, the rule applies only when the valve spring material's sour-service qualification has this value.</summary>
    public bool? SpringMaterialSourService { get; init; }
    /// <summary>When set, the rule applies only when the seal material's sour-service qualification has this value.</summary>
    public bool? SealMaterialSourService { get; init; }
    /// <summary>When set, the rule applies only when the seal material's rapid-gas-decompression rating has this value.</summary>
    public bool? SealMaterialRgdRated { get; init; }
    /// <summary>Discharge-side pressure-part materials (any of): carbon-steel, c-0.5mo, 1.25cr-0.5mo, 2.25cr-1mo, stainless.</summary>
    public IReadOnlyList<string> DischargeMaterials { get; init; } = [];
    /// <summary>
    /// Species id → partial pressure at discharge (wet gas, absolute), Pa: the rule applies when any listed species is
    /// above its threshold. Empty means any.
    /// </summary>
    public IReadOnlyDictionary<string, double> PartialPressureAbovePascals { get; init; } = new Dictionary<string, double>();
    /// <summary>When set, the rule applies only when the discharge pressure (absolute) is above this value, Pa.</summary>
    public double? DischargePressureAbovePascals { get; init; }
    /// <summary>
    /// When set, the rule applies only when the O2 partial pressure at discharge is above this value, Pa (an oxidant is
    /// present: air, oxygen-depleted air, oxygen-bearing process gases).
    /// </summary>
    public double? OxygenPartialPressureAbovePascals { get; init; }
    /// <summary>The models whose answer the rule applies to ("ideal-gas", "peng-robinson", "gerg-2008", or "real-gas" for either real-gas model); empty means any.</summary>
    public IReadOnlyList<string> DecidedBy { get; init; } = [];
    /// <summary>The phases at the stage's suction the rule applies to; empty means any.</summary>
    public IReadOnlyList<StagePhase> SuctionPhases { get; init; } = [];
    /// <summary>The phases at the stage's discharge the rule applies to; empty means any.</summary>
    public IReadOnlyList<StagePhase> DischargePhases { get; init; } = [];
}

/// <summary>Where a catalogue- or input-derived limit takes its base value from.</summary>
public enum LimitSource
{
    /// <summary>An absolute value written in the rule.</summary>
    Absolute,
    /// <summary>lubricant.ratedMaxDischarge</summary>
    LubricantRatedMaxDischarge,
    /// <summary>lubricant.autoignitionTemperature (at 1 atm)</summary>
    LubricantAutoignition,
    /// <summary>lubricant.flashPoint</summary>
    LubricantFlashPoint,
    /// <summary>valveMaterial.continuousLimit</summary>
    ValveMaterialLimit,
    /// <summary>sealMaterial.continuousLimit</summary>
    SealMaterialLimit,
    /// <summary>ringMaterial.continuousLimit (rings, rider bands and packing of non-lubricated cylinders)</summary>
    RingMaterialLimit,
    /// <summary>input.suctionTemperature</summary>
    InputSuctionTemperature,
    /// <summary>input.dischargeWaterDewPoint</summary>
    InputDischargeWaterDewPoint,
    /// <summary>input.designTemperature: the lowest maximum allowable working temperature on the stage's discharge side.</summary>
    InputDesignTemperature,
    /// <summary>max(atLeast, fraction × estimated absolute temperature) — the deviation rule.</summary>
    GreaterOfFixedAndFractionOfPredicted,
}

/// <summary>
/// A rule's limit. Values are SI: kelvin for temperatures and temperature differences, plain numbers for ratios.
/// The effective limit is base − deratingForPressure − margin + plus (catalogue and input sources),
/// the absolute value, or max(atLeast, fraction × T_estimated) for the deviation form.
/// </summary>
/// <param name="Source">Where the base value comes from.</param>
/// <param name="Absolute">The absolute value (K or ratio) when <paramref name="Source"/> is Absolute.</param>
/// <param name="DeratingForPressureKelvin">Subtracted for the effect of pressure (autoignition).</param>
/// <param name="MarginKelvin">Subtracted as a safety margin.</param>
/// <param name="PlusKelvin">Added (input-derived lower limits).</param>
/// <param name="AtLeastKelvin">Deviation form: the fixed part.</param>
/// <param name="FractionOfPredicted">Deviation form: fraction of the estimated absolute temperature.</param>
public sealed record RuleLimit(LimitSource Source, double? Absolute = null, double DeratingForPressureKelvin = 0, double MarginKelvin = 0,
    double PlusKelvin = 0, double AtLeastKelvin = 0, double FractionOfPredicted = 0)
{
    /// <summary>The offset from the base value (for comparisons between two limits from the same source).</summary>
    public double Offset => Source == LimitSource.Absolute ? Absolute ?? 0 : PlusKelvin - DeratingForPressureKelvin - MarginKelvin;

    /// <summary>
    /// The limit as the rule file states it, for display: first the reading whose value <see cref="Absolute"/> holds in
    /// SI, then, when the file gives one, the source's own equivalent in the other unit system (<c>150 °C (300 °F)</c>
    /// gives (150, "°C") and (300, "°F")). Empty for derived limits and ratios. Never used by a check.
    /// </summary>
    public IReadOnlyList<StatedValue> AsStated { get; init; } = [];

    /// <summary>Value equality, the stated readings compared element by element.</summary>
    /// <param name="other">The other limit.</param>
    /// <returns>Whether both are the same limit stated the same way.</returns>
    public bool Equals(RuleLimit? other) =>
        other is not null && Source == other.Source && Nullable.Equals(Absolute, other.Absolute)
        && DeratingForPressureKelvin.Equals(other.DeratingForPressureKelvin) && MarginKelvin.Equals(other.MarginKelvin)
        && PlusKelvin.Equals(other.PlusKelvin) && AtLeastKelvin.Equals(other.AtLeastKelvin)
        && FractionOfPredicted.Equals(other.FractionOfPredicted) && AsStated.SequenceEqual(other.AsStated);

    /// <inheritdoc />
    public override int GetHashCode() =>
        HashCode.Combine(Source, Absolute, DeratingForPressureKelvin, MarginKelvin, PlusKelvin, AtLeastKelvin, FractionOfPredicted, AsStated.Count);
}

/// <summary>
/// A number with the unit a rule file states it in, as its source gives it (e.g. 300 and "°F"), for display. Checks
/// never read it: they use the SI value of the limit.
/// </summary>
/// <param name="Value">The number as written, in <paramref name="Unit"/>.</param>
/// <param name="Unit">
/// The unit's symbol: "K", "°C", "°F" or "°R" for an absolute temperature; "K", "Δ°C", "Δ°F" or "Δ°R" for a temperature
/// difference (ASCII spellings such as degF are normalised to these).
/// </param>
public sealed record StatedValue(double Value, string Unit)
{
    /// <summary>The reading as text, invariant culture: "300 °F".</summary>
    /// <returns>The text.</returns>
    public override string ToString() => Value.ToString("R", CultureInfo.InvariantCulture) + " " + Unit;
}

/// <summary>One set-point step: normal + min(fraction × normal in °C, atMost).</summary>
/// <param name="Fraction">Fraction of the normal temperature on the Celsius scale.</param>
/// <param name="AtMostKelvin">Cap on the step.</param>
public sealed record SetPointStep(double Fraction, double AtMostKelvin);

/// <summary>
/// How a trend rule reads the asset's history: the newest <paramref name="Evaluations"/> evaluations (this one
/// included) whose suction and discharge pressures are each within <paramref name="SteadyPressureFraction"/> of this
/// one's, at least three of them.
/// </summary>
/// <param name="Evaluations">Window length, 3 to 50 evaluations.</param>
/// <param name="SteadyPressureFraction">Largest relative difference of either absolute pressure that still counts as steady.</param>
public sealed record TrendSpec(int Evaluations, double SteadyPressureFraction)
{
    /// <summary>Fewest evaluations a trend is fitted through.</summary>
    public const int MinimumEvaluations = 3;

    /// <summary>Longest window a rule may ask for.</summary>
    public const int MaximumEvaluations = 50;
}

/// <summary>The set-point proposal form of a rule.</summary>
/// <param name="Alarm">Alarm step.</param>
/// <param name="Trip">Trip step.</param>
/// <param name="MinimumStepKelvin">
/// The smallest step between normal and alarm and between alarm and trip, K: an alarm is always above normal and a
/// trip always above the alarm.
/// </param>
public sealed record SetPointSpec(SetPointStep Alarm, SetPointStep Trip, double MinimumStepKelvin = 0);

/// <summary>An engineer's sign-off on a limit that the defaults leave unset (special services).</summary>
/// <param name="ApprovedBy">Name or staff id of the approving engineer.</param>
/// <param name="ApprovedOn">Date of approval.</param>
/// <param name="Reference">Document or management-of-change reference, optional.</param>
public sealed record SignOff(string ApprovedBy, DateOnly ApprovedOn, string? Reference);

/// <summary>A rule as written in one layer, or as merged.</summary>
public sealed record RuleDefinition
{
    /// <summary>Stable id (e.g. R-API618-GEN).</summary>
    public required string Id { get; init; }
    /// <summary>Title.</summary>
    public required string Title { get; init; }
    /// <summary>What it applies to.</summary>
    public required AppliesTo AppliesTo { get; init; }
    /// <summary>The quantities checked; when several, each available one is checked and the smallest margin reported.</summary>
    public required IReadOnlyList<CheckedQuantity> Quantities { get; init; }
    /// <summary>Upper or lower limit.</summary>
    public LimitDirection Direction { get; init; } = LimitDirection.Upper;
    /// <summary>The limit; null for notes, set-point proposals and limits that a site or asset layer must set.</summary>
    public RuleLimit? Limit { get; init; }
    /// <summary>Warning band inside the limit (K, or a ratio), 0 for none.</summary>
    public double WarningBand { get; init; }
    /// <summary>The most severe outcome of the rule.</summary>
    public required Severity Severity { get; init; }
    /// <summary>The basis: standard and clause, handbook, "common practice, no single source", or "from memory — verify".</summary>
    public required string Basis { get; init; }
    /// <summary>The message, which defers to local codes and the manufacturer.</summary>
    public required string Message { get; init; }
    /// <summary>True when no default limit exists and a site or asset layer must set and sign off one.</summary>
    public bool RequiresSignedLimit { get; init; }
    /// <summary>
    /// True for a prohibited combination: wherever the rule applies it is a violation with no number, and no layer may
    /// override, loosen or disable it.
    /// </summary>
    public bool Prohibited { get; init; }
    /// <summary>The set-point proposal form, for R-SETPOINTS.</summary>
    public SetPointSpec? SetPoints { get; init; }
    /// <summary>The history window, for the <see cref="CheckedQuantity.MeasuredMinusPredictedRise"/> quantity.</summary>
    public TrendSpec? Trend { get; init; }
    /// <summary>The layer that set the effective limit.</summary>
    public string LimitLayer { get; init; } = "default";
    /// <summary>Why the limit was loosened, when a layer loosened it.</summary>
    public string? LoosenedReason { get; init; }
    /// <summary>The sign-off of a limit a layer set on a special-service rule.</summary>
    public SignOff? SignOff { get; init; }
    /// <summary>Where it was defined.</summary>
    public SourceLocation? Location { get; init; }
    /// <summary>
    /// Every layer that touched the rule, lowest first: the one that defined it (with its own basis), then each override
    /// with what it changed. Provenance only: the merged digest covers the effective values, not this list.
    /// </summary>
    public IReadOnlyList<RuleChange> Chain { get; init; } = [];
}

/// <summary>What one layer did to a rule.</summary>
/// <param name="Layer">"default", "site:&lt;id&gt;" or "asset:&lt;tag&gt;".</param>
/// <param name="File">The layer's file, relative to the rules directory.</param>
/// <param name="Change">What it changed, in a plain sentence ("tightened the limit from 177 °C to 170 °C").</param>
/// <param name="Limit">The limit after this layer (text with units, see <see cref="LimitText"/>).</param>
/// <param name="WarningBand">The warning band after this layer (text with units).</param>
/// <param name="Basis">The basis this layer gave: a defining layer's rule basis, an override's <c>basis</c>; null when it gave none.</param>
/// <param name="Reason">The reason it gave (required to loosen or disable).</param>
/// <param name="SignOff">Its sign-off, when it gave one.</param>
public sealed record RuleChange(string Layer, string File, string Change, string Limit, string WarningBand, string? Basis, string? Reason, SignOff? SignOff);

/// <summary>A change a site or asset layer makes to a rule defined below it.</summary>
public sealed record RuleOverride
{
    /// <summary>The rule id.</summary>
    public required string RuleId { get; init; }
    /// <summary>A new limit, or null to keep.</summary>
    public RuleLimit? Limit { get; init; }
    /// <summary>A new warning band, or null to keep.</summary>
    public double? WarningBand { get; init; }
    /// <summary>Disable the rule (needs a reason).</summary>
    public bool Disabled { get; init; }
    /// <summary>Why: required to loosen or disable.</summary>
    public string? Reason { get; init; }
    /// <summary>Where the new limit comes from (a maker's data sheet, a purchase specification); optional, shown as the rule's basis.</summary>
    public string? Basis { get; init; }
    /// <summary>Sign-off, required when setting a limit on a special-service rule.</summary>
    public SignOff? SignOff { get; init; }
    /// <summary>Where the override was written.</summary>
    public required SourceLocation Location { get; init; }

    /// <summary>The raw mapping: the limit's form depends on the rule's quantity, known only when layers merge.</summary>
    internal Loading.MapView? Raw { get; init; }
}

/// <summary>A rule disabled by a layer.</summary>
/// <param name="RuleId">The rule.</param>
/// <param name="Layer">The layer that disabled it.</param>
/// <param name="Reason">Why.</param>
public sealed record DisabledRule(string RuleId, string Layer, string Reason)
{
    /// <summary>Every layer that touched the rule, lowest first, ending with the one that disabled it.</summary>
    public IReadOnlyList<RuleChange> Chain { get; init; } = [];
}

/// <summary>One parsed rule file.</summary>
public sealed record RuleLayer
{
    /// <summary>File name as given to the loader.</summary>
    public required string File { get; init; }
    /// <summary>Default, site or asset.</summary>
    public required LayerKind Kind { get; init; }
    /// <summary>"default", the site id, or the asset tag.</summary>
    public required string Id { get; init; }
    /// <summary>For an asset layer, the site it belongs to (optional).</summary>
    public string? Site { get; init; }
    /// <summary>Title.</summary>
    public string? Title { get; init; }
    /// <summary>The layer's name as findings show it: "default", "site:&lt;id&gt;", "asset:&lt;tag&gt;".</summary>
    public string Name => Kind switch { LayerKind.Default => "default", LayerKind.Site => "site:" + Id, _ => "asset:" + Id };
    /// <summary>Service classes defined here.</summary>
    public IReadOnlyList<ServiceClass> ServiceClasses { get; init; } = [];
    /// <summary>Lubricants defined here.</summary>
    public IReadOnlyList<Lubricant> Lubricants { get; init; } = [];
    /// <summary>Materials defined here.</summary>
    public IReadOnlyList<Material> Materials { get; init; } = [];
    /// <summary>Compressor types defined here.</summary>
    public IReadOnlyList<CompressorType> CompressorTypes { get; init; } = [];
    /// <summary>Rules defined here.</summary>
    public IReadOnlyList<RuleDefinition> Rules { get; init; } = [];
    /// <summary>Overrides of rules below.</summary>
    public IReadOnlyList<RuleOverride> Overrides { get; init; } = [];
    /// <summary>SHA-256 (lower-case hex) of this layer's canonical form.</summary>
    public string Digest { get; init; } = string.Empty;

    /// <summary>Where each id was written, keyed "section/id" (e.g. "rules/R-AIT").</summary>
    internal IReadOnlyDictionary<string, SourceLocation> IdLocations { get; init; } = new Dictionary<string, SourceLocation>();
}
