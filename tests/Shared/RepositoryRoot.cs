namespace DischargeGuard.Testing;

/// <summary>The repository's root folder, found by walking up from the test binary to DischargeGuard.sln (one copy, linked into every test project).</summary>
internal static class RepositoryRoot
{
    private static readonly Lazy<string> Root = new(() =>
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
        {
            if (File.Exists(System.IO.Path.Combine(dir.FullName, "DischargeGuard.sln")))
            {
                return dir.FullName;
            }
        }

        throw new InvalidOperationException($"DischargeGuard.sln not found above {AppContext.BaseDirectory}.");
    });

    /// <summary>The absolute path of the repository root.</summary>
    public static string Path => Root.Value;
}
