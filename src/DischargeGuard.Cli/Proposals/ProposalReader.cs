using System.Globalization;
using System.Text;
using System.Text.Encodings.Web;
using System.Text.Json;
using System.Text.Json.Serialization.Metadata;
using DischargeGuard.Evaluation.Contract;

namespace DischargeGuard.Cli.Proposals;

/// <summary>An error in an input file: file, line, column, the field in the file's own terms, and what is wrong.</summary>
/// <param name="File">The file as given on the command line.</param>
/// <param name="Line">1-based line (0 when the file could not be read at all).</param>
/// <param name="Column">1-based column.</param>
/// <param name="Field">The field path in the file, e.g. <c>cases[1].stages[0].discharge.pressure</c> (empty for the whole document).</param>
/// <param name="Message">What is wrong and what is accepted.</param>
public sealed record InputError(string File, long Line, long Column, string Field, string Message)
{
    /// <inheritdoc />
    public override string ToString() =>
        Line > 0
            ? string.Create(CultureInfo.InvariantCulture, $"{File}:{Line}:{Column}: {(Field.Length > 0 ? Field + ": " : string.Empty)}{Message}")
            : $"{File}: {(Field.Length > 0 ? Field + ": " : string.Empty)}{Message}";
}

/// <summary>One operating case of a proposal, as the request the API takes.</summary>
public sealed class ProposalCase
{
    private readonly DocNode _root;
    private readonly string _prefix;

    internal ProposalCase(string file, string name, int? index, DocNode root, string prefix)
    {
        File = file;
        Name = name;
        Index = index;
        _root = root;
        _prefix = prefix;
    }

    /// <summary>The file as given on the command line.</summary>
    public string File { get; }

    /// <summary>The case name (the file name for a single-request file).</summary>
    public string Name { get; }

    /// <summary>The index in <c>cases</c>, or null for a single-request file.</summary>
    public int? Index { get; }

    /// <summary>The request, when it could be read.</summary>
    public EvaluationRequest? Request { get; internal set; }

    /// <summary>The request as JSON (UTF-8): what is sent to the service and stored in the audit record.</summary>
    public byte[] RequestJson { get; internal set; } = [];

    /// <summary>Errors found while reading the case; a case with errors is not evaluated.</summary>
    public List<InputError> Errors { get; } = [];

    /// <summary>The asset tag, when the request has one.</summary>
    public string? Asset => Request?.Asset;

    /// <summary>An error at a request path (<c>stages[0].suction.pressure</c>), located in the file.</summary>
    /// <param name="requestPath">The path in the request, as the validators and the service name it.</param>
    /// <param name="message">The message.</param>
    /// <returns>The error with file, line and field in the file's terms.</returns>
    public InputError ErrorAt(string requestPath, string message)
    {
        var source = SourcePathOf(requestPath);
        var position = DocPath.Locate(_root, source);
        return new InputError(File, position.Line, position.Column, source, message);
    }

    internal string SourcePathOf(string requestPath)
    {
        if (_prefix.Length == 0)
        {
            return requestPath;
        }

        var first = DocPath.Segments(requestPath).FirstOrDefault() as string;
        // Asset and site are the proposal's; each case inherits them.
        return first is "asset" or "site" ? requestPath : requestPath.Length == 0 ? _prefix : _prefix + "." + requestPath;
    }
}

/// <summary>A proposal file and its cases; or the errors that kept it from being read.</summary>
/// <param name="File">The file as given.</param>
/// <param name="Cases">The cases (empty when the file could not be read).</param>
/// <param name="Errors">File-level errors.</param>
public sealed record ProposalFile(string File, IReadOnlyList<ProposalCase> Cases, IReadOnlyList<InputError> Errors);

/// <summary>
/// Reads proposal files: YAML or JSON, either one API request document (one case) or
/// <c>{"asset", "site", "cases": [{"name", …request fields}]}</c> whose cases inherit asset and site. Every error names
/// the file, line and field. See schemas/proposal.schema.json.
/// </summary>
public static class ProposalReader
{
    /// <summary>Largest proposal file read.</summary>
    public const long MaxFileBytes = 1 << 20;

    private static readonly string[] ProposalKeys = ["$schema", "title", "description", "asset", "site", "cases"];

