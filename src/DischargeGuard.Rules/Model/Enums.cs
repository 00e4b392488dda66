namespace DischargeGuard.Rules.Model;

/// <summary>How serious a rule's outcome is. Rule files use info, warning and violation; findings add pass.</summary>
public enum Severity
{
    /// <summary>Checked and inside the limit and its warning band (findings only).</summary>
    Pass = 0,
    /// <summary>Information: a note or a proposal, never changes the verdict.</summary>
    Info = 1,
    /// <summary>Inside the violation limit but within the warning band, or a warning-only rule that triggered.</summary>
    Warning = 2,
    /// <summary>Beyond the violation limit.</summary>
    Violation = 3,
}

/// <summary>The verdict for a stage or a whole train.</summary>
public enum Verdict
{
    /// <summary>No warning and no violation.</summary>
    Pass,
    /// <summary>At least one warning and no violation: an engineer should review.</summary>
    Review,
    /// <summary>At least one violation.</summary>
    Fail,
}

/// <summary>The quantity a rule checks. YAML names are camelCase.</summary>
public enum CheckedQuantity
{
    /// <summary>Ideal (η = 1) discharge temperature: what design standards call the predicted discharge temperature.</summary>
    Isentropic,
    /// <summary>Discharge temperature with the stage efficiency applied.</summary>
    Estimated,
    /// <summary>Upper bound of the discharge temperature (e.g. adiabatic for oil-flooded screws).</summary>
    EstimatedUpperBound,
    /// <summary>Measured discharge temperature.</summary>
    Measured,
    /// <summary>Measured minus estimated discharge temperature (a difference).</summary>
    MeasuredMinusPredicted,
    /// <summary>Stage pressure ratio on absolute pressures.</summary>
    PressureRatio,
    /// <summary>Stage temperature rise, by default isentropic minus suction temperature (a difference).</summary>
    TemperatureRise,
    /// <summary>Jacket coolant inlet temperature.</summary>
    JacketCoolantInlet,
    /// <summary>Normal operating discharge temperature (for the set-point proposal).</summary>
    NormalOperating,
    /// <summary>
    /// Rise of measured minus estimated discharge temperature over the asset's recent evaluations at steady pressures
    /// (a difference, from a least-squares line through them; needs the rule's <see cref="TrendSpec"/> and history).
    /// </summary>
    MeasuredMinusPredictedRise,
    /// <summary>
    /// Size of the real-gas correction: |estimated T2 with the Peng-Robinson real gas − estimated T2 with the ideal gas|
    /// (a difference; needs the real-gas result).
    /// </summary>
    RealGasCorrection,
    /// <summary>
    /// Measured minus isentropic (η = 1) discharge temperature (a difference): below zero is physically implausible for
    /// an uncooled stage.
    /// </summary>
    MeasuredMinusIsentropic,
    /// <summary>
    /// Suction temperature minus the hydrocarbon dew point of the water-free gas at suction pressure (a difference;
    /// absent when no dew point exists at that pressure).
    /// </summary>
    SuctionSuperheat,
    /// <summary>
    /// Ideal (η = 1) discharge temperature on the internal cylinder ratio: the flange ratio widened by the compressor
    /// type's valve-loss allowance, r_int = r·(1 + a)/(1 − a) (absent when the type has no allowance).
    /// </summary>
    IsentropicInternal,
    /// <summary>No number: the rule flags a combination or a condition (a prohibited rule).</summary>
    Combination,
}

/// <summary>The phase of the gas at a stage's suction or discharge (Peng-Robinson stability test, water by saturation).</summary>
public enum StagePhase
{
    /// <summary>A single gas phase, not at saturation.</summary>
    Gas,
    /// <summary>A gas at its water or hydrocarbon dew point (condensate formed upstream and was separated, or RH = 1).</summary>
    Saturated,
    /// <summary>Inside the two-phase region: liquid would form.</summary>
    TwoPhase,
    /// <summary>A liquid (or liquid-like dense) phase.</summary>
    Liquid,
}

/// <summary>What kind of number a checked quantity is.</summary>
public enum QuantityDimension
{
    /// <summary>An absolute temperature, held in kelvin.</summary>
    Temperature,
    /// <summary>A temperature difference, held in kelvin.</summary>
    TemperatureDifference,
    /// <summary>A dimensionless ratio.</summary>
    Ratio,
}

