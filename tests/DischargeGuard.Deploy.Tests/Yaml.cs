using System.Globalization;
using YamlDotNet.RepresentationModel;

namespace DischargeGuard.Deploy.Tests;

/// <summary>
/// YAML documents as plain trees: a mapping is a <see cref="Dictionary{TKey, TValue}"/> of string to node, a sequence a
/// <see cref="List{T}"/>, a scalar its text, and a plain <c>null</c>, <c>~</c> or empty scalar is <see langword="null"/>
/// (a strategic-merge patch uses it to remove a field). Every document of a multi-document file is read.
/// </summary>
internal static class Yaml
{
    public static List<Dictionary<string, object?>> LoadAll(string path)
    {
        var stream = new YamlStream();
        using (var reader = new StreamReader(path))
        {
            stream.Load(reader);
        }

        var docs = new List<Dictionary<string, object?>>();
        foreach (var doc in stream.Documents)
        {
            switch (Convert(doc.RootNode))
            {
                case Dictionary<string, object?> map:
                    docs.Add(map);
                    break;
                case null:
                    break; // an empty document (a trailing '---')
                default:
                    throw new InvalidDataException($"{Repo.Relative(path)}: a document is not a mapping.");
            }
        }

        return docs;
    }

    public static Dictionary<string, object?> LoadOne(string path)
    {
        var docs = LoadAll(path);
        return docs.Count == 1 ? docs[0] : throw new InvalidDataException($"{Repo.Relative(path)}: expected one document, found {docs.Count}.");
    }

    private static object? Convert(YamlNode node) => node switch
    {
        YamlMappingNode m => m.Children.ToDictionary(
            kv => ((YamlScalarNode)kv.Key).Value ?? string.Empty,
            kv => Convert(kv.Value),
            StringComparer.Ordinal),
        YamlSequenceNode s => s.Children.Select(Convert).ToList(),
        YamlScalarNode { Style: YamlDotNet.Core.ScalarStyle.Plain, Value: null or "" or "~" or "null" or "Null" or "NULL" } => null,
        YamlScalarNode sc => sc.Value ?? string.Empty,
        _ => throw new InvalidDataException($"Unsupported YAML node at {node.Start}."),
    };

    public static object Clone(object value) => value switch
    {
        Dictionary<string, object?> m => m.Where(kv => kv.Value is not null).ToDictionary(kv => kv.Key, kv => (object?)Clone(kv.Value!), StringComparer.Ordinal),
        List<object?> l => l.Select(i => i is null ? null : Clone(i)).ToList(),
        _ => value,
    };
}

/// <summary>Navigation over a plain YAML tree; a missing step answers <see langword="null"/>.</summary>
internal static class Tree
{
    public static object? At(this object? node, params object[] path)
    {
        var current = node;
        foreach (var step in path)
        {
            current = (current, step) switch
            {
                (Dictionary<string, object?> m, string key) => m.GetValueOrDefault(key),
                (List<object?> l, int i) => i >= 0 && i < l.Count ? l[i] : null,
                _ => null,
            };
        }

        return current;
    }

    public static Dictionary<string, object?>? Map(this object? node, params object[] path) => node.At(path) as Dictionary<string, object?>;

    public static List<object?> List(this object? node, params object[] path) => node.At(path) as List<object?> ?? [];

    public static IEnumerable<Dictionary<string, object?>> Maps(this object? node, params object[] path) => node.List(path).OfType<Dictionary<string, object?>>();

    public static string? Str(this object? node, params object[] path) => node.At(path) as string;

    public static int? Int(this object? node, params object[] path) =>
        int.TryParse(node.Str(path), NumberStyles.Integer, CultureInfo.InvariantCulture, out var v) ? v : null;

    public static bool? Bool(this object? node, params object[] path) => node.Str(path) switch
    {
        "true" or "True" => true,
        "false" or "False" => false,
        _ => null,
    };
}
