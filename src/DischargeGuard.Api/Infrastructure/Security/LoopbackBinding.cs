using System.Net;

namespace DischargeGuard.Api.Infrastructure.Security;

/// <summary>What the host was asked to listen on and what it listens on after the loopback-only rule.</summary>
/// <param name="KeyCount">Configured API keys.</param>
/// <param name="Configured">Every configured address (Urls / ASPNETCORE_URLS, HTTP(S)_PORTS, Kestrel endpoints).</param>
/// <param name="Effective">The same addresses after the rule.</param>
public sealed record BindingDecision(int KeyCount, IReadOnlyList<string> Configured, IReadOnlyList<string> Effective)
{
    /// <summary>Some address was moved to loopback.</summary>
    public bool Overridden => !Configured.SequenceEqual(Effective, StringComparer.Ordinal);
}

/// <summary>
/// Without API keys the service is anonymous, so it must not be reachable from the network: every configured address
/// that is not loopback is replaced by 127.0.0.1 with the same scheme and port.
/// </summary>
public static class LoopbackBinding
{
    /// <summary>The addresses to listen on, given the configured ones and how many keys there are.</summary>
    public static IReadOnlyList<string> Effective(IReadOnlyList<string> configured, int keyCount)
    {
        ArgumentNullException.ThrowIfNull(configured);
        return keyCount > 0 ? configured : configured.Select(ToLoopback).ToArray();
    }

    /// <summary>One address moved to 127.0.0.1 unless it already is loopback (localhost, 127.0.0.0/8, [::1]) or a Unix socket.</summary>
    public static string ToLoopback(string url)
    {
        ArgumentNullException.ThrowIfNull(url);
        var schemeEnd = url.IndexOf("://", StringComparison.Ordinal);
        if (schemeEnd < 0)
        {
            return url;
        }

        var authorityStart = schemeEnd + 3;
        var rest = url[authorityStart..];
        if (rest.StartsWith("unix:", StringComparison.OrdinalIgnoreCase))
        {
            return url;
        }

        var pathStart = rest.IndexOf('/', StringComparison.Ordinal);
        var authority = pathStart < 0 ? rest : rest[..pathStart];
        var path = pathStart < 0 ? string.Empty : rest[pathStart..];
        string host;
        string port;
        if (authority.StartsWith('['))
        {
            var close = authority.IndexOf(']', StringComparison.Ordinal);
            host = close < 0 ? authority : authority[..(close + 1)];
            port = close < 0 ? string.Empty : authority[(close + 1)..];
        }
        else
        {
            var colon = authority.LastIndexOf(':');
            host = colon < 0 ? authority : authority[..colon];
            port = colon < 0 ? string.Empty : authority[colon..];
        }

        return IsLoopback(host) ? url : string.Concat(url.AsSpan(0, authorityStart), "127.0.0.1", port, path);
    }

    /// <summary>Whether a host (as written in a URL) is loopback.</summary>
    public static bool IsLoopback(string host)
    {
        ArgumentNullException.ThrowIfNull(host);
        if (string.Equals(host, "localhost", StringComparison.OrdinalIgnoreCase))
        {
            return true;
        }

        var bare = host.StartsWith('[') && host.EndsWith(']') ? host[1..^1] : host;
        return IPAddress.TryParse(bare, out var ip) && IPAddress.IsLoopback(ip);
    }

    /// <summary>Reads the configured addresses and, with no keys, rewrites the non-loopback ones in configuration.</summary>
    internal static BindingDecision Apply(WebApplicationBuilder builder)
    {
        var configuration = builder.Configuration;
        var keyCount = configuration.GetSection($"{AuthOptions.SectionName}:Keys").GetChildren().Count();
        var configured = new List<string>();
        var overrides = new Dictionary<string, string?>(StringComparer.OrdinalIgnoreCase);

        // Urls / ASPNETCORE_URLS / --urls; without them, ASPNETCORE_HTTP_PORTS and HTTPS_PORTS (which mean every interface).
        var urls = Split(configuration["urls"]);
        if (urls.Count == 0)
        {
            urls = [.. Split(configuration["http_ports"]).Select(p => "http://*:" + p), .. Split(configuration["https_ports"]).Select(p => "https://*:" + p)];
        }

        configured.AddRange(urls);
        var effectiveUrls = Effective(urls, keyCount);
        if (!urls.SequenceEqual(effectiveUrls, StringComparer.Ordinal))
        {
            builder.WebHost.UseUrls([.. effectiveUrls]);
        }

        var effective = new List<string>(effectiveUrls);
        foreach (var endpoint in configuration.GetSection("Kestrel:Endpoints").GetChildren())
        {
            if (endpoint["Url"] is not { Length: > 0 } url)
            {
                continue;
            }

            configured.Add(url);
            var moved = Effective([url], keyCount)[0];
            effective.Add(moved);
            if (!string.Equals(moved, url, StringComparison.Ordinal))
            {
                overrides[$"Kestrel:Endpoints:{endpoint.Key}:Url"] = moved;
            }
        }

        if (overrides.Count > 0)
        {
            // Added last, so it wins over every earlier source when Kestrel reads its endpoints at start.
            configuration.AddInMemoryCollection(overrides);
        }

        return new BindingDecision(keyCount, configured, effective);
    }

    private static List<string> Split(string? value) =>
        string.IsNullOrWhiteSpace(value) ? [] : [.. value.Split(';', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries)];

    internal static string Describe(IEnumerable<string> urls) => string.Join(", ", urls.DefaultIfEmpty("(framework default)"));
}
