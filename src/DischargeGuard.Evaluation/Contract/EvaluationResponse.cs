namespace DischargeGuard.Evaluation.Contract;

/// <summary>A number with its unit, as every quantity in a response is written.</summary>
/// <param name="Value">The number.</param>
/// <param name="Unit">The unit token (see docs/units.md).</param>
public sealed record QuantityDto(double Value, string Unit);

/// <summary>The answer to one evaluation (<c>200</c> from <c>POST /v1/evaluations</c>).</summary>
public sealed record EvaluationResponse
{
    /// <summary>Evaluation id (UUIDv7); the audit record's key.</summary>
    public required Guid Id { get; init; }

    /// <summary>When the evaluation was made (UTC).</summary>
    public required DateTimeOffset EvaluatedAt { get; init; }

    /// <summary>pass, review or fail: the worst stage verdict.</summary>
    public required string Verdict { get; init; }

    /// <summary>The gas model the stages' answers rest on: ideal-gas, peng-robinson or gerg-2008 when every stage used the same one, else mixed.</summary>
    public required string Method { get; init; }

    /// <summary>Version of the engine that computed this answer.</summary>
    public required string EngineVersion { get; init; }

    /// <summary>The asset tag as given.</summary>
    public string? Asset { get; init; }

    /// <summary>The site id as given.</summary>
    public string? Site { get; init; }

    /// <summary>The merged rule set used: its digest and its layers.</summary>
    public required RuleSetDto RuleSet { get; init; }

    /// <summary>The gas as evaluated.</summary>
    public required GasDto Gas { get; init; }

    /// <summary>Per stage.</summary>
    public required IReadOnlyList<StageDto> Stages { get; init; }

    /// <summary>
    /// The limit that decides the answer, by reference: the stage with the worst verdict and, among those, the smallest
    /// margin, its governing rule and that margin. The finding itself is listed once, under its stage.
    /// </summary>
    public GoverningSummaryDto? Governing { get; init; }

    /// <summary>The barometric pressure used to turn gauge pressures into absolute ones (from the site's barometric pressure or elevation).</summary>
    public QuantityDto? BarometricPressure { get; init; }

    /// <summary>How much the answer carries: <c>compact</c> (the default) or <c>full</c> (<c>?detail=full</c>: each rule's basis, the per-limit envelope, the gas models side by side).</summary>
    public string Detail { get; init; } = "compact";

    /// <summary>Cautions that always apply to this answer (and those its scenarios add).</summary>
    public required IReadOnlyList<string> Cautions { get; init; }

    /// <summary>The base case's verdict (its own stages' worst), given when the request named scenarios; <c>verdict</c> is then the worst of base and scenarios.</summary>
    public string? BaseVerdict { get; init; }

    /// <summary>The scenarios, evaluated on the same rules as the base case, each with its own verdict, governing rule and stages.</summary>
    public IReadOnlyList<ScenarioDto>? Scenarios { get; init; }

    /// <summary>
    /// The whole train's envelope (base case): the highest final discharge pressure and the lowest first-stage suction
    /// pressure before a governing limit anywhere in the train, the interstage pressures redistributed; given when the
    /// request states <c>trainEnvelopeSplit</c>. Each stage's own <c>envelope</c> moves that stage alone, the other stages held fixed.
    /// </summary>
    public TrainEnvelopeDto? TrainEnvelope { get; init; }
}

/// <summary>One scenario's answer, in the same compact shape as the base case.</summary>
/// <param name="Name">The scenario's name as requested.</param>
/// <param name="Changes">What the scenario changed, in words (the recycle's mixed suction temperature included).</param>
/// <param name="Verdict">pass, review or fail: the scenario's worst stage.</param>
/// <param name="Method">The gas model its stages rest on.</param>
/// <param name="Governing">The scenario's governing limit, by reference to its stage.</param>
/// <param name="Stages">Its stages.</param>
public sealed record ScenarioDto(string Name, IReadOnlyList<string> Changes, string Verdict, string Method, GoverningSummaryDto? Governing, IReadOnlyList<StageDto> Stages);