/// <summary>Which side of the limit is safe.</summary>
public enum LimitDirection
{
    /// <summary>The value must stay at or below the limit.</summary>
    Upper,
    /// <summary>The value must stay at or above the limit.</summary>
    Lower,
}

/// <summary>A stage's place in the train.</summary>
public enum StagePosition
{
    /// <summary>The only stage.</summary>
    Only,
    /// <summary>The first of several.</summary>
    First,
    /// <summary>Neither first nor last.</summary>
    Intermediate,
    /// <summary>The last of several.</summary>
    Last,
}

/// <summary>The kind of layer a rule file is.</summary>
public enum LayerKind
{
    /// <summary>The shipped defaults (rules/default.yaml).</summary>
    Default,
    /// <summary>A site layer (rules/sites/&lt;site-id&gt;.yaml).</summary>
    Site,
    /// <summary>An asset layer (rules/assets/&lt;asset&gt;.yaml).</summary>
    Asset,
}

/// <summary>Helpers for the quantity names.</summary>
public static class CheckedQuantityNames
{
    /// <summary>The YAML/JSON name of a quantity.</summary>
    /// <param name="quantity">The quantity.</param>
    /// <returns>Its camelCase name.</returns>
    public static string ToName(this CheckedQuantity quantity) => quantity switch
    {
        CheckedQuantity.Isentropic => "isentropic",
        CheckedQuantity.Estimated => "estimated",
        CheckedQuantity.EstimatedUpperBound => "estimatedUpperBound",
        CheckedQuantity.Measured => "measured",
        CheckedQuantity.MeasuredMinusPredicted => "measuredMinusPredicted",
        CheckedQuantity.PressureRatio => "pressureRatio",
        CheckedQuantity.TemperatureRise => "temperatureRise",
        CheckedQuantity.JacketCoolantInlet => "jacketCoolantInlet",
        CheckedQuantity.NormalOperating => "normalOperating",
        CheckedQuantity.MeasuredMinusPredictedRise => "measuredMinusPredictedRise",
        CheckedQuantity.RealGasCorrection => "realGasCorrection",
        CheckedQuantity.MeasuredMinusIsentropic => "measuredMinusIsentropic",
        CheckedQuantity.SuctionSuperheat => "suctionSuperheat",
        CheckedQuantity.IsentropicInternal => "isentropicInternal",
        CheckedQuantity.Combination => "combination",
        _ => throw new ArgumentOutOfRangeException(nameof(quantity), quantity, "Unknown quantity."),
    };

    /// <summary>All names, in enum order.</summary>
    public static IReadOnlyList<string> All { get; } = Enum.GetValues<CheckedQuantity>().Select(q => q.ToName()).ToArray();

    /// <summary>Reads a quantity name.</summary>
    /// <param name="name">The camelCase name.</param>
    /// <param name="quantity">The quantity.</param>
    /// <returns>Whether the name is known.</returns>
    public static bool TryParse(string name, out CheckedQuantity quantity)
    {
        foreach (var q in Enum.GetValues<CheckedQuantity>())
        {
            if (q.ToName() == name)
            {
                quantity = q;
                return true;
            }
        }

        quantity = default;
        return false;
    }

    /// <summary>The dimension of a quantity.</summary>
    /// <param name="quantity">The quantity.</param>
    /// <returns>Its dimension.</returns>
    public static QuantityDimension Dimension(this CheckedQuantity quantity) => quantity switch
    {
        CheckedQuantity.PressureRatio => QuantityDimension.Ratio,
        CheckedQuantity.MeasuredMinusPredicted or CheckedQuantity.TemperatureRise or CheckedQuantity.MeasuredMinusPredictedRise or CheckedQuantity.RealGasCorrection
            or CheckedQuantity.MeasuredMinusIsentropic or CheckedQuantity.SuctionSuperheat => QuantityDimension.TemperatureDifference,
        _ => QuantityDimension.Temperature,
    };

    /// <summary>Whether the quantity is a discharge temperature (predicted or measured).</summary>
    /// <param name="quantity">The quantity.</param>
    /// <returns>True for isentropic, isentropicInternal, estimated, estimatedUpperBound and measured.</returns>
    public static bool IsDischargeTemperature(this CheckedQuantity quantity) =>
        quantity is CheckedQuantity.Isentropic or CheckedQuantity.IsentropicInternal or CheckedQuantity.Estimated or CheckedQuantity.EstimatedUpperBound or CheckedQuantity.Measured;
}
