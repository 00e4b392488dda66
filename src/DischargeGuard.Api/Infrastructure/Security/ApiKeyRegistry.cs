using System.Collections.Frozen;
using System.Security.Claims;
using System.Security.Cryptography;
using System.Text;
using Microsoft.Extensions.Options;

namespace DischargeGuard.Api.Infrastructure.Security;

/// <summary>
/// The configured keys by the hex of their SHA-256. A presented key is hashed once; the lookup finds the candidate and
/// the stored and computed digests are then compared in constant time.
/// </summary>
/// <remarks>
/// A fast hash is enough: keys are 256 random bits, so there is nothing to brute-force, and a password hash on every
/// request would cost more than the evaluation itself.
/// </remarks>
public sealed class ApiKeyRegistry
{
    /// <summary>Longest header value hashed; anything longer is refused unread.</summary>
    public const int MaxKeyLength = 256;

    private readonly FrozenDictionary<string, (ApiKeyEntry Entry, byte[] Digest)> _byHash;
    private readonly FrozenDictionary<string, KeyScope> _scopeById;
    private readonly FrozenDictionary<string, ApiKeyEntry> _byId;

    /// <summary>Builds the registry from validated options.</summary>
    public ApiKeyRegistry(IOptions<AuthOptions> options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _byHash = options.Value.Keys.ToFrozenDictionary(
            k => k.Sha256.ToLowerInvariant(),
            k => (k, Convert.FromHexString(k.Sha256)),
            StringComparer.Ordinal);
        _byId = options.Value.Keys.ToFrozenDictionary(k => k.Id, StringComparer.Ordinal);
        _scopeById = options.Value.Keys.ToFrozenDictionary(k => k.Id, KeyScope.Of, StringComparer.Ordinal);
    }

    /// <summary>
    /// What the caller may read and post for: everything without keys; otherwise what its key is bound to (see
    /// <see cref="KeyScope.Of"/>). An unknown identity reads nothing.
    /// </summary>
    public KeyScope ScopeOf(ClaimsPrincipal user)
    {
        ArgumentNullException.ThrowIfNull(user);
        if (IsOpen)
        {
            return KeyScope.Unrestricted;
        }

        return user.Identity?.Name is { } id && _scopeById.TryGetValue(id, out var scope) ? scope : KeyScope.Nothing;
    }

    /// <summary>The configured entry of a key id, or null.</summary>
    public ApiKeyEntry? ById(string id) => _byId.GetValueOrDefault(id);

    /// <summary>No keys configured: the service is anonymous (and bound to loopback).</summary>
    public bool IsOpen => _byHash.Count == 0;

    /// <summary>How many keys are configured.</summary>
    public int Count => _byHash.Count;

    /// <summary>The entry whose hash matches <paramref name="presentedKey"/>, or null.</summary>
    public ApiKeyEntry? Find(string presentedKey)
    {
        if (string.IsNullOrEmpty(presentedKey) || presentedKey.Length > MaxKeyLength)
        {
            return null;
        }

        var digest = SHA256.HashData(Encoding.UTF8.GetBytes(presentedKey));
        return _byHash.TryGetValue(Convert.ToHexStringLower(digest), out var found) && CryptographicOperations.FixedTimeEquals(digest, found.Digest)
            ? found.Entry
            : null;
    }

    /// <summary>The SHA-256 hex (lower case) of a key, as configured.</summary>
    public static string HashOf(string key) => Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(key)));
}