/// <summary>The train's envelope.</summary>
/// <param name="Split">stated (each stage keeps its share of the overall ratio, in logarithms) or equal (equal stage ratios).</param>
/// <param name="MaxFinalDischargePressure">Highest absolute final discharge pressure before a limit, first-stage suction pressure held.</param>
/// <param name="MinSuctionPressure">Lowest absolute first-stage suction pressure before a limit, final discharge pressure held.</param>
public sealed record TrainEnvelopeDto(string Split, TrainBoundDto MaxFinalDischargePressure, TrainBoundDto MinSuctionPressure)
{
    /// <summary>What the train's envelope holds while it moves the pressures: <c>temperatures-and-efficiencies</c> (suction and cooler temperatures, efficiencies, gas and rules).</summary>
    public string HeldFixed { get; init; } = "temperatures-and-efficiencies";
}

/// <summary>One bound of the train's envelope.</summary>
/// <param name="Pressure">The absolute pressure at the bound, when found.</param>
/// <param name="Status">found, already-exceeded (the limit is exceeded even at the nearest end of the range) or not-reachable-in-range.</param>
/// <param name="Stage">The stage whose limit is reached there.</param>
/// <param name="RuleId">The rule whose limit is reached there.</param>
public sealed record TrainBoundDto(QuantityDto? Pressure, string Status, int? Stage, string? RuleId);

/// <summary>A warning band widened for the model's own error.</summary>
/// <param name="WidenedBy">The widening (K or Δ°F): the equation of state's known error plus, on the estimate, the efficiency's stated uncertainty.</param>
/// <param name="Note">The widening in words, with its basis.</param>
public sealed record UncertaintyDto(QuantityDto WidenedBy, string Note);

/// <summary>Digest of the merged rule set and its layers, and plainly which layers applied.</summary>
/// <param name="Digest">SHA-256 (hex) over the normalised merged content.</param>
/// <param name="Layers">Layers in merge order.</param>
public sealed record RuleSetDto(string Digest, IReadOnlyList<LayerDto> Layers)
{
    /// <summary>
    /// The layers applied in a plain sentence: "layers applied: default ← site:marlow-fen ← asset:C-204B", followed for
    /// a site id or asset tag with no layer by "; no layer for asset C-204A: default and site rules only (nearest layer
    /// asset:C-204B not applied: a different asset)". Absent only in answers recorded before it existed.
    /// </summary>
    public string? Applied { get; init; }

    /// <summary>The request's site id or asset tag that selected no layer, each with the nearest layer not applied.</summary>
    public IReadOnlyList<UnmatchedLayerDto>? Unmatched { get; init; }

    /// <summary>The answer's rule set from a request's layer resolution.</summary>
    /// <param name="resolution">A resolution that was not refused.</param>
    /// <returns>The DTO.</returns>
    public static RuleSetDto Of(Rules.Provider.LayerResolution resolution)
    {
        ArgumentNullException.ThrowIfNull(resolution);
        var set = resolution.Set ?? throw new ArgumentException("The resolution was refused.", nameof(resolution));
        return new RuleSetDto(set.Digest, set.Layers.Select(l => new LayerDto(l.Name, l.Digest)).ToArray())
        {
            Applied = resolution.Applied,
            Unmatched = resolution.Unmatched.Count == 0 ? null
                : resolution.Unmatched.Select(u => new UnmatchedLayerDto(u.Field == Rules.Provider.LayerIdField.Site ? "site.id" : "asset", u.Id, u.NearestLayer, u.Message)).ToArray(),
        };
    }
}

/// <summary>A site id or asset tag of the request that selected no layer.</summary>
/// <param name="Field">The request path: <c>site.id</c> or <c>asset</c>.</param>
/// <param name="Id">The id as given.</param>
/// <param name="NearestLayer">The nearest layer (one or two characters away), which was not applied; null when none is that close.</param>
/// <param name="Message">"no layer for asset C-204A: default and site rules only (…)".</param>
public sealed record UnmatchedLayerDto(string Field, string Id, string? NearestLayer, string Message);

/// <summary>A rule layer.</summary>
/// <param name="Name">Layer name (default, site:&lt;id&gt;, asset:&lt;tag&gt;).</param>
/// <param name="Digest">SHA-256 (hex) of the layer's normalised content.</param>
public sealed record LayerDto(string Name, string Digest);