    private static readonly JsonWriterOptions WriterOptions = new() { Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping, Indented = false };

    /// <summary>Reads a proposal file from disk.</summary>
    /// <param name="path">The path as given on the command line.</param>
    /// <returns>The cases, or the errors.</returns>
    public static ProposalFile ReadFile(string path)
    {
        ArgumentNullException.ThrowIfNull(path);
        byte[] bytes;
        try
        {
            var info = new FileInfo(path);
            if (!info.Exists)
            {
                return Failed(path, new InputError(path, 0, 0, string.Empty,
                    Directory.Exists(path) ? "This is a directory; give the proposal files in it (e.g. its *.yaml files)." : "No such file."));
            }

            if (info.Length > MaxFileBytes)
            {
                return Failed(path, new InputError(path, 0, 0, string.Empty, $"The file is larger than {MaxFileBytes} bytes; a proposal is a small hand-edited document."));
            }

            bytes = File.ReadAllBytes(path);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            return Failed(path, new InputError(path, 0, 0, string.Empty, "Cannot read the file: " + ex.Message));
        }

        return Read(path, bytes);
    }

    /// <summary>Reads a proposal from its bytes; YAML unless the name ends in .json or the text starts with '{'.</summary>
    /// <param name="file">The file name for messages.</param>
    /// <param name="bytes">The content (UTF-8).</param>
    /// <returns>The cases, or the errors.</returns>
    public static ProposalFile Read(string file, byte[] bytes)
    {
        ArgumentNullException.ThrowIfNull(file);
        ArgumentNullException.ThrowIfNull(bytes);
        var span = bytes.AsSpan();
        if (span.StartsWith("\uFEFF"u8))
        {
            bytes = span[3..].ToArray();
        }

        string text;
        try
        {
            text = new UTF8Encoding(false, true).GetString(bytes);
        }
        catch (DecoderFallbackException)
        {
            return Failed(file, new InputError(file, 1, 1, string.Empty, "The file is not UTF-8 text."));
        }

        DocNode root;
        try
        {
            var json = file.EndsWith(".json", StringComparison.OrdinalIgnoreCase) || text.TrimStart().StartsWith('{');
            root = json ? JsonDocumentReader.Read(bytes) : YamlDocumentReader.Read(text);
        }
        catch (DocumentSyntaxException ex)
        {
            return Failed(file, new InputError(file, ex.Position.Line, ex.Position.Column, ex.Field, ex.Message));
        }

        if (root is not DocObject top)
        {
            return Failed(file, new InputError(file, root.Position.Line, root.Position.Column, string.Empty,
                "A proposal is an object: one evaluation request, or {\"asset\", \"site\", \"cases\": [...]}."));
        }

        return top.Find("cases") is null ? Single(file, top) : Multi(file, top);
    }

    private static ProposalFile Single(string file, DocObject top)
    {
        var name = Path.GetFileNameWithoutExtension(file);
        var c = new ProposalCase(file, name, null, top, string.Empty);
        Build(c, top.Members.Where(m => m.Name != "$schema"), []);
        return new ProposalFile(file, [c], []);
    }

