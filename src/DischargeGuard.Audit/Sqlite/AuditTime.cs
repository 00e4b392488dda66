using System.Globalization;

namespace DischargeGuard.Audit.Sqlite;

/// <summary>
/// The stored form of an instant: UTC, ISO 8601, always seven fractional digits (<c>2026-03-14T09:26:53.5897932Z</c>),
/// 28 characters. Fixed width makes text order equal time order, and seven digits keep every tick, so a cursor
/// compares exactly with the stored value.
/// </summary>
internal static class AuditTime
{
    private const string Pattern = "yyyy'-'MM'-'dd'T'HH':'mm':'ss'.'fffffff'Z'";

    public static string Format(DateTimeOffset value) =>
        value.UtcDateTime.ToString(Pattern, CultureInfo.InvariantCulture);

    public static DateTimeOffset Parse(string text) =>
        new(DateTime.ParseExact(text, Pattern, CultureInfo.InvariantCulture, DateTimeStyles.AdjustToUniversal | DateTimeStyles.AssumeUniversal), TimeSpan.Zero);
}