/// <summary>The answer's governing limit, by reference to the stage that holds its finding.</summary>
/// <param name="Stage">Zero-based index of the stage.</param>
/// <param name="RuleId">The governing rule (its finding is under <c>stages[stage].findings</c>).</param>
/// <param name="Margin">Its margin (negative when exceeded).</param>
public sealed record GoverningSummaryDto(int Stage, string RuleId, QuantityDto? Margin)
{
    /// <summary>The scenario that holds the governing stage (under <c>scenarios</c>); absent when the base case governs.</summary>
    public string? Scenario { get; init; }
}

/// <summary>The gas as evaluated (after humidity was added).</summary>
/// <param name="MolarMass">Molar mass.</param>
/// <param name="Composition">Mole fractions by species formula.</param>
/// <param name="ServiceClasses">Declared and detected service classes.</param>
/// <param name="Preset">The preset used, if any.</param>
public sealed record GasDto(QuantityDto MolarMass, IReadOnlyDictionary<string, double> Composition, IReadOnlyList<string> ServiceClasses, string? Preset);

/// <summary>One stage's results.</summary>
public sealed record StageDto
{
    /// <summary>0-based stage index.</summary>
    public required int Index { get; init; }

    /// <summary>pass, review or fail.</summary>
    public required string Verdict { get; init; }

    /// <summary>P2/P1 on absolute pressures.</summary>
    public required double PressureRatio { get; init; }

    /// <summary>Suction state (absolute pressure).</summary>
    public required StateDto Suction { get; init; }

    /// <summary>Discharge pressure (absolute).</summary>
    public required DischargeStateDto Discharge { get; init; }

    /// <summary>Efficiencies used and where they came from.</summary>
    public required EfficiencyDto Efficiency { get; init; }

    /// <summary>Predicted discharge temperatures; null when the stage was not evaluated (see <see cref="NotEvaluated"/>).</summary>
    public DischargeTemperatureDto? DischargeTemperature { get; init; }

    /// <summary>Estimated discharge minus suction temperature; null when the stage was not evaluated.</summary>
    public QuantityDto? TemperatureRise { get; init; }

    /// <summary>k and Z.</summary>
    public PropertiesDto? Properties { get; init; }

    /// <summary>Specific work; null when the stage was not evaluated.</summary>
    public SpecificWorkDto? SpecificWork { get; init; }

    /// <summary>Gas power, when a flow was given.</summary>
    public QuantityDto? Power { get; init; }

    /// <summary>Water dropped out before this stage, when any.</summary>
    public CondensateDto? Condensate { get; init; }

    /// <summary>The governing finding: the applicable violation limit with the smallest margin.</summary>
    public GoverningDto? Governing { get; init; }

    /// <summary>The operating envelope before the governing limit is reached, other stages held fixed.</summary>
    public EnvelopeDto? Envelope { get; init; }

    /// <summary>This stage's findings.</summary>
    public required IReadOnlyList<FindingDto> Findings { get; init; }

    /// <summary>Rules that applied but could not be checked, with the missing input.</summary>
    public required IReadOnlyList<NotCheckedDto> NotChecked { get; init; }

    /// <summary>ideal-gas, peng-robinson or gerg-2008: which model this stage's temperatures, work, envelope and curve come from (why: <c>methodReason</c>).</summary>
    public string Method { get; init; } = "ideal-gas";

    /// <summary>Why that model decided this stage (the request, GERG-2008's coverage and normal range, Peng-Robinson's switch criteria); absent for a stage that was not evaluated.</summary>
    public string? MethodReason { get; init; }

    /// <summary>Both models' answers, their difference, the switch criteria and the defaulted k_ij pairs.</summary>
    public RealGasDto? RealGas { get; init; }

    /// <summary>The measured discharge temperature and its deviation from the estimate, when one was given.</summary>
    public MeasuredDto? Measured { get; init; }

    /// <summary>Estimated and upper-bound temperature against discharge pressure (only with <c>?curve=true</c>).</summary>
    public IReadOnlyList<CurvePointDto>? Curve { get; init; }

    /// <summary>The phase at suction and discharge, the dew points and the superheat above them.</summary>
    public PhaseDto? Phase { get; init; }

    /// <summary>
    /// Why the stage has no discharge temperatures and no envelope (liquid or two-phase at suction); null when it was
    /// evaluated.
    /// </summary>
    public string? NotEvaluated { get; init; }
}

