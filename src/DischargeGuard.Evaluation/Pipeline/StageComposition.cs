using DischargeGuard.Thermo;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>The stage gas as the rule engine reads it: wet mole fractions by species id.</summary>
internal static class StageComposition
{
    /// <summary>The mixture's mole fractions by species id (water included, as the stage carries it).</summary>
    /// <param name="gas">The stage's gas.</param>
    /// <returns>Species id → mole fraction.</returns>
    public static IReadOnlyDictionary<string, double> Of(GasMixture gas)
    {
        var result = new Dictionary<string, double>(gas.Components.Count, StringComparer.Ordinal);
        foreach (var c in gas.Components)
        {
            result[c.Species.Id] = result.TryGetValue(c.Species.Id, out var x) ? x + c.MoleFraction : c.MoleFraction;
        }

        return result;
    }
}
