using System.Security.Cryptography;

namespace DischargeGuard.Audit;

/// <summary>The hash the audit store uses for request and response bytes.</summary>
public static class AuditDigest
{
    /// <summary>SHA-256 (FIPS 180-4) of <paramref name="bytes"/> as 64 lower-case hex digits.</summary>
    /// <param name="bytes">The bytes to hash.</param>
    /// <returns>The digest in lower-case hex.</returns>
    public static string Sha256Hex(ReadOnlySpan<byte> bytes) => Convert.ToHexStringLower(SHA256.HashData(bytes));

    /// <summary>Whether <paramref name="value"/> is 64 lower-case hex digits, the form of every digest the store keeps.</summary>
    /// <param name="value">The string to test.</param>
    /// <returns><see langword="true"/> when it has the form of a SHA-256 hex digest.</returns>
    public static bool IsSha256Hex(string? value)
    {
        if (value is null || value.Length != 64)
        {
            return false;
        }

        foreach (var c in value)
        {
            if (!char.IsAsciiDigit(c) && c is not (>= 'a' and <= 'f'))
            {
                return false;
            }
        }

        return true;
    }
}
