using System.Collections.Concurrent;
using System.Globalization;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using Microsoft.Extensions.Options;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// Per-key storage quotas: bytes stored per UTC day, counted in memory in this process. Memory, not the store: the count
/// costs nothing on the hot path and needs no index on caller; the price is that a restart starts the day's count afresh
/// and that N replicas let a key store up to N times its quota (docs/security.md).
/// </summary>
internal sealed class StorageQuota(IOptions<QuotaOptions> options, ApiKeyRegistry keys, TimeProvider time)
{
    private readonly ConcurrentDictionary<string, Counter> _counters = new(StringComparer.Ordinal);

    /// <summary>The bytes per day the caller may store.</summary>
    public long QuotaOf(string caller)
    {
        if (keys.IsOpen || string.Equals(caller, AuditRecord.AnonymousCaller, StringComparison.Ordinal))
        {
            return options.Value.AnonymousBytesPerDay ?? long.MaxValue;
        }

        if (keys.ById(caller) is not { } entry)
        {
            return 0;
        }

        if (entry.BytesPerDay is { } own)
        {
            return own;
        }

        return entry.Roles.Select(r => options.Value.BytesPerDay.TryGetValue(r, out var q) ? q : 0).DefaultIfEmpty(0).Max();
    }

    /// <summary>Reserves <paramref name="bytes"/> of today's quota; false (with the seconds to the next UTC day) when it would be exceeded.</summary>
    public bool TryReserve(string caller, long bytes, out long used, out long quota, out int retryAfterSeconds)
    {
        var now = time.GetUtcNow();
        var today = DateOnly.FromDateTime(now.UtcDateTime);
        quota = QuotaOf(caller);
        retryAfterSeconds = (int)Math.Ceiling((today.AddDays(1).ToDateTime(TimeOnly.MinValue, DateTimeKind.Utc) - now.UtcDateTime).TotalSeconds);
        var counter = _counters.GetOrAdd(caller, _ => new Counter());
        lock (counter)
        {
            if (counter.Day != today)
            {
                (counter.Day, counter.Used) = (today, 0);
            }

            used = counter.Used;
            if (bytes > quota - counter.Used)
            {
                return false;
            }

            counter.Used += bytes;
            return true;
        }
    }

    /// <summary>Gives back bytes reserved for a record that was not stored after all.</summary>
    public void Release(string caller, long bytes)
    {
        if (_counters.TryGetValue(caller, out var counter))
        {
            lock (counter)
            {
                counter.Used = Math.Max(0, counter.Used - bytes);
            }
        }
    }

    private sealed class Counter
    {
        public DateOnly Day { get; set; }

        public long Used { get; set; }
    }
}

/// <summary>
/// Whether the audit store has room: free space of the SQLite file's volume against <see cref="AuditSettings.MinFreeBytes"/>,
/// or the PostgreSQL database's size against <see cref="AuditSettings.MaxDatabaseBytes"/>. Refreshed at most once a second
/// (by evaluations and by the readiness probe), so the check on every evaluation is a field read.
/// </summary>
internal sealed class StorageGuard(IAuditStore audit, IOptions<AuditSettings> settings, TimeProvider time) : IDisposable
{
    private readonly SemaphoreSlim _refresh = new(1, 1);
    private volatile StorageState _state = new(StorageLevel.Ok, "not checked yet", DateTimeOffset.MinValue);

    public void Dispose() => _refresh.Dispose();

    /// <summary>The last state found.</summary>
    public StorageState Current => _state;

    /// <summary>The state, re-read from the store when the last reading is older than a second.</summary>
    public async Task<StorageState> CheckAsync(CancellationToken cancellationToken)
    {
        if (time.GetUtcNow() - _state.At < TimeSpan.FromSeconds(1))
        {
            return _state;
        }

        await _refresh.WaitAsync(cancellationToken).ConfigureAwait(false);
        try
        {
            if (time.GetUtcNow() - _state.At < TimeSpan.FromSeconds(1))
            {
                return _state;
            }

            AuditStorage storage;
            try
            {
                storage = await audit.GetStorageAsync(cancellationToken).ConfigureAwait(false);
            }
            catch (AuditStoreUnavailableException)
            {
                // Unreadable is the store's own health failure; do not add a second refusal for it.
                return _state = new StorageState(StorageLevel.Ok, "storage figures unavailable", time.GetUtcNow());
            }

            return _state = Assess(storage, settings.Value, time.GetUtcNow());
        }
        finally
        {
            _refresh.Release();
        }
    }

    internal static StorageState Assess(AuditStorage storage, AuditSettings settings, DateTimeOffset at)
    {
        if (storage.AvailableBytes is { } free && settings.MinFreeBytes > 0)
        {
            var text = string.Create(CultureInfo.InvariantCulture, $"{free} bytes free on the audit volume (threshold {settings.MinFreeBytes})");
            return free < settings.MinFreeBytes ? new(StorageLevel.Full, text, at)
                : free < 2 * Math.Min(settings.MinFreeBytes, long.MaxValue / 2) ? new(StorageLevel.Low, text, at)
                : new(StorageLevel.Ok, text, at);
        }

        if (storage.AvailableBytes is null && settings.MaxDatabaseBytes > 0)
        {
            var text = string.Create(CultureInfo.InvariantCulture, $"audit database {storage.UsedBytes} bytes (cap {settings.MaxDatabaseBytes})");
            return storage.UsedBytes >= settings.MaxDatabaseBytes ? new(StorageLevel.Full, text, at)
                : storage.UsedBytes >= settings.MaxDatabaseBytes / 10 * 9 ? new(StorageLevel.Low, text, at)
                : new(StorageLevel.Ok, text, at);
        }

        return new(StorageLevel.Ok, string.Create(CultureInfo.InvariantCulture, $"audit store {storage.UsedBytes} bytes; no threshold applies"), at);
    }
}

/// <summary>How much room is left.</summary>
internal enum StorageLevel
{
    /// <summary>Enough.</summary>
    Ok,

    /// <summary>Below twice the threshold (or 90 % of the cap): still evaluating; readiness Degraded.</summary>
    Low,

    /// <summary>Below the threshold (or at the cap): evaluations refused with 503; readiness Unhealthy.</summary>
    Full,
}

/// <summary>A reading of the store's room.</summary>
internal sealed record StorageState(StorageLevel Level, string Description, DateTimeOffset At);
