using System.Globalization;
using DischargeGuard.Rules.Model;

namespace DischargeGuard.Rules.Evaluation;

/// <summary>Where a checked value lies against its limit.</summary>
public enum Outcome
{
    /// <summary>Inside the limit, and outside the warning band (or the rule has none).</summary>
    Inside,
    /// <summary>Inside the limit, but inside its warning band.</summary>
    Near,
    /// <summary>Beyond the limit.</summary>
    Beyond,
}

/// <summary>
/// The words of a finding for its own outcome, so a message never contradicts the severity beside it. A rule's
/// <c>message</c> is its beyond-the-limit wording; a pass says that it passes, and a value in the warning band says how
/// close to the limit it is. Numbers are given in kelvin and Fahrenheit degrees (differences), never in a unit system
/// the caller did not choose alone.
/// </summary>
public static class OutcomeWording
{
    /// <summary>The message for a limit rule's outcome.</summary>
    /// <param name="rule">The rule.</param>
    /// <param name="outcome">Where the value lies.</param>
    /// <param name="margin">limit − value (upper) or value − limit (lower): positive inside.</param>
    /// <param name="warningBandSi">The rule's warning band (K, or a plain ratio), 0 for none.</param>
    /// <returns>The sentence.</returns>
    public static string For(RuleDefinition rule, Outcome outcome, Reading margin, double warningBandSi)
    {
        ArgumentNullException.ThrowIfNull(rule);
        var side = rule.Direction == LimitDirection.Upper ? "below" : "above";
        return outcome switch
        {
            Outcome.Beyond => rule.Message,
            Outcome.Near => string.Create(CultureInfo.InvariantCulture,
                $"Close to the limit: {Amount(margin)} {side} it, inside the warning band of {Amount(new Reading(margin.Dimension, warningBandSi))}. It does not exceed the limit; keep the margin in view and confirm with the manufacturer's limits and local codes."),
            _ => string.Create(CultureInfo.InvariantCulture, $"Passes: {Amount(margin)} {side} the limit."),
        };
    }

    /// <summary>A difference in K with its Fahrenheit-degree equivalent, or a plain ratio.</summary>
    /// <param name="difference">A temperature difference or a ratio.</param>
    /// <returns>E.g. "8.3 K (14.9 °F)".</returns>
    public static string Amount(Reading difference) => difference.Dimension == QuantityDimension.Ratio
        ? difference.SiValue.ToString("0.###", CultureInfo.InvariantCulture)
        : string.Create(CultureInfo.InvariantCulture, $"{Math.Abs(difference.SiValue):0.0} K ({Math.Abs(difference.SiValue) * 1.8:0.0} °F)");
}
