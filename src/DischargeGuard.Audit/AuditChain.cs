using System.Buffers.Binary;
using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using DischargeGuard.Audit.Sqlite;

namespace DischargeGuard.Audit;

/// <summary>
/// The hash chain over the audit store: every record's hash covers a canonical form of its whole row and the hash of
/// the record before it, so changing any column, recomputing a body hash, or removing a row breaks the chain from there.
/// </summary>
/// <remarks>
/// <para>
/// Canonical form (version 1), fed to SHA-256 (FIPS 180-4): the ASCII tag <c>dischargeguard-audit-record-v1\n</c>, the
/// sequence as a big-endian 64-bit integer, then each field as one byte (0 for null, 1 for a value) followed, for a
/// value, by its UTF-8 length as a big-endian 32-bit integer and its UTF-8 bytes: previous hash, id (canonical lower-case
/// UUID), evaluated_at (the fixed 28-character UTC form), caller, asset, site_id, verdict, rule_digest, engine_version,
/// request_sha256, response_sha256, replay_of. The request and response bytes enter through their SHA-256 columns, which
/// verification recomputes from the bytes; so every byte of the row is covered.
/// </para>
/// <para>
/// A record with stage summaries (<see cref="AuditRecord.Stages"/>) is hashed in version 2: the tag
/// <c>dischargeguard-audit-record-v2\n</c>, the same fields, then the stage count as a big-endian 32-bit integer and per
/// stage its index (big-endian 32-bit), verdict and governing rule id as fields, and each number as one byte (0 for null,
/// 1 for a value) followed by its IEEE 754 binary64 bits big-endian, in the order margin, isentropic, estimated, suction
/// pressure, discharge pressure, measured. A record without stages keeps version 1, so records written before stages
/// existed verify unchanged, and removing or adding stages changes the hash.
/// </para>
/// <para>
/// Retention grants are chained the same way among themselves (tag <c>dischargeguard-retention-grant-v1\n</c>), and each
/// carries the anchor it removed up to: the sequence and hash of the last deleted record, from which the rest verifies.
/// </para>
/// </remarks>
public static class AuditChain
{
    /// <summary>The hash before the first record and before the first grant: 64 zeros.</summary>
    public static readonly string GenesisHash = new('0', 64);

    private static readonly byte[] RecordTag = "dischargeguard-audit-record-v1\n"u8.ToArray();
    private static readonly byte[] RecordTagWithStages = "dischargeguard-audit-record-v2\n"u8.ToArray();
    private static readonly byte[] GrantTag = "dischargeguard-retention-grant-v1\n"u8.ToArray();

    /// <summary>The chained hash of <paramref name="record"/> at <paramref name="sequence"/> after <paramref name="previousHash"/>.</summary>
    /// <param name="sequence">The record's place in the chain, from 1.</param>
    /// <param name="previousHash">The hash of the record before it (or the anchor), lower-case hex.</param>
    /// <param name="record">The record with its request and response hashes set.</param>
    /// <returns>Lower-case hex SHA-256.</returns>
    public static string RecordHash(long sequence, string previousHash, AuditRecord record)
    {
        ArgumentNullException.ThrowIfNull(record);
        using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        var stages = record.Stages ?? [];
        hash.AppendData(stages.Count == 0 ? RecordTag : RecordTagWithStages);
        Int64(hash, sequence);
        Field(hash, previousHash);
        Field(hash, record.Id.ToString("D", CultureInfo.InvariantCulture));
        Field(hash, AuditTime.Format(record.EvaluatedAt));
        Field(hash, record.Caller);
        Field(hash, record.Asset);
        Field(hash, record.SiteId);
        Field(hash, record.Verdict);
        Field(hash, record.RuleDigest);
        Field(hash, record.EngineVersion);
        Field(hash, record.RequestSha256);
        Field(hash, record.ResponseSha256);
        Field(hash, record.ReplayOf?.ToString("D", CultureInfo.InvariantCulture));
        if (stages.Count > 0)
        {
            Int32(hash, stages.Count);
            foreach (var stage in stages)
            {
                Int32(hash, stage.Index);
                Field(hash, stage.Verdict);
                Field(hash, stage.GoverningRuleId);
                Number(hash, stage.MarginKelvin);
                Number(hash, stage.IsentropicKelvin);
                Number(hash, stage.EstimatedKelvin);
                Number(hash, stage.SuctionPressurePascal);
                Number(hash, stage.DischargePressurePascal);
                Number(hash, stage.MeasuredKelvin);
            }
        }

        return Convert.ToHexStringLower(hash.GetHashAndReset());
    }

