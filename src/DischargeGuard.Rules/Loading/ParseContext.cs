using System.Globalization;
using System.Text.RegularExpressions;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Units;
using UnitsNet;
using UnitsNet.Units;
using YamlDotNet.Core;
using YamlDotNet.RepresentationModel;

namespace DischargeGuard.Rules.Loading;

/// <summary>A mapping node whose keys were checked against the allowed set.</summary>
internal sealed class MapView
{
    private readonly Dictionary<string, (YamlScalarNode Key, YamlNode Value)> _entries;

    public MapView(YamlMappingNode node, Dictionary<string, (YamlScalarNode Key, YamlNode Value)> entries)
    {
        Node = node;
        _entries = entries;
    }

    public YamlMappingNode Node { get; }

    public YamlNode? Get(string key) => _entries.TryGetValue(key, out var e) ? e.Value : null;

    public YamlNode? Key(string key) => _entries.TryGetValue(key, out var e) ? e.Key : null;

    public IEnumerable<string> Keys => _entries.Keys;
}

/// <summary>Collects errors while reading one file.</summary>
internal sealed class Context
{
    public Context(string file)
    {
        File = file;
    }

    public string File { get; }

    public List<RuleFileError> Errors { get; } = [];

    /// <summary>Where each id was written, keyed "section/id" (e.g. "rules/R-AIT").</summary>
    public Dictionary<string, SourceLocation> IdLocations { get; } = new(StringComparer.Ordinal);

    public UnitVocabulary Units { get; } = UnitVocabulary.Default;

    public SourceLocation Loc(YamlNode node) => new(File, node.Start.Line, node.Start.Column);

    public void Add(RuleFileErrorKind kind, YamlNode node, string key, string message) =>
        Errors.Add(new RuleFileError(kind, File, node.Start.Line, node.Start.Column, key, message));

    public YamlMappingNode? AsMapping(YamlNode node, string path)
    {
        if (node is YamlMappingNode m)
        {
            return m;
        }

        Add(RuleFileErrorKind.WrongType, node, path, "Expected a mapping (key: value pairs).");
        return null;
    }

    public MapView Map(YamlMappingNode node, string path, IReadOnlyCollection<string> allowed)
    {
        var entries = new Dictionary<string, (YamlScalarNode, YamlNode)>(StringComparer.Ordinal);
        foreach (var (k, v) in node.Children)
        {
            var keyPath = path.Length == 0 ? "" : path + ".";
            if (k is not YamlScalarNode sk || sk.Value is null)
            {
                Add(RuleFileErrorKind.WrongType, k, path, "A key is a plain word.");
                continue;
            }

            if (!allowed.Contains(sk.Value))
            {
                var near = allowed.FirstOrDefault(a => string.Equals(a, sk.Value, StringComparison.OrdinalIgnoreCase));
                Add(RuleFileErrorKind.UnknownKey, k, keyPath + sk.Value,
                    $"Unknown key '{sk.Value}'" + (near is null ? "" : $" (keys are case-sensitive; did you mean '{near}'?)") + ". Allowed here: " + string.Join(", ", allowed) + ".");
                continue;
            }

            entries[sk.Value] = (sk, v);
        }

        return new MapView(node, entries);
    }

    private YamlScalarNode? Scalar(MapView m, string key, string path, bool required)
    {
        var node = m.Get(key);
        if (node is null)
        {
            if (required)
            {
                Add(RuleFileErrorKind.MissingKey, m.Node, path, $"Required key '{key}' is missing.");
            }

            return null;
        }

        if (node is YamlScalarNode s && !IsNull(s))
        {
            return s;
        }

        if (node is YamlScalarNode && !required)
        {
            return null;
        }

        Add(RuleFileErrorKind.WrongType, node, path, node is YamlScalarNode ? "A value is required here." : "Expected a single value, not a list or mapping.");
        return null;
    }

    private static bool IsNull(YamlScalarNode s) => s.Style == ScalarStyle.Plain && s.Value is "" or "~" or "null" or "Null" or "NULL";

    public string? Text(MapView m, string key, string path, bool required = false)
    {
        var s = Scalar(m, key, path, required);
        if (s is null)
        {
            return null;
        }

        if (string.IsNullOrWhiteSpace(s.Value))
        {
            Add(RuleFileErrorKind.BadValue, s, path, "A text value is not blank.");
            return null;
        }

        return s.Value;
    }

    public string? Enum(MapView m, string key, string path, string[] allowed, bool required = false)
    {
        var t = Text(m, key, path, required);
        if (t is null)
        {
            return null;
        }

        if (!allowed.Contains(t, StringComparer.Ordinal))
        {
            Add(RuleFileErrorKind.BadValue, m.Get(key)!, path, $"'{t}' is not allowed; use one of: {string.Join(", ", allowed)}.");
            return null;
        }

        return t;
    }

    public bool? Bool(MapView m, string key, string path, bool required = false)
    {
        var s = Scalar(m, key, path, required);
        if (s is null)
        {
            return null;
        }

        if (s.Style == ScalarStyle.Plain && s.Value is "true" or "false")
        {
            return s.Value == "true";
        }

        Add(RuleFileErrorKind.WrongType, s, path, $"Expected true or false, not '{s.Value}'.");
        return null;
    }