/// <summary>The phase check of one stage (Peng-Robinson tangent-plane stability on the water-free gas; water from its saturation pressure).</summary>
/// <param name="Suction">gas, saturated, two-phase or liquid, at the stage's suction (after any intercooler).</param>
/// <param name="Discharge">gas, saturated, two-phase or liquid, at the predicted discharge state; null when the stage was not evaluated.</param>
/// <param name="HydrocarbonDewPoint">The upper hydrocarbon dew point of the water-free gas at suction pressure; null where none exists.</param>
/// <param name="HydrocarbonDewPointNote">Why there is no hydrocarbon dew point ("above the cricondenbar", "no condensable component"), or null.</param>
/// <param name="WaterDewPoint">The water dew point at suction pressure; null for a dry gas.</param>
/// <param name="SuperheatAboveHydrocarbonDewPoint">Suction temperature minus the hydrocarbon dew point; negative inside the two-phase region.</param>
/// <param name="SuperheatAboveWaterDewPoint">Suction temperature minus the water dew point.</param>
public sealed record PhaseDto(string Suction, string? Discharge, QuantityDto? HydrocarbonDewPoint, string? HydrocarbonDewPointNote, QuantityDto? WaterDewPoint,
    QuantityDto? SuperheatAboveHydrocarbonDewPoint, QuantityDto? SuperheatAboveWaterDewPoint);

/// <summary>Isentropic and estimated discharge temperatures of one model (or their differences).</summary>
/// <param name="Isentropic">η = 1.</param>
/// <param name="Estimated">With the stage efficiency.</param>
public sealed record MethodTemperaturesDto(QuantityDto Isentropic, QuantityDto Estimated);

/// <summary>The real-gas view of a stage beside the ideal-gas one: GERG-2008 where it was computed (with Peng-Robinson as a second opinion), else Peng-Robinson.</summary>
/// <param name="Used">Whether the stage's answer uses the real gas.</param>
/// <param name="Recommended">Whether the switch criteria call for it (Z outside 0.97–1.03, or Pr &gt; 0.1 with Tr &lt; 1.5, or near the critical point).</param>
/// <param name="Reasons">Which criteria, in words.</param>
/// <param name="IdealGas">The ideal-gas temperatures.</param>
/// <param name="RealGasTemperatures">The real-gas model's temperatures (the model in <paramref name="Model"/>), when they could be computed.</param>
/// <param name="Difference">Real minus ideal (K or Δ°F).</param>
/// <param name="SuctionReducedPressure">P1 / Pc of the mixture (Kay's rule).</param>
/// <param name="DischargeReducedPressure">P2 / Pc of the mixture.</param>
/// <param name="DefaultedPairs">Species pairs whose k_ij was taken as 0 (no published value in the data).</param>
/// <param name="Note">Why the real gas could not be computed, when it could not; that a GERG-2008 state lies outside its normal range.</param>
/// <param name="Model">peng-robinson or gerg-2008: the model of <paramref name="RealGasTemperatures"/> and <paramref name="Difference"/>; null when none was computed.</param>
/// <param name="MethodReason">Why the stage's method was chosen (the request, GERG-2008's coverage and range, the switch criteria).</param>
/// <param name="PengRobinson">Peng-Robinson's temperatures as a second opinion where GERG-2008 decided.</param>
public sealed record RealGasDto(
    bool Used,
    bool Recommended,
    IReadOnlyList<string> Reasons,
    MethodTemperaturesDto IdealGas,
    MethodTemperaturesDto? RealGasTemperatures,
    MethodTemperaturesDto? Difference,
    double? SuctionReducedPressure,
    double? DischargeReducedPressure,
    IReadOnlyList<string> DefaultedPairs,
    string? Note,
    string? Model = null,
    string? MethodReason = null,
    MethodTemperaturesDto? PengRobinson = null);

/// <summary>A measured discharge temperature beside the prediction.</summary>
/// <param name="DischargeTemperature">As measured.</param>
/// <param name="MinusEstimated">Measured minus estimated discharge temperature (a difference: K or Δ°F).</param>
public sealed record MeasuredDto(QuantityDto DischargeTemperature, QuantityDto MinusEstimated);

