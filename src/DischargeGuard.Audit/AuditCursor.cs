using System.Buffers.Binary;
using System.Buffers.Text;
using System.Diagnostics.CodeAnalysis;

namespace DischargeGuard.Audit;

/// <summary>
/// A position in the newest-first order of records: everything strictly older than
/// (<see cref="EvaluatedAt"/>, <see cref="Id"/>) comes after it.
/// </summary>
/// <remarks>
/// The token is base64url (no padding) of 25 bytes: a format byte (1), the UTC ticks of the evaluation time
/// (8 bytes, big-endian), and the id (16 bytes, big-endian UUID order). It is opaque to clients; the format byte
/// lets it change later without misreading old tokens.
/// </remarks>
/// <param name="EvaluatedAt">The evaluation time of the last record seen (UTC).</param>
/// <param name="Id">The id of the last record seen.</param>
public readonly record struct AuditCursor(DateTimeOffset EvaluatedAt, Guid Id)
{
    private const byte FormatV1 = 1;
    private const int TokenBytes = 1 + 8 + 16;

    /// <summary>The cursor that continues after <paramref name="record"/>.</summary>
    /// <param name="record">The last record of a page or stream.</param>
    /// <returns>The cursor.</returns>
    public static AuditCursor After(AuditRecord record)
    {
        ArgumentNullException.ThrowIfNull(record);
        return new AuditCursor(record.EvaluatedAt.ToUniversalTime(), record.Id);
    }

    /// <summary>The opaque token for this position.</summary>
    /// <returns>A base64url string.</returns>
    public override string ToString()
    {
        Span<byte> bytes = stackalloc byte[TokenBytes];
        bytes[0] = FormatV1;
        BinaryPrimitives.WriteInt64BigEndian(bytes[1..], EvaluatedAt.UtcTicks);
        Id.TryWriteBytes(bytes[9..], bigEndian: true, out _);
        return Base64Url.EncodeToString(bytes);
    }

    /// <summary>Reads a token made by <see cref="ToString"/>.</summary>
    /// <param name="token">The token.</param>
    /// <param name="cursor">The position, when the token is valid.</param>
    /// <returns><see langword="false"/> for anything that is not a well-formed token.</returns>
    public static bool TryParse([NotNullWhen(true)] string? token, out AuditCursor cursor)
    {
        cursor = default;
        if (token is null || token.Length != Base64Url.GetEncodedLength(TokenBytes))
        {
            return false;
        }

        Span<byte> bytes = stackalloc byte[TokenBytes];
        if (!Base64Url.TryDecodeFromChars(token, bytes, out var written) || written != TokenBytes || bytes[0] != FormatV1)
        {
            return false;
        }

        var ticks = BinaryPrimitives.ReadInt64BigEndian(bytes[1..]);
        if (ticks is < 0 || ticks > DateTimeOffset.MaxValue.UtcTicks)
        {
            return false;
        }

        cursor = new AuditCursor(new DateTimeOffset(ticks, TimeSpan.Zero), new Guid(bytes[9..], bigEndian: true));

        // Only the canonical spelling is accepted, so one position has one token.
        return string.Equals(cursor.ToString(), token, StringComparison.Ordinal);
    }
}
