using System.Globalization;
using System.Text;
using System.Text.Json;
using System.Text.RegularExpressions;
using YamlDotNet.Core;
using YamlDotNet.Core.Events;

namespace DischargeGuard.Cli.Proposals;

/// <summary>A proposal file that cannot be read as a document; carries the position of the problem.</summary>
internal sealed class DocumentSyntaxException : Exception
{
    public DocumentSyntaxException(SourcePosition position, string field, string message)
        : base(message)
    {
        Position = position;
        Field = field;
    }

    public DocumentSyntaxException()
    {
    }

    public DocumentSyntaxException(string message)
        : base(message)
    {
    }

    public DocumentSyntaxException(string message, Exception innerException)
        : base(message, innerException)
    {
    }

    public SourcePosition Position { get; }

    public string Field { get; } = string.Empty;
}

/// <summary>
/// Reads one YAML document into a <see cref="DocNode"/> tree from the parser's events (no object mapping, no
/// reflection). Plain scalars are resolved as YAML 1.2's core schema does (null, booleans, numbers, else strings);
/// quoted scalars are strings. Anchors, aliases and several documents are refused: a proposal is a plain document.
/// </summary>
internal static partial class YamlDocumentReader
{
    private const int MaxDepth = 32;

    [GeneratedRegex(@"^[-+]?(\.[0-9]+|[0-9]+(\.[0-9]*)?)([eE][-+]?[0-9]+)?\z", RegexOptions.CultureInvariant)]
    private static partial Regex NumberPattern();

    public static DocNode Read(string text)
    {
        var parser = new Parser(new StringReader(text));
        try
        {
            parser.Consume<StreamStart>();
            if (parser.Accept<StreamEnd>(out _))
            {
                throw new DocumentSyntaxException(new SourcePosition(1, 1), string.Empty, "The file is empty; a proposal is one YAML or JSON document.");
            }

            parser.Consume<DocumentStart>();
            var root = ReadNode(parser, string.Empty, 0);
            parser.Consume<DocumentEnd>();
            if (!parser.Accept<StreamEnd>(out _))
            {
                var next = parser.Current;
                throw new DocumentSyntaxException(At(next?.Start ?? Mark.Empty), string.Empty, "The file holds more than one YAML document; give one proposal per file.");
            }

            return root;
        }
        catch (YamlException ex)
        {
            throw new DocumentSyntaxException(At(ex.Start), string.Empty, "Not valid YAML: " + Clean(ex.Message));
        }
        catch (InvalidOperationException)
        {
            // YamlDotNet's parser gives up this way on some broken flow collections; the last event read is nearby.
            var near = parser.Current?.End ?? Mark.Empty;
            throw new DocumentSyntaxException(At(near), string.Empty, "Not valid YAML after this point: is a '{' or '[' left unclosed, or a ':' missing?");
        }
    }