/// <summary>A state with pressure and temperature.</summary>
/// <param name="PressureAbsolute">Absolute pressure.</param>
/// <param name="Temperature">Temperature.</param>
public sealed record StateDto(QuantityDto PressureAbsolute, QuantityDto Temperature)
{
    /// <summary>The pressure in the unit and basis the caller typed (a gauge pressure stays gauge, with the answer's barometricPressure).</summary>
    public QuantityDto? PressureAsTyped { get; init; }
}

/// <summary>The discharge state.</summary>
/// <param name="PressureAbsolute">Absolute pressure.</param>
public sealed record DischargeStateDto(QuantityDto PressureAbsolute)
{
    /// <summary>The pressure in the unit and basis the caller typed (a gauge pressure stays gauge, with the answer's barometricPressure).</summary>
    public QuantityDto? PressureAsTyped { get; init; }
}

/// <summary>Efficiencies.</summary>
/// <param name="Isentropic">Isentropic efficiency (given, default or equivalent).</param>
/// <param name="Polytropic">Polytropic efficiency (given, default or equivalent).</param>
/// <param name="Given">Which one was given or defaulted: isentropic or polytropic.</param>
/// <param name="Uncertainty">Uncertainty in absolute points.</param>
/// <param name="Source">request, calibration (implied by a measured duty, see <see cref="Calibration"/>), or rule-default (the compressor type's default from the rule file).</param>
/// <param name="Basis">Basis of a rule default or of the calibration.</param>
public sealed record EfficiencyDto(double Isentropic, double Polytropic, string Given, double Uncertainty, string Source, string? Basis)
{
    /// <summary>What the stage's calibration (a measured duty) implies; null when the stage gave none.</summary>
    public CalibrationDto? Calibration { get; init; }
}

/// <summary>What a measured duty implies about the stage (ideal gas with cp(T) at the measured duty).</summary>
/// <param name="Kind">efficiency (measured above the isentropic temperature) or apparent-exponent (at or below it, on a cooled stage).</param>
/// <param name="Used">Whether it set the proposed duty's estimate (false when the stage gave its own efficiency).</param>
/// <param name="MeasuredDischargeTemperature">The measured discharge temperature.</param>
/// <param name="IsentropicAtMeasuredDuty">The η = 1 discharge temperature at the measured duty.</param>
/// <param name="ImpliedIsentropic">Implied isentropic efficiency; null for an apparent exponent.</param>
/// <param name="ImpliedPolytropic">Implied polytropic efficiency (what is carried to the proposed duty); null for an apparent exponent.</param>
/// <param name="ApparentExponent">Apparent polytropic exponent n, from T2/T1 = r^((n−1)/n) at the measured duty.</param>
/// <param name="ExponentRatio">(n − 1)/n at the measured duty.</param>
/// <param name="Note">How the fit was carried to the proposed duty.</param>
public sealed record CalibrationDto(
    string Kind, bool Used, QuantityDto MeasuredDischargeTemperature, QuantityDto IsentropicAtMeasuredDuty,
    double? ImpliedIsentropic, double? ImpliedPolytropic, double ApparentExponent, double ExponentRatio, string Note);

/// <summary>Predicted discharge temperatures.</summary>
/// <param name="Isentropic">The η = 1 prediction.</param>
/// <param name="Estimated">The estimate from the efficiency.</param>
/// <param name="EstimatedUpperBound">The estimate at the lower efficiency bound.</param>
/// <param name="EstimatedLowerBound">The estimate at the upper efficiency bound.</param>
/// <param name="ConstantK">The constant-k estimate beside it.</param>
public sealed record DischargeTemperatureDto(QuantityDto Isentropic, QuantityDto Estimated, QuantityDto EstimatedUpperBound, QuantityDto EstimatedLowerBound, ConstantKDto? ConstantK = null)
{
    /// <summary>
    /// The η = 1 prediction on the internal cylinder ratio (flange pressures widened by the compressor type's valve-loss
    /// allowance), what the process-compressor design check compares; null when the type has no allowance.
    /// </summary>
    public QuantityDto? IsentropicInternal { get; init; }

    /// <summary>How the estimate was made for an oil-flooded machine (energy balance with the injected oil); null otherwise.</summary>
    public FloodedDto? Flooded { get; init; }
}