    public double? Number(MapView m, string key, string path, bool required = false)
    {
        var s = Scalar(m, key, path, required);
        if (s is null)
        {
            return null;
        }

        if (s.Style == ScalarStyle.Plain && double.TryParse(s.Value, NumberStyles.AllowLeadingSign | NumberStyles.AllowDecimalPoint | NumberStyles.AllowExponent, CultureInfo.InvariantCulture, out var d) && double.IsFinite(d))
        {
            return d;
        }

        Add(RuleFileErrorKind.WrongType, s, path, $"Expected a plain number with a decimal point, not '{s.Value}'.");
        return null;
    }

    public int? Int(MapView m, string key, string path, bool required = false)
    {
        var s = Scalar(m, key, path, required);
        if (s is null)
        {
            return null;
        }

        if (s.Style == ScalarStyle.Plain && int.TryParse(s.Value, NumberStyles.None, CultureInfo.InvariantCulture, out var i))
        {
            return i;
        }

        Add(RuleFileErrorKind.WrongType, s, path, $"Expected a whole number, not '{s.Value}'.");
        return null;
    }

    public IQuantity? Quantity(MapView m, string key, string path, QuantityKind kind, bool required = false)
    {
        var s = Scalar(m, key, path, required);
        if (s is null)
        {
            return null;
        }

        if (Units.TryParse(s.Value, kind, out var q, out var error))
        {
            if (kind == QuantityKind.Temperature && ((Temperature)q!.Quantity).Kelvins < 0)
            {
                Add(RuleFileErrorKind.BadValue, s, path, "The temperature is below absolute zero.");
                return null;
            }

            return q!.Quantity;
        }

        Add(RuleFileErrorKind.BadUnit, s, path, error!.ToString());
        return null;
    }

    /// <summary>Largest relative difference between a stated value and the source's equivalent in parentheses (compared in kelvin).</summary>
    public const double StatedEquivalentTolerance = 0.01;

    // "<quantity>" or "<quantity> (<quantity>)": the second is the source's own equivalent in the other unit system.
    private static readonly Regex StatedPair = new(@"^(?<first>[^()]*?)\s*\((?<second>[^()]*)\)$", RegexOptions.CultureInvariant, TimeSpan.FromSeconds(1));

    /// <summary>
    /// Reads an absolute temperature or a temperature difference written as one quantity (<c>350 °F</c>) or as one with
    /// the source's own equivalent in the other unit system in parentheses (<c>150 °C (300 °F)</c>). The first is the
    /// value used; both are kept as stated. The pair must span the two unit systems (K/°C and °F/°R) and agree within
    /// <see cref="StatedEquivalentTolerance"/> of the first, compared in kelvin.
    /// </summary>
    public (IQuantity Quantity, StatedValue[] Stated)? StatedQuantity(MapView m, string key, string path, QuantityKind kind, bool required = false)
    {
        var s = Scalar(m, key, path, required);
        if (s is null)
        {
            return null;
        }

        var text = s.Value!.Trim();
        if (text.IndexOfAny(['(', ')']) < 0)
        {
            return Reading(s, path, text, kind, text) is { } single ? (single.Quantity, [single.Stated]) : null;
        }

        var match = StatedPair.Match(text);
        if (!match.Success || match.Groups["first"].Value.Length == 0)
        {
            Add(RuleFileErrorKind.BadValue, s, path,
                $"'{text}' is not a {Name(kind)}: write one quantity ('350 °F'), or the value used followed by the source's own equivalent in the other unit system in one pair of parentheses ('150 °C (300 °F)').");
            return null;
        }

        var firstText = match.Groups["first"].Value;
        var secondText = match.Groups["second"].Value.Trim();
        if (Reading(s, path, firstText, kind, text) is not { } first)
        {
            return null;
        }

        if (secondText.Length > 0 && secondText.All(c => char.IsAsciiDigit(c) || c is '.' or '-' or '+' or 'e' or 'E'))
        {
            Add(RuleFileErrorKind.BadUnit, s, path,
                $"'{text}': the value in parentheses has no unit; write the source's equivalent with its unit, e.g. '{firstText} ({secondText} {OtherSystemExample(first.Token)})'.");
            return null;
        }

        if (Reading(s, path, secondText, kind, text) is not { } second)
        {
            return null;
        }

        if (IsMetric(first.Token) == IsMetric(second.Token))
        {
            Add(RuleFileErrorKind.BadValue, s, path,
                $"'{text}': both units are {(IsMetric(first.Token) ? "metric (K, °C)" : "US customary (°F, °R)")}; the value in parentheses is the source's own equivalent in the other unit system ({(IsMetric(first.Token) ? "°F or °R" : "K or °C")}), given only where the source gives it.");
            return null;
        }

        var a = Kelvins(first.Quantity);
        var b = Kelvins(second.Quantity);
        var relative = a == 0 ? (b == 0 ? 0 : double.PositiveInfinity) : Math.Abs(b - a) / Math.Abs(a);
        if (relative > StatedEquivalentTolerance)
        {
            Add(RuleFileErrorKind.BadValue, s, path, string.Create(CultureInfo.InvariantCulture,
                $"'{text}': {second.Stated} ({b:0.##} K) is {relative * 100:0.##} % away from {first.Stated} ({a:0.##} K); the source's equivalent in parentheses must be within {StatedEquivalentTolerance * 100:0} % of the value used (compared in kelvin). Check both numbers against the source."));
            return null;
        }

        return (first.Quantity, [first.Stated, second.Stated]);
    }

