using System.Globalization;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Cli.Reports;

/// <summary>Number and quantity formatting for reports (invariant culture; every number with its unit).</summary>
internal static class Format
{
    public static string Q(QuantityDto? q, string format = "0.#") =>
        q is null ? "—"
        // A ratio's unit is "1": the number alone reads as what it is.
        : q.Unit == "1" ? q.Value.ToString("0.##", CultureInfo.InvariantCulture)
        : q.Value.ToString(format, CultureInfo.InvariantCulture) + " " + q.Unit;

    public static string N(double value, string format = "0.###") => value.ToString(format, CultureInfo.InvariantCulture);

    public static string Verdict(string verdict) => verdict.ToUpperInvariant();

    // The answer's own sentence; an answer from a service that predates it gets the layer list in the same words.
    public static string Applied(RuleSetDto ruleSet) =>
        ruleSet.Applied ?? "layers applied: " + string.Join(" ← ", ruleSet.Layers.Select(l => l.Name));

    public static string Subject(string? asset, string? site) =>
        (asset ?? "(no asset)") + (site is null ? string.Empty : " at " + site);
}

/// <summary>A plain text table: columns padded to their widest cell.</summary>
internal sealed class TextTable(params string[] headers)
{
    private readonly List<string[]> _rows = [headers];

    public void Add(params string[] cells) => _rows.Add(cells);

    public void WriteTo(TextWriter w, string indent)
    {
        var widths = new int[_rows[0].Length];
        foreach (var row in _rows)
        {
            for (var i = 0; i < row.Length && i < widths.Length; i++)
            {
                widths[i] = Math.Max(widths[i], row[i].Length);
            }
        }

        foreach (var row in _rows)
        {
            var cells = row.Select((c, i) => i == row.Length - 1 ? c : c.PadRight(widths[i]));
            w.WriteLine((indent + string.Join("  ", cells)).TrimEnd());
        }
    }
}
