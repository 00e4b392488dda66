using System.Collections.Frozen;
using DischargeGuard.Audit;

namespace DischargeGuard.Api.Infrastructure.Security;

/// <summary>
/// Which audit records a key may read and which evaluations it may post: the sites (and optionally the assets) it is
/// bound to, or only the records it made itself, or everything. History is never earned by posting: what a key reads
/// follows from its configuration alone.
/// </summary>
public sealed class KeyScope
{
    /// <summary>The entry in <see cref="ApiKeyEntry.Sites"/> or <see cref="ApiKeyEntry.Assets"/> that means "every one".</summary>
    public const string AnySite = "*";

    private readonly FrozenSet<string>? _sites;
    private readonly FrozenSet<string>? _assets;

    private KeyScope(bool bound, string? ownCaller, FrozenSet<string>? sites, FrozenSet<string>? assets, bool nothing = false)
    {
        IsBound = bound;
        OwnCaller = ownCaller;
        _sites = sites;
        _assets = assets;
        IsNothing = nothing;
    }

    /// <summary>Every record; posting for any site and asset (no keys configured, or an unbound planner or admin key).</summary>
    public static KeyScope Unrestricted { get; } = new(false, null, null, null);

    /// <summary>No record at all (an identity without a configured key).</summary>
    public static KeyScope Nothing { get; } = new(false, null, null, null, nothing: true);

    /// <summary>Whether the key is bound to sites: it then posts only inside them.</summary>
    public bool IsBound { get; }

    /// <summary>Set when the key reads only the records it made itself (a technician or gate key bound to no site).</summary>
    public string? OwnCaller { get; }

    /// <summary>Whether no record is readable.</summary>
    public bool IsNothing { get; }

    /// <summary>Whether every record is readable.</summary>
    public bool IsUnrestricted => !IsNothing && OwnCaller is null && _sites is null && _assets is null;

    /// <summary>The sites the key is bound to; null for every site.</summary>
    public IReadOnlyCollection<string>? Sites => _sites;

    /// <summary>The assets the key is bound to; null for every asset (of its sites).</summary>
    public IReadOnlyCollection<string>? Assets => _assets;

    /// <summary>
    /// The scope a key's configuration gives it: bound to its <see cref="ApiKeyEntry.Sites"/> (and assets) when it names
    /// any; otherwise everything for a planner or admin key, and only its own records for any other key.
    /// </summary>
    public static KeyScope Of(ApiKeyEntry entry)
    {
        ArgumentNullException.ThrowIfNull(entry);
        if (entry.Sites.Count > 0)
        {
            var sites = entry.Sites.Contains(AnySite, StringComparer.Ordinal) ? null : entry.Sites.ToFrozenSet(StringComparer.Ordinal);
            var assets = entry.Assets.Count == 0 || entry.Assets.Contains(AnySite, StringComparer.Ordinal) ? null : entry.Assets.ToFrozenSet(StringComparer.Ordinal);
            return new KeyScope(true, null, sites, assets);
        }

        return entry.Roles.Contains(Roles.Planner, StringComparer.Ordinal) || entry.Roles.Contains(Roles.Admin, StringComparer.Ordinal)
            ? Unrestricted
            : new KeyScope(false, entry.Id, null, null);
    }

    /// <summary>Whether the key may read <paramref name="record"/>.</summary>
    public bool MayRead(AuditRecord record)
    {
        ArgumentNullException.ThrowIfNull(record);
        if (IsNothing)
        {
            return false;
        }

        if (OwnCaller is not null)
        {
            return string.Equals(record.Caller, OwnCaller, StringComparison.Ordinal);
        }

        return (_sites is null || (record.SiteId is { } site && _sites.Contains(site)))
            && (_assets is null || _assets.Contains(record.Asset));
    }

    /// <summary>Whether the key may post an evaluation of <paramref name="asset"/> at <paramref name="site"/> (no site: null).</summary>
    public bool MayPost(string? asset, string? site)
    {
        if (IsNothing)
        {
            return false;
        }

        return (_sites is null || (site is not null && _sites.Contains(site)))
            && (_assets is null || (asset is not null && _assets.Contains(asset)));
    }

    /// <summary><paramref name="query"/> narrowed to what the key may read.</summary>
    public AuditQuery Narrow(AuditQuery query)
    {
        ArgumentNullException.ThrowIfNull(query);
        if (IsNothing)
        {
            return query with { SiteIn = [] };
        }

        return query with
        {
            Caller = OwnCaller ?? query.Caller,
            SiteIn = _sites is null ? query.SiteIn : [.. _sites],
            AssetIn = _assets is null ? query.AssetIn : [.. _assets],
        };
    }
}
