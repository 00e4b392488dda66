using System.Text;

namespace DischargeGuard.Audit.Tests;

public class AuditDigestTests
{
    [Theory]
    // FIPS 180-2, appendix B.1: the one-block message "abc".
    [InlineData("abc", "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad")]
    // SHA-256 of the empty message, as listed in NIST's example values.
    [InlineData("", "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855")]
    // FIPS 180-2, appendix B.2: the two-block 448-bit message.
    [InlineData("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq", "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1")]
    public void Sha256Hex_WhenGivenPublishedVector_ReturnsItsDigest(string message, string expected)
    {
        Assert.Equal(expected, AuditDigest.Sha256Hex(Encoding.ASCII.GetBytes(message)));
    }

    [Theory]
    [InlineData("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad", true)]
    [InlineData("BA7816BF8F01CFEA414140DE5DAE2223B00361A396177A9CB410FF61F20015AD", false)] // upper case is not the stored form
    [InlineData("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015a", false)] // 63 digits
    [InlineData("ga7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad", false)] // not hex
    [InlineData(null, false)]
    public void IsSha256Hex_WhenGivenText_AcceptsOnlyLowerCaseHexOf64(string? value, bool expected)
    {
        Assert.Equal(expected, AuditDigest.IsSha256Hex(value));
    }
}
