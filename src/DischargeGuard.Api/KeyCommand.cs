using System.Security.Cryptography;
using System.Text.Encodings.Web;
using System.Text.Json;
using DischargeGuard.Api.Infrastructure.Security;

namespace DischargeGuard.Api;

/// <summary>
/// <c>new-key [--id ID] [--role ROLE]... [--site SITE]... [--asset ASSET]...</c>: prints a new API key (base64url of 32
/// random bytes) and the <c>Auth:Keys</c> entry holding its SHA-256 and the sites and assets it is bound to. The key is
/// shown once; the service keeps only the hash.
/// </summary>
public static class KeyCommand
{
    /// <summary>The command's name, the first argument.</summary>
    public const string Name = "new-key";

    private static readonly JsonSerializerOptions EntryJson = new() { WriteIndented = false, Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping };

    /// <summary>Whether the arguments ask for this command (and not for the service).</summary>
    public static bool IsCommand(IReadOnlyList<string> args) => args is [Name, ..];

    /// <summary>Runs the command; 0 on success, 2 on bad arguments (with the usage written to <paramref name="output"/>).</summary>
    public static int Run(IReadOnlyList<string> args, TextWriter output)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        string? id = null;
        var roles = new List<string>();
        var sites = new List<string>();
        var assets = new List<string>();
        for (var i = 1; i < args.Count; i++)
        {
            var value = i + 1 < args.Count ? args[i + 1] : null;
            switch (args[i])
            {
                case "--id" when value is not null:
                    id = value;
                    i++;
                    break;
                case "--role" when value is not null:
                    roles.AddRange(value.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries));
                    i++;
                    break;
                case "--site" when value is not null:
                    sites.AddRange(value.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries));
                    i++;
                    break;
                case "--asset" when value is not null:
                    assets.AddRange(value.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries));
                    i++;
                    break;
                default:
                    return Usage(output, $"unexpected argument '{args[i]}'");
            }
        }

        id ??= "key-" + Convert.ToHexStringLower(RandomNumberGenerator.GetBytes(3));
        if (!AuthOptionsValidator.IdPattern().IsMatch(id))
        {
            return Usage(output, "the id must be 1-64 letters, digits, '.', '_' or '-', beginning and ending with a letter or digit");
        }

        if (roles.Count == 0)
        {
            roles.Add(Roles.Technician);
        }

        if (roles.FirstOrDefault(r => !Roles.All.Contains(r, StringComparer.Ordinal)) is { } unknown)
        {
            return Usage(output, $"unknown role '{unknown}'");
        }

        if (assets.Count > 0 && sites.Count == 0)
        {
            return Usage(output, "--asset narrows the key's sites: give --site too ('*' for every site)");
        }

        if (sites.Concat(assets).FirstOrDefault(v => v.Length > 256) is { } tooLong)
        {
            return Usage(output, $"'{tooLong[..16]}…' is longer than 256 characters");
        }

        var key = Base64UrlEncode(RandomNumberGenerator.GetBytes(32));
        var entry = new Dictionary<string, object> { ["id"] = id, ["sha256"] = ApiKeyRegistry.HashOf(key), ["roles"] = roles.Distinct(StringComparer.Ordinal).ToArray() };
        if (sites.Count > 0)
        {
            entry["sites"] = sites.Distinct(StringComparer.Ordinal).ToArray();
        }

        if (assets.Count > 0)
        {
            entry["assets"] = assets.Distinct(StringComparer.Ordinal).ToArray();
        }
        output.WriteLine("API key (shown once: hand it to the caller; it is not stored anywhere):");
        output.WriteLine(key);
        output.WriteLine();
        output.WriteLine("Add this entry to Auth:Keys in the service's configuration (it holds only the SHA-256 of the key):");
        output.WriteLine(JsonSerializer.Serialize(entry, EntryJson));
        output.WriteLine();
        if (sites.Count == 0 && !roles.Contains(Roles.Planner, StringComparer.Ordinal) && !roles.Contains(Roles.Admin, StringComparer.Ordinal))
        {
            output.WriteLine("Bound to no site: this key reads only the records it makes itself. Add --site (or --site '*') to let it read a site's records.");
        }

        output.WriteLine($"Callers send it as: {AuthOptions.HeaderName}: <key>");
        return 0;
    }

    private static string Base64UrlEncode(byte[] bytes) => Convert.ToBase64String(bytes).TrimEnd('=').Replace('+', '-').Replace('/', '_');

    private static int Usage(TextWriter output, string error)
    {
        output.WriteLine($"{Name}: {error}.");
        output.WriteLine($"usage: {Name} [--id ID] [--role ROLE]... [--site SITE]... [--asset ASSET]...");
        output.WriteLine($"  roles: {string.Join(", ", Roles.All)} (default technician); sites and assets bind the key ('*': every site). Repeat or comma-separate.");
        return 2;
    }
}