/// <summary>The energy balance of an oil-flooded stage: shaft work heats gas and oil, which leave at one temperature.</summary>
/// <param name="OilToGasMassRatio">Oil mass flow over gas mass flow.</param>
/// <param name="OilInletTemperature">Oil temperature at injection.</param>
/// <param name="OilSpecificHeat">Oil specific heat used, kJ/(kg·K) (or Btu/(lb·°F) in imperial: same number ×0.2388).</param>
/// <param name="SpecificShaftWork">Shaft work per unit gas mass.</param>
/// <param name="AdiabaticWithoutOil">The gas-only adiabatic estimate at the same efficiency (an upper bound).</param>
/// <param name="Source">request (oilInjection given) or rule-default (the compressor type's package defaults).</param>
/// <param name="Basis">Where the oil figures and the efficiency come from.</param>
public sealed record FloodedDto(double OilToGasMassRatio, QuantityDto OilInletTemperature, double OilSpecificHeat, QuantityDto SpecificShaftWork, QuantityDto AdiabaticWithoutOil, string Source, string Basis);

/// <summary>The constant-k estimate (k at suction temperature).</summary>
/// <param name="K">The k used.</param>
/// <param name="Isentropic">Isentropic temperature with constant k.</param>
/// <param name="Estimated">Efficiency-corrected, constant k.</param>
/// <param name="DifferenceFromCpT">Constant-k estimate minus the cp(T) estimate.</param>
/// <param name="DifferencePercentOfRise">That difference as a percentage of the cp(T) temperature rise.</param>
public sealed record ConstantKDto(double K, QuantityDto Isentropic, QuantityDto Estimated, QuantityDto DifferenceFromCpT, double DifferencePercentOfRise);

/// <summary>Gas properties.</summary>
/// <param name="KSuction">cp/cv at suction.</param>
/// <param name="KDischarge">cp/cv at the estimated discharge temperature.</param>
/// <param name="ZSuction">Compressibility at suction (1 for the ideal-gas method).</param>
/// <param name="ZDischarge">Compressibility at discharge (1 for the ideal-gas method).</param>
public sealed record PropertiesDto(double KSuction, double KDischarge, double ZSuction, double ZDischarge);

/// <summary>Specific work per unit mass.</summary>
/// <param name="Isentropic">h2s − h1.</param>
/// <param name="Actual">h2 − h1.</param>
public sealed record SpecificWorkDto(QuantityDto Isentropic, QuantityDto Actual);

/// <summary>Condensate dropped out before a stage.</summary>
/// <param name="MassFractionOfInlet">Fraction of the mass flow entering the cooler.</param>
/// <param name="Rate">Condensate rate, when a flow was given.</param>
/// <param name="WaterMoleFractionAfter">Water mole fraction of the saturated gas the stage sees.</param>
public sealed record CondensateDto(double MassFractionOfInlet, QuantityDto? Rate, double WaterMoleFractionAfter);

/// <summary>
/// The governing finding: a violation with no number where one fires (a prohibited combination, liquid at the suction;
/// then <c>limit</c> and <c>margin</c> are absent and the finding's message says why), else the violation limit with the
/// smallest margin.
/// </summary>
/// <param name="RuleId">Rule id.</param>
/// <param name="Quantity">Quantity it checks (<c>combination</c> for a rule with no number).</param>
/// <param name="Limit">Its violation limit; absent for a rule with no number.</param>
/// <param name="Margin">Limit minus value (negative: beyond the limit); absent for a rule with no number.</param>
public sealed record GoverningDto(string RuleId, string Quantity, QuantityDto? Limit, QuantityDto? Margin);

/// <summary>The operating envelope before the governing limit.</summary>
/// <param name="MaxDischargePressure">Highest absolute discharge pressure, when one exists.</param>
/// <param name="MaxSuctionTemperature">Highest suction temperature, when one exists.</param>
/// <param name="GoverningRule">The rule whose limit bounds the envelope.</param>
/// <param name="Note">Why a bound is missing, or how it was found.</param>
/// <param name="ByLimit">For each violation-level temperature limit that applied, the highest pressure ratio and discharge
/// pressure before it is reached at this stage's suction temperature (the R-RATIO report), governing or not.</param>
public sealed record EnvelopeDto(QuantityDto? MaxDischargePressure, QuantityDto? MaxSuctionTemperature, string GoverningRule, string? Note = null, IReadOnlyList<LimitEnvelopeDto>? ByLimit = null)
{
    /// <summary>The highest discharge pressure in the unit and basis the caller typed the stage's discharge pressure in.</summary>
    public QuantityDto? MaxDischargePressureAsTyped { get; init; }