    /// <summary>The chained hash of a retention grant.</summary>
    internal static string GrantHash(string previousGrantHash, DateTimeOffset grantedAt, DateTimeOffset deleteBefore, string grantedBy, string reason, long anchorSequence, string anchorHash)
    {
        using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        hash.AppendData(GrantTag);
        Field(hash, previousGrantHash);
        Field(hash, AuditTime.Format(grantedAt));
        Field(hash, AuditTime.Format(deleteBefore));
        Field(hash, grantedBy);
        Field(hash, reason);
        Int64(hash, anchorSequence);
        Field(hash, anchorHash);
        return Convert.ToHexStringLower(hash.GetHashAndReset());
    }

    /// <summary>An instant cut to whole microseconds, the precision both stores keep for grant times.</summary>
    internal static DateTimeOffset ToMicroseconds(DateTimeOffset value)
    {
        var utc = value.ToUniversalTime();
        return utc.AddTicks(-(utc.UtcTicks % 10));
    }

    private static void Int64(IncrementalHash hash, long value)
    {
        Span<byte> buffer = stackalloc byte[8];
        BinaryPrimitives.WriteInt64BigEndian(buffer, value);
        hash.AppendData(buffer);
    }

    private static void Int32(IncrementalHash hash, int value)
    {
        Span<byte> buffer = stackalloc byte[4];
        BinaryPrimitives.WriteInt32BigEndian(buffer, value);
        hash.AppendData(buffer);
    }

    private static void Number(IncrementalHash hash, double? value)
    {
        Span<byte> buffer = stackalloc byte[9];
        if (value is not { } v)
        {
            buffer[0] = 0;
            hash.AppendData(buffer[..1]);
            return;
        }

        buffer[0] = 1;
        BinaryPrimitives.WriteDoubleBigEndian(buffer[1..], v);
        hash.AppendData(buffer);
    }

    private static void Field(IncrementalHash hash, string? value)
    {
        if (value is null)
        {
            hash.AppendData([0]);
            return;
        }

        var bytes = Encoding.UTF8.GetBytes(value);
        Span<byte> header = stackalloc byte[5];
        header[0] = 1;
        BinaryPrimitives.WriteInt32BigEndian(header[1..], bytes.Length);
        hash.AppendData(header);
        hash.AppendData(bytes);
    }

