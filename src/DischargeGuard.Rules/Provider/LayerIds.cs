namespace DischargeGuard.Rules.Provider;

/// <summary>
/// How ids of layers (site ids, asset tags) are compared. A request's id selects a layer by exact, ordinal match; two ids
/// that differ only in case or in separators (<c>c-204b</c>, <c>C204B</c>, <c>C_204B</c> beside <c>C-204B</c>) are a
/// near miss — almost certainly a typing slip that would silently drop the layer's limits — and ids one or two
/// characters apart (<c>C-204A</c> beside <c>C-204B</c>) are different machines that are merely close.
/// </summary>
public static class LayerIds
{
    /// <summary>Largest edit distance (on the folded form) at which a layer counts as "near" an id that has none.</summary>
    public const int NearDistance = 2;

    /// <summary>
    /// The folded form: letters upper-cased (invariant), digits kept, everything else (hyphen, underscore, dot, space,
    /// slash, …) dropped. Two ids with the same folded form differ only in case or separators.
    /// </summary>
    /// <param name="id">An id.</param>
    /// <returns>The folded form.</returns>
    public static string Fold(string id)
    {
        ArgumentNullException.ThrowIfNull(id);
        return string.Create(id.Count(char.IsAsciiLetterOrDigit), id, static (span, s) =>
        {
            var i = 0;
            foreach (var c in s)
            {
                if (char.IsAsciiLetterOrDigit(c))
                {
                    span[i++] = char.ToUpperInvariant(c);
                }
            }
        });
    }

    /// <summary>Whether two different ids differ only in case or separators.</summary>
    /// <param name="a">One id.</param>
    /// <param name="b">Another.</param>
    /// <returns>True when they are not equal but fold to the same form.</returns>
    public static bool IsNearMiss(string a, string b) =>
        !string.Equals(a, b, StringComparison.Ordinal) && Fold(a).Length > 0 && string.Equals(Fold(a), Fold(b), StringComparison.Ordinal);

    /// <summary>
    /// Whether <paramref name="id"/> is a well-formed rule-file id (a layer id, site id, asset tag in a file name, rule or
    /// catalogue id): 1 to 64 ASCII letters, digits, '-', '_' or '.', beginning and ending with a letter or digit, so
    /// that a trailing space, dot or line break can never make a second spelling of an id.
    /// </summary>
    /// <param name="id">The id.</param>
    /// <returns>True when well formed.</returns>
    public static bool IsWellFormed(string? id) =>
        id is { Length: > 0 and <= 64 }
        && char.IsAsciiLetterOrDigit(id[0]) && char.IsAsciiLetterOrDigit(id[^1])
        && id.All(c => char.IsAsciiLetterOrDigit(c) || c is '-' or '_' or '.');

    /// <summary>Levenshtein distance between the folded forms, capped: any distance above <paramref name="cap"/> is reported as cap + 1.</summary>
    /// <param name="a">One id.</param>
    /// <param name="b">Another.</param>
    /// <param name="cap">Largest distance of interest.</param>
    /// <returns>The distance, at most cap + 1.</returns>
    public static int FoldedDistance(string a, string b, int cap = NearDistance)
    {
        var x = Fold(a);
        var y = Fold(b);
        if (Math.Abs(x.Length - y.Length) > cap)
        {
            return cap + 1;
        }

        var previous = new int[y.Length + 1];
        var current = new int[y.Length + 1];
        for (var j = 0; j <= y.Length; j++)
        {
            previous[j] = j;
        }

        for (var i = 1; i <= x.Length; i++)
        {
            current[0] = i;
            var rowMin = current[0];
            for (var j = 1; j <= y.Length; j++)
            {
                var cost = x[i - 1] == y[j - 1] ? 0 : 1;
                current[j] = Math.Min(Math.Min(previous[j] + 1, current[j - 1] + 1), previous[j - 1] + cost);
                rowMin = Math.Min(rowMin, current[j]);
            }

            if (rowMin > cap)
            {
                return cap + 1;
            }

            (previous, current) = (current, previous);
        }

        return Math.Min(previous[y.Length], cap + 1);
    }

    /// <summary>The layer id that <paramref name="id"/> near-misses (same folded form, different spelling), or null.</summary>
    /// <param name="id">The id asked for (not itself a layer).</param>
    /// <param name="layerIds">The ids that have layers.</param>
    /// <returns>The layer id, or null.</returns>
    public static string? NearMissOf(string id, IEnumerable<string> layerIds)
    {
        ArgumentNullException.ThrowIfNull(layerIds);
        return layerIds.Where(l => IsNearMiss(id, l)).Order(StringComparer.Ordinal).FirstOrDefault();
    }

    /// <summary>The closest layer id within <see cref="NearDistance"/> of <paramref name="id"/> (ties: ordinal order), or null.</summary>
    /// <param name="id">The id asked for (not itself a layer).</param>
    /// <param name="layerIds">The ids that have layers.</param>
    /// <returns>The layer id, or null.</returns>
    public static string? NearestOf(string id, IEnumerable<string> layerIds)
    {
        ArgumentNullException.ThrowIfNull(layerIds);
        return layerIds
            .Select(l => (Id: l, Distance: FoldedDistance(id, l)))
            .Where(x => x.Distance <= NearDistance)
            .OrderBy(x => x.Distance).ThenBy(x => x.Id, StringComparer.Ordinal)
            .Select(x => x.Id)
            .FirstOrDefault();
    }
}
