using System.Globalization;
using System.Text.Json;

namespace DischargeGuard.Cli.Proposals;

/// <summary>A place in a proposal file: 1-based line and column.</summary>
/// <param name="Line">Line, from 1.</param>
/// <param name="Column">Column, from 1.</param>
internal readonly record struct SourcePosition(long Line, long Column);

/// <summary>The scalar kinds a proposal can hold (JSON's, which YAML plain scalars are resolved to).</summary>
internal enum ScalarKind
{
    String,
    Number,
    True,
    False,
    Null,
}

/// <summary>
/// A parsed proposal document with the position of every node, read from YAML or JSON alike, so that errors found later
/// (unknown fields, wrong types, validator messages keyed by request path) can name the line in the file the user wrote.
/// </summary>
internal abstract class DocNode(SourcePosition position)
{
    public SourcePosition Position { get; } = position;

    /// <summary>Writes the node as JSON.</summary>
    public abstract void WriteTo(Utf8JsonWriter writer);
}

internal sealed class DocMember(string name, SourcePosition position, DocNode value)
{
    public string Name { get; } = name;

    public SourcePosition Position { get; } = position;

    public DocNode Value { get; } = value;
}

internal sealed class DocObject(SourcePosition position, IReadOnlyList<DocMember> members) : DocNode(position)
{
    public IReadOnlyList<DocMember> Members { get; } = members;

    public DocMember? Find(string name) => Members.FirstOrDefault(m => string.Equals(m.Name, name, StringComparison.Ordinal));

    public override void WriteTo(Utf8JsonWriter writer)
    {
        writer.WriteStartObject();
        foreach (var m in Members)
        {
            writer.WritePropertyName(m.Name);
            m.Value.WriteTo(writer);
        }

        writer.WriteEndObject();
    }
}

internal sealed class DocArray(SourcePosition position, IReadOnlyList<DocNode> items) : DocNode(position)
{
    public IReadOnlyList<DocNode> Items { get; } = items;

    public override void WriteTo(Utf8JsonWriter writer)
    {
        writer.WriteStartArray();
        foreach (var item in Items)
        {
            item.WriteTo(writer);
        }

        writer.WriteEndArray();
    }
}

internal sealed class DocScalar(SourcePosition position, ScalarKind kind, string text) : DocNode(position)
{
    public ScalarKind Kind { get; } = kind;

    /// <summary>The text: a string's value, or a number as written (JSON) or as resolved (YAML).</summary>
    public string Text { get; } = text;

    public override void WriteTo(Utf8JsonWriter writer)
    {
        switch (Kind)
        {
            case ScalarKind.String:
                writer.WriteStringValue(Text);
                break;
            case ScalarKind.Number:
                writer.WriteRawValue(Text, skipInputValidation: false);
                break;
            case ScalarKind.True:
                writer.WriteBooleanValue(true);
                break;
            case ScalarKind.False:
                writer.WriteBooleanValue(false);
                break;
            default:
                writer.WriteNullValue();
                break;
        }
    }

    /// <summary>A short description for messages: "the string 'x'", "the number 3".</summary>
    public string Describe() => Kind switch
    {
        ScalarKind.String => $"the string '{Text}'",
        ScalarKind.Number => "the number " + Text,
        ScalarKind.True => "true",
        ScalarKind.False => "false",
        _ => "null",
    };
}

/// <summary>Paths into a document: <c>cases[1].stages[0].suction.pressure</c>.</summary>
internal static class DocPath
{
    /// <summary>Splits a dotted path with [n] indexes into member names and indexes.</summary>
    public static List<object> Segments(string path)
    {
        var list = new List<object>();
        if (string.IsNullOrEmpty(path))
        {
            return list;
        }

        foreach (var part in path.Split('.'))
        {
            var name = part;
            var bracket = name.IndexOf('[', StringComparison.Ordinal);
            var head = bracket < 0 ? name : name[..bracket];
            if (head.Length > 0)
            {
                list.Add(head);
            }

            while (bracket >= 0)
            {
                var close = name.IndexOf(']', bracket);
                if (close < 0)
                {
                    break;
                }

                if (int.TryParse(name.AsSpan(bracket + 1, close - bracket - 1), NumberStyles.None, CultureInfo.InvariantCulture, out var index))
                {
                    list.Add(index);
                }

                bracket = name.IndexOf('[', close);
            }
        }

        return list;
    }

    /// <summary>The position of the deepest node on <paramref name="path"/> that exists (a missing field points at its parent).</summary>
    public static SourcePosition Locate(DocNode root, string path)
    {
        var node = root;
        var position = root.Position;
        foreach (var segment in Segments(path))
        {
            switch (segment)
            {
                case string name when node is DocObject o && o.Find(name) is { } member:
                    position = member.Position;
                    node = member.Value;
                    break;
                case int index when node is DocArray a && index < a.Items.Count:
                    node = a.Items[index];
                    position = node.Position;
                    break;
                default:
                    return position;
            }
        }

        return position;
    }

    /// <summary>Joins a parent path and a member name.</summary>
    public static string Member(string parent, string name) => parent.Length == 0 ? name : parent + "." + name;

    /// <summary>FluentValidation's "Stages[0].Suction.Pressure" in the contract's camelCase ("stages[0].suction.pressure"), by the service's own translator.</summary>
    public static string FromPropertyName(string path) => DischargeGuard.Evaluation.Pipeline.ContractPaths.FromValidator(path);
}
