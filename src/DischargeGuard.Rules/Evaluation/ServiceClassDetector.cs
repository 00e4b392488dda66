using DischargeGuard.Rules.Model;
using UnitsNet;

namespace DischargeGuard.Rules.Evaluation;

/// <summary>Detects the service classes that follow from the composition, with the thresholds in the rule set.</summary>
public static class ServiceClassDetector
{
    private const string Water = "H2O";

    /// <summary>
    /// The ids of the detected service classes: hydrogen-rich when the molar mass is at or below its threshold,
    /// an oxygen class when the dry-basis O2 mole fraction is above its threshold (and below its upper bound, if any).
    /// Species-based classes are not detected by this overload (no composition).
    /// </summary>
    /// <param name="rules">The rule set holding the thresholds.</param>
    /// <param name="molarMass">Gas molar mass, or null when unknown.</param>
    /// <param name="oxygenFraction">O2 mole fraction on the dry basis, or null when unknown.</param>
    /// <returns>Detected ids, in catalogue order.</returns>
    public static IReadOnlyList<string> Detect(EffectiveRuleSet rules, MolarMass? molarMass, Ratio? oxygenFraction) =>
        Detect(rules, molarMass, oxygenFraction, null, null);

    /// <summary>
    /// The ids of the detected service classes, including those decided on one species: its dry-basis mole fraction
    /// (water excluded) above a threshold, or its partial pressure at discharge (wet gas, absolute) above a threshold.
    /// </summary>
    /// <param name="rules">The rule set holding the thresholds.</param>
    /// <param name="molarMass">Gas molar mass, or null when unknown.</param>
    /// <param name="oxygenFraction">O2 mole fraction on the dry basis, or null when unknown.</param>
    /// <param name="moleFractions">The wet composition by species id, or null when unknown.</param>
    /// <param name="dischargePressure">Discharge pressure, absolute, or null when unknown.</param>
    /// <returns>Detected ids, in catalogue order.</returns>
    public static IReadOnlyList<string> Detect(EffectiveRuleSet rules, MolarMass? molarMass, Ratio? oxygenFraction,
        IReadOnlyDictionary<string, double>? moleFractions, Pressure? dischargePressure)
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
                ServiceDetection.SpeciesFractionAbove => s.Species is { } sp && s.SpeciesFractionThreshold is { } t3
                    && DryFraction(moleFractions, sp) is { } x && x > t3.DecimalFractions,
                ServiceDetection.PartialPressureAbove => s.Species is { } sp2 && s.PartialPressureThreshold is { } t4
                    && PartialPressurePascals(moleFractions, sp2, dischargePressure) is { } p && p > t4.Pascals,
                _ => false,
            };
            if (hit)
            {
                (result ??= []).Add(s.Id);
            }
        }

        return result ?? (IReadOnlyList<string>)[];
    }

    /// <summary>The dry-basis (water excluded) mole fraction of a species; null when the composition is unknown.</summary>
    /// <param name="moleFractions">Wet composition by species id.</param>
    /// <param name="species">Species id.</param>
    /// <returns>The fraction, 0 when the species is absent.</returns>
    public static double? DryFraction(IReadOnlyDictionary<string, double>? moleFractions, string species)
    {
        if (moleFractions is null)
        {
            return null;
        }

        var x = moleFractions.TryGetValue(species, out var v) ? v : 0;
        var water = species == Water ? 0 : moleFractions.TryGetValue(Water, out var w) ? w : 0;
        // Clamped to [0, 1]: after a cooler drops water, x/(1 − water) of a gas that is this species and water alone can
        // round a hair above 1 (a 500 before this clamp); a gas of water alone has no dry part.
        return water >= 1 ? 0 : Math.Clamp(x / (1 - water), 0, 1);
    }

    /// <summary>The partial pressure of a species at the given pressure (wet gas), Pa; null when either input is unknown.</summary>
    /// <param name="moleFractions">Wet composition by species id.</param>
    /// <param name="species">Species id.</param>
    /// <param name="pressure">Absolute pressure.</param>
    /// <returns>x · p in Pa, 0 when the species is absent.</returns>
    public static double? PartialPressurePascals(IReadOnlyDictionary<string, double>? moleFractions, string species, Pressure? pressure) =>
        moleFractions is null || pressure is not { } p ? null : (moleFractions.TryGetValue(species, out var x) ? x : 0) * p.Pascals;
}
