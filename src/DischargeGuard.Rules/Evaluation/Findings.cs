using System.Globalization;
using DischargeGuard.Rules.Model;
using UnitsNet;

namespace DischargeGuard.Rules.Evaluation;

/// <summary>A checked value, a limit or a margin: a number with its dimension (kelvin for temperatures and differences).</summary>
/// <param name="Dimension">What the number is.</param>
/// <param name="SiValue">Kelvin for temperatures and differences; the plain number for ratios.</param>
public readonly record struct Reading(QuantityDimension Dimension, double SiValue)
{
    /// <summary>The value as an absolute temperature, when it is one.</summary>
    public Temperature? Temperature => Dimension == QuantityDimension.Temperature ? UnitsNet.Temperature.FromKelvins(SiValue) : null;

    /// <summary>The value as a temperature difference, when it is one.</summary>
    public TemperatureDelta? TemperatureDifference => Dimension == QuantityDimension.TemperatureDifference ? TemperatureDelta.FromKelvins(SiValue) : null;

    /// <summary>The value as a plain ratio, when it is one.</summary>
    public double? Ratio => Dimension == QuantityDimension.Ratio ? SiValue : null;

    /// <summary>Formats as °C for temperatures, K for differences, plain for ratios, invariant culture.</summary>
    /// <returns>E.g. "150.00 °C", "-12.30 K", "4.200".</returns>
    public override string ToString() => Dimension switch
    {
        QuantityDimension.Temperature => string.Create(CultureInfo.InvariantCulture, $"{SiValue - 273.15:0.00} °C"),
        QuantityDimension.TemperatureDifference => string.Create(CultureInfo.InvariantCulture, $"{SiValue:0.00} K"),
        _ => SiValue.ToString("0.000", CultureInfo.InvariantCulture),
    };

    /// <summary>The margin's dimension for a value of this dimension.</summary>
    internal QuantityDimension MarginDimension => Dimension == QuantityDimension.Ratio ? QuantityDimension.Ratio : QuantityDimension.TemperatureDifference;
}

/// <summary>Proposed alarm and trip set points from the normal operating discharge temperature.</summary>
/// <param name="Normal">The normal operating discharge temperature given.</param>
/// <param name="Alarm">Proposed alarm set point.</param>
/// <param name="Trip">Proposed trip (shutdown) set point.</param>
/// <param name="CapRuleId">The violation rule whose limit capped the proposal, if any.</param>
/// <param name="Cap">That limit.</param>
/// <param name="Capped">True when the alarm or trip was lowered to stay at or below the cap.</param>
public sealed record SetPointProposal(Temperature Normal, Temperature Alarm, Temperature Trip, string? CapRuleId, Temperature? Cap, bool Capped);

/// <summary>The result of checking one rule on one stage. Never an exception.</summary>
public sealed record Finding
{
    /// <summary>Rule id.</summary>
    public required string RuleId { get; init; }
    /// <summary>Rule title.</summary>
    public required string Title { get; init; }
    /// <summary>Pass, info, warning or violation.</summary>
    public required Severity Severity { get; init; }
    /// <summary>The quantity checked (for multi-quantity rules, the one with the smallest margin).</summary>
    public required CheckedQuantity Quantity { get; init; }
    /// <summary>The checked value.</summary>
    public Reading? Value { get; init; }
    /// <summary>The effective (violation, or warning-only) limit.</summary>
    public Reading? Limit { get; init; }
    /// <summary>
    /// The limit as its rule file states it, for display in the unit the source gives: (150, "°C") and (300, "°F") for
    /// <c>150 °C (300 °F)</c>, the first being the value <see cref="Limit"/> holds in SI. Empty when the limit is derived
    /// (from a lubricant, a material, an input, the estimate) or a ratio.
    /// </summary>
    public IReadOnlyList<StatedValue> LimitAsStated { get; init; } = [];
    /// <summary>limit − value for upper limits, value − limit for lower limits: positive inside, negative beyond.</summary>
    public Reading? Margin { get; init; }
    /// <summary>Upper or lower limit.</summary>
    public LimitDirection Direction { get; init; }
    /// <summary>The rule's configured severity (violation rules compete for the governing finding).</summary>
    public required Severity RuleSeverity { get; init; }
    /// <summary>The basis of the rule.</summary>
    public required string Basis { get; init; }
    /// <summary>The layer that set the effective limit.</summary>
    public required string Layer { get; init; }
    /// <summary>Why a layer loosened the limit, when it did.</summary>
    public string? LoosenedReason { get; init; }
    /// <summary>Sign-off of a special-service limit.</summary>
    public SignOff? SignOff { get; init; }
    /// <summary>The rule's message (defers to local codes and the manufacturer).</summary>
    public required string Message { get; init; }
    /// <summary>A fixed sentence the engine adds (special services, set points, defaulted efficiency), if any.</summary>
    public string? Note { get; init; }

