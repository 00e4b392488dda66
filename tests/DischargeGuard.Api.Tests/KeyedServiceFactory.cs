using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using DischargeGuard.Api.Infrastructure.Security;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// The service with one key per role (generated here; only their hashes reach the host's settings), plus a second
/// technician. Invented holders at Harrow Basin Gas Co., site kestrel-ridge.
/// </summary>
public class KeyedServiceFactory : ServiceFactory
{
    /// <summary>Key ids by role; the second technician is <see cref="OtherTechnicianId"/>.</summary>
    public static readonly IReadOnlyDictionary<string, string> IdOf = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        [Roles.Technician] = "tablet-07",
        [Roles.Planner] = "planning-office",
        [Roles.Gate] = "permit-gate",
        [Roles.Admin] = "ops-admin",
    };

    public const string OtherTechnicianId = "tablet-09";

    /// <summary>Keys bound to sites (and assets): id, role, sites, assets.</summary>
    public static readonly IReadOnlyList<(string Id, string Role, string[] Sites, string[] Assets)> Bound =
    [
        ("tablet-kr", Roles.Technician, ["kestrel-ridge"], []),
        ("tablet-mf-c204b", Roles.Technician, ["marlow-fen"], ["C-204B"]),
        ("tablet-any", Roles.Technician, ["*"], []),
        ("planner-mf", Roles.Planner, ["marlow-fen"], []),
    ];

    public KeyedServiceFactory()
        : this(NewKeys(), new Dictionary<string, string?>
        {
            // The matrix sends many requests without a key from one (test) address; the limit is tested on its own.
            ["RateLimits:PermitsPerSecond"] = "100000",
            ["RateLimits:Burst"] = "100000",
        })
    {
    }

    protected KeyedServiceFactory(IDictionary<string, string?> extra)
        : this(NewKeys(), extra)
    {
    }

    private KeyedServiceFactory(IReadOnlyDictionary<string, string> keys, IDictionary<string, string?> extra)
        : base(Settings(keys, extra)) => KeyOf = keys;

    /// <summary>Keys by key id.</summary>
    public IReadOnlyDictionary<string, string> KeyOf { get; }

    /// <summary>The key of a role's holder.</summary>
    public string KeyFor(string role) => KeyOf[IdOf[role]];

    /// <summary>A client sending <paramref name="key"/> (none when null).</summary>
    public HttpClient ClientWith(string? key)
    {
        var client = CreateClient();
        if (key is not null)
        {
            client.DefaultRequestHeaders.Add(AuthOptions.HeaderName, key);
        }

        return client;
    }

    /// <summary>POSTs an evaluation of <paramref name="asset"/> (at <paramref name="site"/>) with <paramref name="key"/>; returns the recorded id.</summary>
    public async Task<Guid> EvaluateAsAsync(string key, string asset = "K-101A", string site = "kestrel-ridge")
    {
        using var client = ClientWith(key);
        var request = Requests.PassingStage();
        request["asset"] = asset;
        request["site"]!["id"] = site;
        using var content = new StringContent(request.ToJsonString(), Encoding.UTF8, "application/json");
        using var response = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content);
        var body = await Json.ReadAsync(response);
        Assert.True(response.IsSuccessStatusCode, $"evaluation refused: {(int)response.StatusCode} {body}");
        return body.At("id").GetGuid();
    }

    /// <summary>A fresh key, as the new-key command makes them: base64url of 32 random bytes.</summary>
    public static string NewKey() => Convert.ToBase64String(RandomNumberGenerator.GetBytes(32)).TrimEnd('=').Replace('+', '-').Replace('/', '_');

    private static Dictionary<string, string> NewKeys()
    {
        var keys = IdOf.Values.Append(OtherTechnicianId).Concat(Bound.Select(b => b.Id)).ToDictionary(id => id, _ => NewKey(), StringComparer.Ordinal);
        return keys;
    }

    private static Dictionary<string, string?> Settings(IReadOnlyDictionary<string, string> keys, IDictionary<string, string?> extra)
    {
        var settings = new Dictionary<string, string?>(extra);
        var roleOf = IdOf.ToDictionary(p => p.Value, p => p.Key, StringComparer.Ordinal);
        roleOf[OtherTechnicianId] = Roles.Technician;
        foreach (var bound in Bound)
        {
            roleOf[bound.Id] = bound.Role;
        }

        var i = 0;
        foreach (var (id, key) in keys)
        {
            var prefix = string.Create(CultureInfo.InvariantCulture, $"Auth:Keys:{i++}:");
            settings[prefix + "id"] = id;
            settings[prefix + "sha256"] = Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(key)));
            settings[prefix + "roles:0"] = roleOf[id];
            if (Bound.FirstOrDefault(b => b.Id == id) is { Id: not null } b)
            {
                for (var s = 0; s < b.Sites.Length; s++)
                {
                    settings[prefix + string.Create(CultureInfo.InvariantCulture, $"sites:{s}")] = b.Sites[s];
                }

                for (var a = 0; a < b.Assets.Length; a++)
                {
                    settings[prefix + string.Create(CultureInfo.InvariantCulture, $"assets:{a}")] = b.Assets[a];
                }
            }
        }

        return settings;
    }
}

/// <summary>Keys with a tiny rate limit: a burst of <see cref="Burst"/>, then one request per 100 s.</summary>
public sealed class RateLimitedServiceFactory() : KeyedServiceFactory(new Dictionary<string, string?>
{
    ["RateLimits:PermitsPerSecond"] = "0.01",
    ["RateLimits:Burst"] = RateLimitedServiceFactory.Burst.ToString(CultureInfo.InvariantCulture),
})
{
    public const int Burst = 3;
}