    private static DocNode ReadNode(IParser parser, string path, int depth)
    {
        if (depth > MaxDepth)
        {
            throw new DocumentSyntaxException(At(parser.Current?.Start ?? Mark.Empty), path, $"The document nests deeper than {MaxDepth} levels.");
        }

        if (parser.TryConsume<AnchorAlias>(out var alias))
        {
            throw new DocumentSyntaxException(At(alias.Start), path, $"YAML aliases (*{alias.Value}) are not accepted in proposals; write the values out.");
        }

        if (parser.TryConsume<Scalar>(out var scalar))
        {
            RefuseAnchor(scalar.Anchor, scalar.Start, path);
            var kind = Resolve(scalar, path);
            return new DocScalar(At(scalar.Start), kind, kind == ScalarKind.Number ? JsonNumber(scalar.Value) : scalar.Value);
        }

        if (parser.TryConsume<MappingStart>(out var mapStart))
        {
            RefuseAnchor(mapStart.Anchor, mapStart.Start, path);
            var members = new List<DocMember>();
            var seen = new HashSet<string>(StringComparer.Ordinal);
            while (!parser.TryConsume<MappingEnd>(out _))
            {
                if (!parser.TryConsume<Scalar>(out var key))
                {
                    throw new DocumentSyntaxException(At(parser.Current?.Start ?? mapStart.Start), path, "A mapping key must be a plain name.");
                }

                var name = key.Value;
                var memberPath = DocPath.Member(path, name);
                if (!seen.Add(name))
                {
                    throw new DocumentSyntaxException(At(key.Start), memberPath, $"'{name}' is given twice in the same mapping; give each field once.");
                }

                members.Add(new DocMember(name, At(key.Start), ReadNode(parser, memberPath, depth + 1)));
            }

            return new DocObject(At(mapStart.Start), members);
        }

        if (parser.TryConsume<SequenceStart>(out var seqStart))
        {
            RefuseAnchor(seqStart.Anchor, seqStart.Start, path);
            var items = new List<DocNode>();
            while (!parser.TryConsume<SequenceEnd>(out _))
            {
                items.Add(ReadNode(parser, path + "[" + items.Count.ToString(CultureInfo.InvariantCulture) + "]", depth + 1));
            }

            return new DocArray(At(seqStart.Start), items);
        }

        throw new DocumentSyntaxException(At(parser.Current?.Start ?? Mark.Empty), path, "Unexpected YAML content.");
    }

    private static void RefuseAnchor(AnchorName anchor, Mark start, string path)
    {
        if (!anchor.IsEmpty)
        {
            throw new DocumentSyntaxException(At(start), path, $"YAML anchors (&{anchor.Value}) are not accepted in proposals; write the values out.");
        }
    }

    private static ScalarKind Resolve(Scalar scalar, string path)
    {
        if (!scalar.Tag.IsEmpty && !scalar.Tag.IsNonSpecific)
        {
            return scalar.Tag.Value switch
            {
                "tag:yaml.org,2002:str" => ScalarKind.String,
                _ => throw new DocumentSyntaxException(At(scalar.Start), path, $"The YAML tag '{scalar.Tag.Value}' is not accepted; only !!str is."),
            };
        }

        if (scalar.Style != ScalarStyle.Plain)
        {
            return ScalarKind.String;
        }

        var v = scalar.Value;
        return v switch
        {
            "" or "~" or "null" or "Null" or "NULL" => ScalarKind.Null,
            "true" or "True" or "TRUE" => ScalarKind.True,
            "false" or "False" or "FALSE" => ScalarKind.False,
            _ when NumberPattern().IsMatch(v) => Number(v, scalar.Start, path),
            _ => ScalarKind.String,
        };
    }

    private static ScalarKind Number(string text, Mark start, string path) =>
        double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out var d) && double.IsFinite(d)
            ? ScalarKind.Number
            : throw new DocumentSyntaxException(At(start), path, $"The number {text} is out of range.");

    // A YAML number such as "+1", ".5" or "1." is not a JSON number; normalise it before it is written as JSON.
    internal static string JsonNumber(string yamlNumber)
    {
        var d = double.Parse(yamlNumber, NumberStyles.Float, CultureInfo.InvariantCulture);
        return d.ToString("R", CultureInfo.InvariantCulture);
    }

    private static SourcePosition At(Mark mark) => new(Math.Max(1, mark.Line), Math.Max(1, mark.Column));

    private static string Clean(string message)
    {
        // YamlDotNet prefixes "(Line: 3, Col: 5, Idx: 40) - (Line: …): "; the position is reported separately.
        var i = message.IndexOf("): ", StringComparison.Ordinal);
        return i >= 0 && message.StartsWith("(Line", StringComparison.Ordinal) ? message[(i + 3)..] : message;
    }
}

/// <summary>Reads one JSON document into a <see cref="DocNode"/> tree with the line and column of every node.</summary>
internal static class JsonDocumentReader
{
    private const int MaxDepth = 32;