    /// <summary>
    /// One line with the numbers, e.g. "isentropic 162.30 °C > limit 150.00 °C (margin -12.30 K; set by default)".
    /// Formatted on access, so evaluation does not pay for text nobody reads.
    /// </summary>
    public string Detail
    {
        get
        {
            var q = Quantity.ToName();
            if (SetPoints is { } sp)
            {
                var text = string.Create(CultureInfo.InvariantCulture,
                    $"proposed alarm {new Reading(QuantityDimension.Temperature, sp.Alarm.Kelvins)}, trip {new Reading(QuantityDimension.Temperature, sp.Trip.Kelvins)}");
                if (sp.CapRuleId is not null)
                {
                    text += string.Create(CultureInfo.InvariantCulture, $" (capped at the fail limit {new Reading(QuantityDimension.Temperature, sp.Cap!.Value.Kelvins)} of {sp.CapRuleId})");
                }

                return Note is null ? text : text + "; " + Note;
            }

            if (Limit is { } l && Margin is { } m && Value is { } v)
            {
                var beyond = m.SiValue < 0;
                var op = Direction == LimitDirection.Upper ? (beyond ? ">" : "<=") : (beyond ? "<" : ">=");
                var text = string.Create(CultureInfo.InvariantCulture, $"{q} {v} {op} limit {l} (margin {m}; set by {Layer})");
                return Note is null ? text : text + "; " + Note;
            }

            if (Note is not null)
            {
                return Value is { } v2 ? string.Create(CultureInfo.InvariantCulture, $"{q} {v2}: {Note}") : Note;
            }

            return Value is { } v3 ? string.Create(CultureInfo.InvariantCulture, $"{q} {v3}") : q;
        }
    }
    /// <summary>Set-point proposal, for R-SETPOINTS.</summary>
    public SetPointProposal? SetPoints { get; init; }
}

/// <summary>Why a rule could not be checked.</summary>
public enum NotCheckedReason
{
    /// <summary>An input that decides whether the rule applies is absent (compressor type, lubricant, material, composition, unloaded-running flag).</summary>
    ApplicabilityInput,
    /// <summary>An input or catalogue value the limit is computed from is absent.</summary>
    LimitInput,
    /// <summary>The value the rule checks is absent (e.g. the measured discharge temperature).</summary>
    CheckedValue,
    /// <summary>A trend rule has too few earlier evaluations of the asset to fit a trend through.</summary>
    History,
    /// <summary>
    /// The limit is an optional input of the stage itself (its design temperature): listed, but it does not make the
    /// stage a review, because the shipped limits on the same quantity still apply.
    /// </summary>
    OptionalInput,
}

/// <summary>A rule that applied but could not be checked.</summary>
/// <param name="RuleId">Rule id.</param>
/// <param name="Title">Rule title.</param>
/// <param name="MissingInputs">The inputs that were absent (request field names, or catalogue fields).</param>
/// <param name="Why">Which part of the rule needed them.</param>
public sealed record NotChecked(string RuleId, string Title, IReadOnlyList<string> MissingInputs, NotCheckedReason Why)
{
    /// <summary>A sentence saying what to supply (formatted on access).</summary>
    public string Reason => Why switch
    {
        NotCheckedReason.ApplicabilityInput => $"Whether the rule applies depends on {string.Join(", ", MissingInputs)}; supply it to have the rule checked.",
        NotCheckedReason.LimitInput => $"The limit is computed from {string.Join(", ", MissingInputs)}; supply it to have the rule checked.",
        NotCheckedReason.OptionalInput => $"The limit is the stage's own {string.Join(", ", MissingInputs)}, which was not stated; the other limits still apply. State it (equipment.designTemperature) to have the rule checked.",
        NotCheckedReason.History => $"The trend is fitted through the asset's recorded evaluations and needs {string.Join(" and ", MissingInputs.Select(m => m.Replace("history: ", string.Empty, StringComparison.Ordinal)))}; it is checked once they are recorded.",
        _ => $"The rule checks a value that needs {string.Join(" or ", MissingInputs)}; supply it to have the rule checked.",
    };
}

/// <summary>The result for one stage.</summary>
/// <param name="StageIndex">0-based index.</param>
/// <param name="Verdict">fail if any violation, review if any warning, else pass.</param>
/// <param name="Findings">Every checked rule's finding, in rule order.</param>
/// <param name="NotChecked">Rules that applied but lacked an input.</param>
/// <param name="Disabled">Rules a layer disabled.</param>
/// <param name="ServiceClasses">Effective service classes (declared and detected).</param>
/// <param name="DetectedServiceClasses">The service classes detected from the composition.</param>
/// <param name="Governing">The finding that decides the stage: a violation with no number (a prohibited combination, liquid at
/// the suction) where one fires, else the violation-rule finding with the smallest margin.</param>
/// <param name="Envelope">The envelope before the governing limit, when a calculator was given.</param>
public sealed record StageResult(int StageIndex, Verdict Verdict, IReadOnlyList<Finding> Findings, IReadOnlyList<NotChecked> NotChecked,
    IReadOnlyList<DisabledRule> Disabled, IReadOnlyList<string> ServiceClasses, IReadOnlyList<string> DetectedServiceClasses, Finding? Governing, EnvelopeEstimate? Envelope);

/// <summary>The result for a train.</summary>
/// <param name="Verdict">Worst stage verdict.</param>
/// <param name="Stages">Per stage.</param>
/// <param name="RuleSetDigest">Digest of the merged rule set used.</param>
/// <param name="Layers">The layers merged, with their digests.</param>
public sealed record EvaluationResult(Verdict Verdict, IReadOnlyList<StageResult> Stages, string RuleSetDigest, IReadOnlyList<LayerInfo> Layers);