    private static ProposalFile Multi(string file, DocObject top)
    {
        var errors = new List<InputError>();
        foreach (var m in top.Members.Where(m => !ProposalKeys.Contains(m.Name, StringComparer.Ordinal)))
        {
            errors.Add(new InputError(file, m.Position.Line, m.Position.Column, m.Name,
                $"Unknown field '{m.Name}' in a proposal; accepted: {string.Join(", ", ProposalKeys)}. Request fields go in each case."));
        }

        foreach (var key in new[] { "title", "description" })
        {
            if (top.Find(key) is { } m && m.Value is not DocScalar { Kind: ScalarKind.String })
            {
                errors.Add(new InputError(file, m.Position.Line, m.Position.Column, key, $"'{key}' is text."));
            }
        }

        var casesMember = top.Find("cases")!;
        if (casesMember.Value is not DocArray { Items.Count: > 0 } cases)
        {
            errors.Add(new InputError(file, casesMember.Position.Line, casesMember.Position.Column, "cases", "'cases' is a list of at least one case, each {\"name\", …request fields}."));
            return new ProposalFile(file, [], errors);
        }

        if (errors.Count > 0)
        {
            return new ProposalFile(file, [], errors);
        }

        var inherited = top.Members.Where(m => m.Name is "asset" or "site").ToList();
        var list = new List<ProposalCase>();
        var names = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var i = 0; i < cases.Items.Count; i++)
        {
            var prefix = "cases[" + i.ToString(CultureInfo.InvariantCulture) + "]";
            var item = cases.Items[i];
            if (item is not DocObject o)
            {
                errors.Add(new InputError(file, item.Position.Line, item.Position.Column, prefix, "A case is an object {\"name\", …request fields}."));
                continue;
            }

            var nameMember = o.Find("name");
            var name = nameMember?.Value is DocScalar { Kind: ScalarKind.String } s ? s.Text.Trim() : string.Empty;
            var c = new ProposalCase(file, name.Length > 0 ? name : prefix, i, top, prefix);
            list.Add(c);
            if (name.Length == 0)
            {
                var at = nameMember?.Position ?? o.Position;
                c.Errors.Add(new InputError(file, at.Line, at.Column, prefix + ".name", "Each case has a name (text), e.g. \"design\", \"hot-day\", \"recycle\"."));
            }
            else if (names.TryGetValue(name, out var first))
            {
                c.Errors.Add(new InputError(file, nameMember!.Position.Line, nameMember.Position.Column, prefix + ".name",
                    string.Create(CultureInfo.InvariantCulture, $"The case name '{name}' is also used by cases[{first}]; case names are unique in a proposal.")));
            }
            else
            {
                names[name] = i;
            }

            foreach (var m in o.Members.Where(m => m.Name is "asset" or "site"))
            {
                c.Errors.Add(new InputError(file, m.Position.Line, m.Position.Column, prefix + "." + m.Name,
                    $"'{m.Name}' is given once, at the top of the proposal; every case inherits it."));
            }

            Build(c, inherited.Concat(o.Members.Where(m => m.Name is not ("name" or "asset" or "site"))), c.Errors);
        }

