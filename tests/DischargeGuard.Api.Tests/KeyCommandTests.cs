using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using System.Text.RegularExpressions;

namespace DischargeGuard.Api.Tests;

/// <summary>The <c>new-key</c> command.</summary>
public sealed partial class KeyCommandTests
{
    [Fact]
    public void Run_WhenAskedForANewKey_PrintsA43CharBase64UrlKeyWhoseSha256IsInTheEntry()
    {
        using var output = new StringWriter();

        var exit = KeyCommand.Run(["new-key", "--id", "tablet-07", "--role", "technician", "--role", "gate"], output);

        Assert.Equal(0, exit);
        var lines = output.ToString().Split('\n', StringSplitOptions.TrimEntries);
        var key = Assert.Single(lines, l => Base64UrlKey().IsMatch(l));
        using var entry = JsonDocument.Parse(Assert.Single(lines, l => l.StartsWith('{')));
        Assert.Equal("tablet-07", entry.RootElement.GetProperty("id").GetString());
        Assert.Equal(["technician", "gate"], entry.RootElement.GetProperty("roles").EnumerateArray().Select(r => r.GetString()));
        Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(key))), entry.RootElement.GetProperty("sha256").GetString());
        Assert.Equal(32, Convert.FromBase64String(key.Replace('-', '+').Replace('_', '/') + "=").Length);
    }

    [Fact]
    public void Run_WhenSitesAndAssetsAreGiven_TheEntryBindsTheKeyToThem()
    {
        using var output = new StringWriter();

        var exit = KeyCommand.Run(["new-key", "--id", "tablet-12", "--site", "marlow-fen", "--asset", "C-204B,C-204A"], output);

        Assert.Equal(0, exit);
        using var entry = JsonDocument.Parse(Assert.Single(output.ToString().Split('\n', StringSplitOptions.TrimEntries), l => l.StartsWith('{')));
        Assert.Equal(["marlow-fen"], entry.RootElement.GetProperty("sites").EnumerateArray().Select(r => r.GetString()));
        Assert.Equal(["C-204B", "C-204A"], entry.RootElement.GetProperty("assets").EnumerateArray().Select(r => r.GetString()));
    }

    [Fact]
    public void Run_WhenNoSiteIsGivenForATechnician_SaysTheKeyReadsOnlyItsOwnRecords()
    {
        using var output = new StringWriter();

        KeyCommand.Run(["new-key", "--id", "tablet-13"], output);

        Assert.Contains("reads only the records it makes itself", output.ToString(), StringComparison.Ordinal);
        Assert.DoesNotContain("\"sites\"", output.ToString(), StringComparison.Ordinal);
    }

    [Fact]
    public void Run_WhenCalledTwice_PrintsDifferentKeys()
    {
        using var first = new StringWriter();
        using var second = new StringWriter();

        KeyCommand.Run(["new-key"], first);
        KeyCommand.Run(["new-key"], second);

        Assert.NotEqual(first.ToString().Split('\n')[1], second.ToString().Split('\n')[1]);
        Assert.Contains("\"roles\":[\"technician\"]", first.ToString(), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("--role", "operator")]
    [InlineData("--id", "tablet 07")]
    [InlineData("--colour", "blue")]
    [InlineData("--id", "tablet-07\n")]
    [InlineData("--id", "tablet-07 ")]
    [InlineData("--id", "tablet-07.")]
    [InlineData("--asset", "C-204B")]
    public void Run_WhenAnArgumentIsInvalid_PrintsUsageAndExitsWithTwo(string option, string value)
    {
        using var output = new StringWriter();

        var exit = KeyCommand.Run(["new-key", option, value], output);

        Assert.Equal(2, exit);
        Assert.Contains("usage: new-key", output.ToString(), StringComparison.Ordinal);
        Assert.DoesNotMatch(Base64UrlKey(), output.ToString());
    }

    [Theory]
    [InlineData("tablet-07\n", "0000000000000000000000000000000000000000000000000000000000000000")]
    [InlineData("tablet-07.", "0000000000000000000000000000000000000000000000000000000000000000")]
    [InlineData("tablet-07", "0000000000000000000000000000000000000000000000000000000000000000\n")]
    public void AuthOptions_WhenIdOrHashHasTrailingBreakOrDot_FailValidation(string id, string sha256)
    {
        var options = new Infrastructure.Security.AuthOptions();
        var entry = new Infrastructure.Security.ApiKeyEntry { Id = id, Sha256 = sha256 };
        entry.Roles.Add("technician");
        options.Keys.Add(entry);

        var result = new Infrastructure.Security.AuthOptionsValidator().Validate(null, options);

        Assert.True(result.Failed);
    }

    [GeneratedRegex("^[A-Za-z0-9_-]{43}$", RegexOptions.Multiline)]
    private static partial Regex Base64UrlKey();
}