    /// <summary>
    /// Walks the grants, then the records in sequence order from the newest grant's anchor, and stops at the first
    /// broken link. Records are read as they are enumerated.
    /// </summary>
    internal static async Task<AuditChainVerification> VerifyAsync(
        IReadOnlyList<StoredGrant> grants, IAsyncEnumerable<AuditRecord> records, AuditChainHead head, CancellationToken cancellationToken)
    {
        var previousGrant = GenesisHash;
        var anchor = new AuditChainAnchor(0, GenesisHash, null);
        long next = 1;
        long count = 0;
        long? first = null;
        foreach (var grant in grants)
        {
            var expected = GrantHash(previousGrant, grant.GrantedAt, grant.DeleteBefore, grant.GrantedBy, grant.Reason, grant.AnchorSequence, grant.AnchorHash);
            if (!string.Equals(grant.PreviousGrantHash, previousGrant, StringComparison.Ordinal) || !string.Equals(grant.GrantHash, expected, StringComparison.Ordinal))
            {
                return Broken(0, null, $"Retention grant {grant.Id} does not match its hash or does not follow the grant before it.");
            }

            if (grant.AnchorSequence < anchor.Sequence)
            {
                return Broken(0, null, $"Retention grant {grant.Id} anchors before an earlier grant.");
            }

            previousGrant = grant.GrantHash;
            anchor = new AuditChainAnchor(grant.AnchorSequence, grant.AnchorHash, grant.Id);
        }

        next = anchor.Sequence + 1;
        var previous = anchor.Hash;
        await foreach (var record in records.WithCancellation(cancellationToken).ConfigureAwait(false))
        {
            if (record.Sequence is not { } sequence || record.RecordHash is null || record.PreviousHash is null)
            {
                return Broken(next, record.Id, "The record has no place in the chain (sequence or hashes missing).");
            }

            if (sequence != next)
            {
                return Broken(next, record.Id, sequence > next
                    ? string.Create(CultureInfo.InvariantCulture, $"Records {next} to {sequence - 1} are missing: the chain jumps to {sequence}.")
                    : string.Create(CultureInfo.InvariantCulture, $"Record {sequence} is at or before the retention anchor {anchor.Sequence} or repeats a sequence."));
            }

            if (!string.Equals(AuditDigest.Sha256Hex(record.Request), record.RequestSha256, StringComparison.Ordinal))
            {
                return Broken(sequence, record.Id, "The request bytes do not match request_sha256.");
            }

            if (!string.Equals(AuditDigest.Sha256Hex(record.Response), record.ResponseSha256, StringComparison.Ordinal))
            {
                return Broken(sequence, record.Id, "The response bytes do not match response_sha256.");
            }

            if (!string.Equals(record.PreviousHash, previous, StringComparison.Ordinal))
            {
                return Broken(sequence, record.Id, "prev_hash is not the hash of the record before it: a record before it was changed or removed.");
            }

            if (!string.Equals(RecordHash(sequence, previous, record), record.RecordHash, StringComparison.Ordinal))
            {
                return Broken(sequence, record.Id, "The record's columns do not match its record_hash: a column was changed after it was written.");
            }

            first ??= sequence;
            previous = record.RecordHash;
            next++;
            count++;
        }

        if (head.Sequence != next - 1 || !string.Equals(head.Hash, previous, StringComparison.Ordinal))
        {
            return Broken(next, null, string.Create(CultureInfo.InvariantCulture,
                $"The chain ends at {next - 1} but the stored head is {head.Sequence}: records at the end were removed, or the head was changed."));
        }

        return new AuditChainVerification(true, count, first, count == 0 ? null : next - 1, head, anchor, null);

        AuditChainVerification Broken(long at, Guid? id, string reason) =>
            new(false, count, first, count == 0 ? null : next - 1, head, anchor, new AuditChainBreak(at, id, reason));
    }
}

/// <summary>The newest link of the chain: keep copies outside the database host to detect a rewritten or truncated store.</summary>
/// <param name="Sequence">The newest record's sequence (0 before the first).</param>
/// <param name="RecordId">The newest record's id (null before the first).</param>
/// <param name="Hash">Its record hash (the genesis or anchor hash when none).</param>
public sealed record AuditChainHead(long Sequence, Guid? RecordId, string Hash);

/// <summary>Where the remaining chain starts: the last record a retention grant removed, or the genesis.</summary>
/// <param name="Sequence">The anchor's sequence (0 for the genesis).</param>
/// <param name="Hash">The anchor's record hash.</param>
/// <param name="GrantId">The retention grant that stores it, or null for the genesis.</param>
public sealed record AuditChainAnchor(long Sequence, string Hash, long? GrantId);

/// <summary>The first broken link found.</summary>
/// <param name="Sequence">The sequence where the chain stopped holding.</param>
/// <param name="RecordId">The record there, when there is one.</param>
/// <param name="Reason">What did not match.</param>
public sealed record AuditChainBreak(long Sequence, Guid? RecordId, string Reason);

/// <summary>What a verification of the whole chain found.</summary>
/// <param name="Intact">Every grant, every record and the head agree.</param>
/// <param name="Records">Records verified before the first break (all of them when intact).</param>
/// <param name="FirstSequence">The first record's sequence, when any.</param>
/// <param name="LastSequence">The last verified record's sequence, when any.</param>
/// <param name="Head">The stored head.</param>
/// <param name="Anchor">Where the chain starts.</param>
/// <param name="FirstBreak">The first broken link, when not intact.</param>
public sealed record AuditChainVerification(bool Intact, long Records, long? FirstSequence, long? LastSequence, AuditChainHead Head, AuditChainAnchor Anchor, AuditChainBreak? FirstBreak);

/// <summary>A retention grant as stored, with its chain fields.</summary>
internal sealed record StoredGrant(long Id, DateTimeOffset GrantedAt, DateTimeOffset DeleteBefore, string GrantedBy, string Reason, long AnchorSequence, string AnchorHash, string PreviousGrantHash, string GrantHash);
