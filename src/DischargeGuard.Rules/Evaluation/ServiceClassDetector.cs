using DischargeGuard.Rules.Model;
using UnitsNet;

namespace DischargeGuard.Rules.Evaluation;

/// <summary>Detects the service classes that follow from the composition, with the thresholds in the rule set.</summary>
public static class ServiceClassDetector
{
    /// <summary>
    /// The ids of the detected service classes: hydrogen-rich when the molar mass is at or below its threshold,
    /// an oxygen class when the dry-basis O2 mole fraction is above its threshold (and below its upper bound, if any).
    /// </summary>
    /// <param name="rules">The rule set holding the thresholds.</param>
    /// <param name="molarMass">Gas molar mass, or null when unknown.</param>
    /// <param name="oxygenFraction">O2 mole fraction on the dry basis, or null when unknown.</param>
    /// <returns>Detected ids, in catalogue order.</returns>
    public static IReadOnlyList<string> Detect(EffectiveRuleSet rules, MolarMass? molarMass, Ratio? oxygenFraction)
    {
        ArgumentNullException.ThrowIfNull(rules);
        if (molarMass is { } mm && (!double.IsFinite(mm.GramsPerMole) || mm.GramsPerMole <= 0))
        {
            throw new ArgumentOutOfRangeException(nameof(molarMass), mm, "Molar mass must be positive.");
        }

        if (oxygenFraction is { } o2 && (!double.IsFinite(o2.DecimalFractions) || o2.DecimalFractions < 0 || o2.DecimalFractions > 1))
        {
            throw new ArgumentOutOfRangeException(nameof(oxygenFraction), o2, "A mole fraction is between 0 and 1.");
        }

        List<string>? result = null;
        foreach (var s in rules.DetectedServiceClasses)
        {
            var hit = s.Detection switch
            {
                ServiceDetection.MolarMassAtMost => molarMass is { } m && s.MolarMassThreshold is { } t && m.GramsPerMole <= t.GramsPerMole,
                ServiceDetection.OxygenFractionAbove => oxygenFraction is { } f && s.OxygenFractionThreshold is { } t2 && f.DecimalFractions > t2.DecimalFractions
                    && (s.OxygenFractionBelow is not { } below || f.DecimalFractions < below.DecimalFractions),
                _ => false,
            };
            if (hit)
            {
                (result ??= []).Add(s.Id);
            }
        }

        return result ?? (IReadOnlyList<string>)[];
    }
}
