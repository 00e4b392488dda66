namespace DischargeGuard.Deploy.Tests;

/// <summary>One Dockerfile instruction: its keyword (upper case), its arguments with continuations joined, its line.</summary>
internal sealed record Instruction(string Keyword, string Arguments, int Line);

/// <summary>A Dockerfile read into stages of instructions (comments and parser directives dropped).</summary>
internal sealed class DockerfileModel
{
    public List<List<Instruction>> Stages { get; } = [];

    public IEnumerable<Instruction> All => Stages.SelectMany(s => s);

    public List<Instruction> Runtime => Stages[^1];

    public static DockerfileModel Load(string path)
    {
        var model = new DockerfileModel();
        var lines = File.ReadAllLines(path);
        var current = (List<Instruction>?)null;
        for (var i = 0; i < lines.Length; i++)
        {
            var line = lines[i].Trim();
            if (line.Length == 0 || line.StartsWith('#'))
            {
                continue;
            }

            var start = i + 1;
            var text = line;
            while (text.EndsWith('\\') && i + 1 < lines.Length)
            {
                text = text[..^1].TrimEnd() + " ";
                var next = lines[++i].Trim();
                if (!next.StartsWith('#'))
                {
                    text += next;
                }
            }

            var space = text.IndexOf(' ', StringComparison.Ordinal);
            var keyword = (space < 0 ? text : text[..space]).ToUpperInvariant();
            var args = space < 0 ? string.Empty : text[(space + 1)..].Trim();
            if (keyword == "FROM")
            {
                current = [];
                model.Stages.Add(current);
            }

            if (current is null)
            {
                if (keyword != "ARG")
                {
                    throw new InvalidDataException($"Dockerfile line {start}: {keyword} before the first FROM.");
                }

                continue;
            }

            current.Add(new Instruction(keyword, args, start));
        }

        return model;
    }

    /// <summary>The KEY=VALUE pairs of a stage's ENV instructions (values without spaces, as this Dockerfile writes them).</summary>
    public static Dictionary<string, string> Env(IEnumerable<Instruction> stage) =>
        stage.Where(s => s.Keyword == "ENV")
            .SelectMany(s => s.Arguments.Split(' ', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries))
            .Select(pair => pair.Split('=', 2))
            .ToDictionary(p => p[0], p => p.Length > 1 ? p[1] : string.Empty, StringComparer.Ordinal);
}
