namespace DischargeGuard.Api;

/// <summary>
/// <c>--probe URL</c>: one GET of a health endpoint, exit 0 when it answers 2xx and 1 otherwise (including no answer
/// within the timeout). The runtime image has no curl; a container health check runs the service binary in this mode.
/// </summary>
public static class ProbeCommand
{
    /// <summary>The option that selects this mode.</summary>
    public const string Name = "--probe";

    /// <summary>The default endpoint probed: readiness on the container's port.</summary>
    public const string DefaultUrl = "http://127.0.0.1:8080/health/ready";

    /// <summary>Whether the arguments ask for a probe (and not for the service).</summary>
    public static bool IsCommand(IReadOnlyList<string> args) => args is [Name, ..];

    /// <summary>Probes the URL (the argument after <c>--probe</c>, or <see cref="DefaultUrl"/>); writes one line saying what it found.</summary>
    public static async Task<int> RunAsync(IReadOnlyList<string> args, TextWriter output, TimeSpan? timeout = null)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        var target = args.Count > 1 ? args[1] : DefaultUrl;
        if (!Uri.TryCreate(target, UriKind.Absolute, out var url) || url.Scheme is not ("http" or "https"))
        {
            await output.WriteLineAsync($"probe: not an http(s) URL: {target}").ConfigureAwait(false);
            return 1;
        }

        using var client = new HttpClient { Timeout = timeout ?? TimeSpan.FromSeconds(3) };
        try
        {
            using var response = await client.GetAsync(url).ConfigureAwait(false);
            await output.WriteLineAsync($"probe: {url} answered {(int)response.StatusCode}").ConfigureAwait(false);
            return response.IsSuccessStatusCode ? 0 : 1;
        }
        catch (Exception e) when (e is HttpRequestException or TaskCanceledException)
        {
            await output.WriteLineAsync($"probe: {url} did not answer ({e.GetType().Name})").ConfigureAwait(false);
            return 1;
        }
    }
}