    /// <summary>What the envelope holds fixed while it moves this stage: <c>other-stages</c>.</summary>
    public string HeldFixed { get; init; } = "other-stages";
}

/// <summary>How far one limit lets the stage's pressure ratio rise.</summary>
/// <param name="RuleId">The rule.</param>
/// <param name="Quantity">The temperature it checks.</param>
/// <param name="Limit">Its violation limit.</param>
/// <param name="MaxPressureRatio">Highest P2/P1 before the limit, when one exists.</param>
/// <param name="MaxDischargePressure">Highest absolute discharge pressure before the limit, when one exists.</param>
/// <param name="Status">found, already-exceeded or not-reachable-in-range.</param>
public sealed record LimitEnvelopeDto(string RuleId, string Quantity, QuantityDto Limit, double? MaxPressureRatio, QuantityDto? MaxDischargePressure, string Status);

/// <summary>One finding.</summary>
public sealed record FindingDto
{
    /// <summary>Rule id.</summary>
    public required string RuleId { get; init; }

    /// <summary>Rule title.</summary>
    public required string Title { get; init; }

    /// <summary>pass, info, warning or violation.</summary>
    public required string Severity { get; init; }

    /// <summary>The quantity checked.</summary>
    public required string Quantity { get; init; }

    /// <summary>The checked value.</summary>
    public QuantityDto? Value { get; init; }

    /// <summary>The effective limit.</summary>
    public QuantityDto? Limit { get; init; }

    /// <summary>Limit minus value for an upper limit (value minus limit for a lower one): positive inside, negative beyond.</summary>
    public QuantityDto? Margin { get; init; }

    /// <summary>The published source or "common practice, no single source" or "from memory — verify" (full answer; always in the archived rule set of the answer's digest).</summary>
    public string? Basis { get; init; }

    /// <summary>The layer that set the effective limit (in the compact answer only when it is not the default layer).</summary>
    public string? Layer { get; init; }

    /// <summary>Why a layer loosened the limit, when it did.</summary>
    public string? LoosenedReason { get; init; }

    /// <summary>The outcome in words (a pass says by how much; beyond the limit, what to do), which defers to local codes and the manufacturer.</summary>
    public string? Message { get; init; }

    /// <summary>Extra explanation (e.g. how a derated limit was formed).</summary>
    public string? Note { get; init; }

    /// <summary>Proposed alarm and trip set points (set-point rule only).</summary>
    public SetPointsDto? SetPoints { get; init; }

    /// <summary>When the margin is comparable to the model's own error: how far the warning band was widened, and why.</summary>
    public UncertaintyDto? Uncertainty { get; init; }
}

/// <summary>Proposed alarm and trip set points.</summary>
/// <param name="Normal">The normal operating discharge temperature given.</param>
/// <param name="Alarm">Proposed alarm.</param>
/// <param name="Trip">Proposed trip.</param>
/// <param name="CappedBy">The fail limit that capped them, if any.</param>
public sealed record SetPointsDto(QuantityDto Normal, QuantityDto Alarm, QuantityDto Trip, string? CappedBy);

/// <summary>A rule that applied but could not be checked.</summary>
/// <param name="RuleId">Rule id.</param>
/// <param name="Missing">The request fields that were missing.</param>
/// <param name="Reason">What to supply.</param>
public sealed record NotCheckedDto(string RuleId, IReadOnlyList<string> Missing, string? Reason = null);

/// <summary>A point on the discharge-temperature curve.</summary>
/// <param name="DischargePressure">Absolute discharge pressure.</param>
/// <param name="Estimated">Estimated discharge temperature.</param>
/// <param name="EstimatedUpperBound">Upper bound.</param>
/// <param name="Isentropic">Isentropic discharge temperature.</param>
public sealed record CurvePointDto(QuantityDto DischargePressure, QuantityDto Estimated, QuantityDto EstimatedUpperBound, QuantityDto Isentropic);
