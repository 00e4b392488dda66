namespace DischargeGuard.Deploy.Tests;

/// <summary>Paths in the repository, found from the test binary by walking up to DischargeGuard.sln.</summary>
internal static class Repo
{
    public static string Root => RepositoryRoot.Path;

    public static string Kubernetes => Path.Combine(Root, "deploy", "kubernetes");

    public static string At(params string[] parts) => Path.Combine([Root, .. parts]);

    /// <summary>Repository-relative path with forward slashes, for messages.</summary>
    public static string Relative(string path) => Path.GetRelativePath(Root, path).Replace('\\', '/');

    /// <summary>Every file under the repository with one of the extensions, skipping build output, VCS data and dependencies.</summary>
    public static IEnumerable<string> Files(params string[] extensions)
    {
        var skip = new HashSet<string>(StringComparer.Ordinal) { ".git", "bin", "obj", "node_modules", "TestResults", "BenchmarkDotNet.Artifacts", "data" };
        var pending = new Stack<string>();
        pending.Push(Root);
        while (pending.Count > 0)
        {
            var dir = pending.Pop();
            foreach (var sub in Directory.EnumerateDirectories(dir))
            {
                if (!skip.Contains(Path.GetFileName(sub)))
                {
                    pending.Push(sub);
                }
            }

            foreach (var file in Directory.EnumerateFiles(dir))
            {
                if (extensions.Any(e => file.EndsWith(e, StringComparison.OrdinalIgnoreCase)))
                {
                    yield return file;
                }
            }
        }
    }
}