    public static DocNode Read(byte[] utf8)
    {
        var lineStarts = new List<int> { 0 };
        for (var i = 0; i < utf8.Length; i++)
        {
            if (utf8[i] == (byte)'\n')
            {
                lineStarts.Add(i + 1);
            }
        }

        var reader = new Utf8JsonReader(utf8, new JsonReaderOptions { AllowTrailingCommas = false, CommentHandling = JsonCommentHandling.Disallow, MaxDepth = MaxDepth + 1 });
        try
        {
            if (!reader.Read())
            {
                throw new DocumentSyntaxException(new SourcePosition(1, 1), string.Empty, "The file is empty; a proposal is one YAML or JSON document.");
            }

            var root = ReadNode(ref reader, utf8, lineStarts, string.Empty);
            if (reader.Read())
            {
                throw new DocumentSyntaxException(At(reader.TokenStartIndex, utf8, lineStarts), string.Empty, "Text after the end of the JSON document.");
            }

            return root;
        }
        catch (JsonException ex)
        {
            throw new DocumentSyntaxException(new SourcePosition((ex.LineNumber ?? 0) + 1, (ex.BytePositionInLine ?? 0) + 1), string.Empty, "Not valid JSON: " + CleanJson(ex.Message));
        }
    }

    private static DocNode ReadNode(ref Utf8JsonReader reader, byte[] utf8, List<int> lineStarts, string path)
    {
        var position = At(reader.TokenStartIndex, utf8, lineStarts);
        switch (reader.TokenType)
        {
            case JsonTokenType.StartObject:
            {
                var members = new List<DocMember>();
                var seen = new HashSet<string>(StringComparer.Ordinal);
                while (reader.Read() && reader.TokenType != JsonTokenType.EndObject)
                {
                    var name = reader.GetString()!;
                    var keyPosition = At(reader.TokenStartIndex, utf8, lineStarts);
                    var memberPath = DocPath.Member(path, name);
                    if (!seen.Add(name))
                    {
                        throw new DocumentSyntaxException(keyPosition, memberPath, $"'{name}' is given twice in the same object; give each field once.");
                    }

                    reader.Read();
                    members.Add(new DocMember(name, keyPosition, ReadNode(ref reader, utf8, lineStarts, memberPath)));
                }

                return new DocObject(position, members);
            }

            case JsonTokenType.StartArray:
            {
                var items = new List<DocNode>();
                while (reader.Read() && reader.TokenType != JsonTokenType.EndArray)
                {
                    items.Add(ReadNode(ref reader, utf8, lineStarts, path + "[" + items.Count.ToString(CultureInfo.InvariantCulture) + "]"));
                }

                return new DocArray(position, items);
            }

            case JsonTokenType.String:
                return new DocScalar(position, ScalarKind.String, reader.GetString()!);
            case JsonTokenType.Number:
                return new DocScalar(position, ScalarKind.Number, Encoding.UTF8.GetString(reader.ValueSpan));
            case JsonTokenType.True:
                return new DocScalar(position, ScalarKind.True, "true");
            case JsonTokenType.False:
                return new DocScalar(position, ScalarKind.False, "false");
            default:
                return new DocScalar(position, ScalarKind.Null, "null");
        }
    }

    private static SourcePosition At(long offset, byte[] utf8, List<int> lineStarts)
    {
        var index = lineStarts.BinarySearch((int)offset);
        var line = index >= 0 ? index : ~index - 1;
        var start = lineStarts[line];
        // Columns count characters, not bytes, so a "°" earlier on the line does not shift them.
        var column = Encoding.UTF8.GetCharCount(utf8, start, (int)offset - start) + 1;
        return new SourcePosition(line + 1, column);
    }

    private static string CleanJson(string message)
    {
        var i = message.IndexOf(" LineNumber:", StringComparison.Ordinal);
        var s = i >= 0 ? message[..i] : message;
        var p = s.IndexOf(" Path:", StringComparison.Ordinal);
        return (p >= 0 ? s[..p] : s).Trim().TrimEnd('|').Trim();
    }
}