    private (IQuantity Quantity, UnitToken Token, StatedValue Stated)? Reading(YamlScalarNode s, string path, string part, QuantityKind kind, string whole)
    {
        if (!Units.TryParse(part, kind, out var q, out var error))
        {
            Add(RuleFileErrorKind.BadUnit, s, path, part.Trim() == whole ? error!.ToString() : $"In '{whole}': {error}");
            return null;
        }

        if (kind == QuantityKind.Temperature && ((Temperature)q!.Quantity).Kelvins < 0)
        {
            Add(RuleFileErrorKind.BadValue, s, path, part.Trim() == whole ? "The temperature is below absolute zero." : $"In '{whole}': '{part.Trim()}' is below absolute zero.");
            return null;
        }

        // The number as written: every temperature token has scale 1, so the quantity's value is the written number.
        return (q!.Quantity, q.Token, new StatedValue((double)q.Quantity.Value, Symbol(q.Token.Unit)));
    }

    private static string Name(QuantityKind kind) => kind == QuantityKind.Temperature ? "temperature" : "temperature difference";

    private static bool IsMetric(UnitToken token) => token.Unit is TemperatureUnit.Kelvin or TemperatureUnit.DegreeCelsius
        or TemperatureDeltaUnit.Kelvin or TemperatureDeltaUnit.DegreeCelsius;

    private static string OtherSystemExample(UnitToken token) => (IsMetric(token), token.Kind) switch
    {
        (true, QuantityKind.Temperature) => "°F",
        (true, _) => "Δ°F",
        (false, QuantityKind.Temperature) => "°C",
        _ => "K",
    };

    private static double Kelvins(IQuantity q) => q switch
    {
        Temperature t => t.Kelvins,
        TemperatureDelta d => d.Kelvins,
        _ => throw new ArgumentOutOfRangeException(nameof(q), q, "Only temperatures and temperature differences are stated in two units."),
    };

    private static string Symbol(Enum unit) => unit switch
    {
        TemperatureUnit.Kelvin => "K",
        TemperatureUnit.DegreeCelsius => "°C",
        TemperatureUnit.DegreeFahrenheit => "°F",
        TemperatureUnit.DegreeRankine => "°R",
        TemperatureDeltaUnit.Kelvin => "K",
        TemperatureDeltaUnit.DegreeCelsius => "Δ°C",
        TemperatureDeltaUnit.DegreeFahrenheit => "Δ°F",
        TemperatureDeltaUnit.DegreeRankine => "Δ°R",
        _ => unit.ToString(),
    };

    public Temperature? Temperature(MapView m, string key, string path) =>
        Quantity(m, key, path, QuantityKind.Temperature) is Temperature t ? t : null;

    public YamlMappingNode? Mapping(MapView m, string key, string path, bool required = false)
    {
        var node = m.Get(key);
        if (node is null)
        {
            if (required)
            {
                Add(RuleFileErrorKind.MissingKey, m.Node, path, $"Required key '{key}' is missing.");
            }

            return null;
        }

        return AsMapping(node, path);
    }

    public List<(string Text, YamlNode Node)>? TextList(MapView m, string key, string path)
    {
        var node = m.Get(key);
        if (node is null)
        {
            return null;
        }

        if (node is not YamlSequenceNode seq)
        {
            Add(RuleFileErrorKind.WrongType, node, path, "Expected a list, e.g. [a, b].");
            return null;
        }

        var result = new List<(string, YamlNode)>();
        foreach (var c in seq.Children)
        {
            if (c is YamlScalarNode s && !string.IsNullOrWhiteSpace(s.Value))
            {
                result.Add((s.Value, s));
            }
            else
            {
                Add(RuleFileErrorKind.WrongType, c, path, "A list item here is a plain word.");
            }
        }

        return result;
    }

    public List<T> List<T>(MapView m, string key, Func<(YamlNode Node, string Path), T?> item)
        where T : class
    {
        var node = m.Get(key);
        var result = new List<T>();
        if (node is null)
        {
            return result;
        }

        if (node is not YamlSequenceNode seq)
        {
            if (!(node is YamlScalarNode s && IsNull(s)))
            {
                Add(RuleFileErrorKind.WrongType, node, key, "Expected a list of entries (each starting with '- ').");
            }

            return result;
        }

        for (var i = 0; i < seq.Children.Count; i++)
        {
            var r = item((seq.Children[i], string.Create(CultureInfo.InvariantCulture, $"{key}[{i}]")));
            if (r is not null)
            {
                result.Add(r);
            }
        }

        return result;
    }
}