        return new ProposalFile(file, list, errors);
    }

    // Writes the case's request document, checks its field names against the contract, and deserialises it with the
    // contract's own JSON options (unknown fields refused, strict numbers).
    private static void Build(ProposalCase c, IEnumerable<DocMember> members, List<InputError> earlier)
    {
        var request = new DocObject(new SourcePosition(1, 1), members.ToList());
        using var buffer = new MemoryStream();
        using (var writer = new Utf8JsonWriter(buffer, WriterOptions))
        {
            request.WriteTo(writer);
        }

        c.RequestJson = buffer.ToArray();
        var typeInfo = EvaluationJson.Options.GetTypeInfo(typeof(EvaluationRequest));
        CheckFields(c, request, typeInfo, string.Empty);
        if (c.Errors.Count > 0 || earlier.Count > 0)
        {
            return;
        }

        try
        {
            c.Request = (EvaluationRequest?)JsonSerializer.Deserialize(c.RequestJson, typeInfo);
        }
        catch (JsonException ex)
        {
            // The service names a malformed value by the same translator, so the gate and the service agree on the field.
            var path = DischargeGuard.Evaluation.Pipeline.ContractPaths.FromJsonPath(ex.Path);
            c.Errors.Add(c.ErrorAt(path, TypeMessage(ex, request, path)));
        }
    }

    private static void CheckFields(ProposalCase c, DocNode node, JsonTypeInfo info, string path)
    {
        switch (info.Kind)
        {
            case JsonTypeInfoKind.Object when node is DocObject o:
                foreach (var m in o.Members)
                {
                    var memberPath = DocPath.Member(path, m.Name);
                    var property = info.Properties.FirstOrDefault(p => string.Equals(p.Name, m.Name, StringComparison.Ordinal));
                    if (property is null)
                    {
                        var near = info.Properties.FirstOrDefault(p => string.Equals(p.Name, m.Name, StringComparison.OrdinalIgnoreCase))
                            ?? info.Properties.Where(p => Distance(p.Name, m.Name) <= 2).OrderBy(p => Distance(p.Name, m.Name)).FirstOrDefault();
                        var hint = near is null ? string.Empty : $" Did you mean '{near.Name}'?";
                        c.Errors.Add(c.ErrorAt(memberPath,
                            $"Unknown field '{m.Name}'.{hint} Accepted here: {string.Join(", ", info.Properties.Select(p => p.Name).Order(StringComparer.Ordinal))}."));
                        continue;
                    }

                    CheckFields(c, m.Value, info.Options.GetTypeInfo(property.PropertyType), memberPath);
                }

                break;
            case JsonTypeInfoKind.Enumerable when node is DocArray a && info.ElementType is { } element:
                var elementInfo = info.Options.GetTypeInfo(element);
                for (var i = 0; i < a.Items.Count; i++)
                {
                    CheckFields(c, a.Items[i], elementInfo, path + "[" + i.ToString(CultureInfo.InvariantCulture) + "]");
                }

                break;
            default:
                // Scalars, dictionaries (composition keys are species) and quantities: the deserialiser and validators check them.
                break;
        }
    }

    private static string TypeMessage(JsonException ex, DocNode request, string path)
    {
        var found = Find(request, path);
        var what = found is DocScalar s ? s.Describe() : found is DocArray ? "a list" : found is DocObject ? "an object" : "this value";
        var detail = ex.Message;
        var cut = detail.IndexOf(" Path:", StringComparison.Ordinal);
        if (cut >= 0)
        {
            detail = detail[..cut];
        }

        // The contract's own messages (the quantity converter's) are written for callers; the framework's name .NET
        // types, so say instead what the contract expects at that path.
        return detail.StartsWith("The JSON value could not be converted", StringComparison.Ordinal) || detail.StartsWith("The JSON", StringComparison.Ordinal)
            ? $"Expected {Expected(path)} here, found {what}."
            : detail;
    }

    private static string Expected(string path)
    {
        var info = EvaluationJson.Options.GetTypeInfo(typeof(EvaluationRequest));
        foreach (var segment in DocPath.Segments(path))
        {
            Type? next = segment switch
            {
                string name when info.Kind == JsonTypeInfoKind.Object => info.Properties.FirstOrDefault(p => p.Name == name)?.PropertyType,
                string when info.Kind == JsonTypeInfoKind.Dictionary => info.ElementType,
                int when info.Kind == JsonTypeInfoKind.Enumerable => info.ElementType,
                _ => null,
            };
            if (next is null)
            {
                return "another kind of value";
            }

            info = EvaluationJson.Options.GetTypeInfo(next);
        }

        var type = Nullable.GetUnderlyingType(info.Type) ?? info.Type;
        return type == typeof(double) || type == typeof(int) ? "a number"
            : type == typeof(bool) ? "true or false"
            : type == typeof(string) ? "text"
            : type == typeof(QuantityInput) ? "a quantity (\"<number> <unit>\" or {value, unit})"
            : info.Kind == JsonTypeInfoKind.Dictionary ? "an object of names to numbers"
            : info.Kind == JsonTypeInfoKind.Enumerable ? "a list"
            : "an object";
    }

    private static int Distance(string a, string b)
    {
        var d = new int[b.Length + 1];
        for (var j = 0; j <= b.Length; j++)
        {
            d[j] = j;
        }

        for (var i = 1; i <= a.Length; i++)
        {
            var diagonal = d[0];
            d[0] = i;
            for (var j = 1; j <= b.Length; j++)
            {
                var above = d[j];
                d[j] = Math.Min(Math.Min(d[j] + 1, d[j - 1] + 1), diagonal + (char.ToLowerInvariant(a[i - 1]) == char.ToLowerInvariant(b[j - 1]) ? 0 : 1));
                diagonal = above;
            }
        }

        return d[b.Length];
    }

    private static DocNode? Find(DocNode root, string path)
    {
        DocNode? node = root;
        foreach (var segment in DocPath.Segments(path))
        {
            node = segment switch
            {
                string name when node is DocObject o => o.Find(name)?.Value,
                int index when node is DocArray a && index < a.Items.Count => a.Items[index],
                _ => null,
            };
            if (node is null)
            {
                return null;
            }
        }

        return node;
    }

    private static ProposalFile Failed(string file, InputError error) => new(file, [], [error]);
}
