namespace DischargeGuard.Rules.Model;

/// <summary>
/// The discharge-side pressure-part materials a request may name (<c>equipment.dischargeMaterial</c>) and a rule may
/// list (<c>appliesTo.dischargeMaterials</c>): the steel groups API RP 941 draws separate curves for, and stainless.
/// </summary>
public static class DischargeMaterials
{
    /// <summary>Every accepted id, in order of rising alloy content.</summary>
    public static IReadOnlyList<string> All { get; } = ["carbon-steel", "c-0.5mo", "1.25cr-0.5mo", "2.25cr-1mo", "stainless"];

    /// <summary>Whether <paramref name="id"/> is one of <see cref="All"/> (exact, case-sensitive).</summary>
    /// <param name="id">The id to test.</param>
    /// <returns>True when known.</returns>
    public static bool IsKnown(string? id) => id is not null && All.Contains(id, StringComparer.Ordinal);
}
