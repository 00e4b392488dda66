using System.Globalization;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Units;
using UnitsNet;
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
