using System.Text.RegularExpressions;
using Microsoft.Extensions.Options;

namespace DischargeGuard.Api.Infrastructure.Security;

/// <summary>The roles a key can hold.</summary>
public static class Roles
{
    /// <summary>Evaluates, and reads back the evaluations it recorded itself.</summary>
    public const string Technician = "technician";

    /// <summary>Reads any recorded evaluation (batch, query, export and replay will be theirs too).</summary>
    public const string Planner = "planner";

    /// <summary>An automated gate (permit system, control-of-work tool): evaluates only.</summary>
    public const string Gate = "gate";

    /// <summary>Checks and reloads rules; reads any recorded evaluation.</summary>
    public const string Admin = "admin";

    /// <summary>Every role.</summary>
    public static readonly IReadOnlyList<string> All = [Technician, Planner, Gate, Admin];
}

/// <summary>API keys (section <c>Auth</c>). With no keys the service is anonymous and listens on loopback only.</summary>
public sealed class AuthOptions
{
    /// <summary>The configuration section.</summary>
    public const string SectionName = "Auth";

    /// <summary>The header that carries the key.</summary>
    public const string HeaderName = "X-Api-Key";

    /// <summary>The authentication scheme.</summary>
    public const string Scheme = "ApiKey";

    /// <summary>The accepted keys, by the SHA-256 of the key (never the key itself).</summary>
    public IList<ApiKeyEntry> Keys { get; } = [];
}

/// <summary>One accepted key.</summary>
public sealed class ApiKeyEntry
{
    /// <summary>Who holds the key (e.g. <c>tablet-07</c>); the audit records this as the caller.</summary>
    public string Id { get; set; } = string.Empty;

    /// <summary>SHA-256 of the key's UTF-8 text, 64 hex digits.</summary>
    public string Sha256 { get; set; } = string.Empty;

    /// <summary>Roles, from <see cref="Security.Roles.All"/>.</summary>
    public IList<string> Roles { get; } = [];

    /// <summary>
    /// The sites the key is bound to (<see cref="KeyScope.AnySite"/> for every site). A bound key reads only records of
    /// these sites and may post only for them. Empty: a technician or gate key reads only the records it made itself; a
    /// planner or admin key reads every record.
    /// </summary>
    public IList<string> Sites { get; } = [];

    /// <summary>Optionally, the asset tags the key is bound to within its <see cref="Sites"/> (empty: any asset there).</summary>
    public IList<string> Assets { get; } = [];

    /// <summary>Bytes this key may store in the audit per UTC day; null takes the default of its roles (section <c>Quotas</c>).</summary>
    public long? BytesPerDay { get; set; }
}

/// <summary>Per-caller rate limit (section <c>RateLimits</c>): a token bucket per key id, or per remote address without a key.</summary>
public sealed class RateLimitOptions
{
    /// <summary>The configuration section.</summary>
    public const string SectionName = "RateLimits";

    /// <summary>Sustained requests per second per caller (fractions allowed: 0.5 is one request every 2 s).</summary>
    [System.ComponentModel.DataAnnotations.Range(0.001, 100_000)]
    public double PermitsPerSecond { get; set; } = 20;

    /// <summary>Requests a caller may make at once before the sustained rate applies.</summary>
    [System.ComponentModel.DataAnnotations.Range(1, 1_000_000)]
    public int Burst { get; set; } = 40;
}

/// <summary>Refuses a key list that would fail open or be ambiguous; names the entry by index and id, never by hash.</summary>
internal sealed partial class AuthOptionsValidator : IValidateOptions<AuthOptions>
{
    public ValidateOptionsResult Validate(string? name, AuthOptions options)
    {
        var failures = new List<string>();
        var ids = new HashSet<string>(StringComparer.OrdinalIgnoreCase);
        var hashes = new HashSet<string>(StringComparer.OrdinalIgnoreCase);
        for (var i = 0; i < options.Keys.Count; i++)
        {
            var key = options.Keys[i];
            var where = $"Auth:Keys:{i} ('{key.Id}')";
            if (!IdPattern().IsMatch(key.Id))
            {
                failures.Add($"{where}: id must be 1-64 letters, digits, '.', '_' or '-', beginning and ending with a letter or digit.");
            }
            else if (!ids.Add(key.Id))
            {
                failures.Add($"{where}: id is used by another key.");
            }

            if (!HashPattern().IsMatch(key.Sha256))
            {
                failures.Add($"{where}: sha256 must be 64 hex digits (run the new-key command).");
            }
            else if (!hashes.Add(key.Sha256))
            {
                failures.Add($"{where}: the same key is configured twice.");
            }

            if (key.Roles.Count == 0)
            {
                failures.Add($"{where}: roles is empty; give at least one of {string.Join(", ", Roles.All)}.");
            }

            foreach (var role in key.Roles.Where(r => !Roles.All.Contains(r, StringComparer.Ordinal)))
            {
                failures.Add($"{where}: unknown role '{role}'; roles are {string.Join(", ", Roles.All)}.");
            }

            foreach (var (list, listName) in new[] { (key.Sites, "sites"), (key.Assets, "assets") })
            {
                if (list.Any(v => string.IsNullOrWhiteSpace(v) || v.Length > 256 || v.Trim() != v))
                {
                    failures.Add($"{where}: {listName} holds a blank, padded or over-long entry; give exact tags of 1-256 characters, or \"*\".");
                }
            }

            if (key.Assets.Count > 0 && key.Sites.Count == 0)
            {
                failures.Add($"{where}: assets narrow the key's sites; give sites too (\"*\" for every site).");
            }

            if (key.BytesPerDay is < 0)
            {
                failures.Add($"{where}: bytesPerDay must be 0 or more.");
            }
        }

        return failures.Count == 0 ? ValidateOptionsResult.Success : ValidateOptionsResult.Fail(failures);
    }

    [GeneratedRegex(@"^[A-Za-z0-9](?:[A-Za-z0-9._-]{0,62}[A-Za-z0-9])?\z", RegexOptions.CultureInvariant)]
    internal static partial Regex IdPattern();

    [GeneratedRegex(@"^[0-9A-Fa-f]{64}\z", RegexOptions.CultureInvariant)]
    private static partial Regex HashPattern();
}
