using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Audit.Tests;

/// <summary>The archive against the rules project itself: the repository's default rule directory, merged and digested as the service does.</summary>
public sealed class RuleSetArchiveTests : IAsyncLifetime
{
    private readonly TempAuditFolder _folder = new();

    public Task InitializeAsync() => Task.CompletedTask;

    public async Task DisposeAsync() => await _folder.CleanUpAsync();

    [Fact]
    public async Task ArchiveRuleSet_WhenGivenTheRulesProjectsDigestAndCanonicalForm_StoresAndReturnsThemUnchanged()
    {
        var snapshot = FileRuleSetProvider.LoadDirectory(Path.Combine(RepositoryRoot.Path, "rules"), Sample.Start);
        var canonical = CanonicalForm.OfMerged(snapshot.DefaultSet);
        var store = await _folder.OpenAsync();

        await store.ArchiveRuleSetAsync(snapshot.Digest, canonical, CancellationToken.None);

        Assert.Equal(canonical, await store.GetRuleSetAsync(snapshot.Digest, CancellationToken.None));

        // One byte changed is another rule set: its digest no longer matches and nothing is stored under it.
        var changed = canonical.ToArray();
        changed[^2] ^= 0x01;
        await Assert.ThrowsAsync<ArgumentException>(() => store.ArchiveRuleSetAsync(snapshot.Digest, changed, CancellationToken.None).AsTask());
        Assert.Equal(1, _folder.Scalar("SELECT count(*) FROM rule_sets;"));
    }

    [Fact]
    public async Task GetRuleSet_WhenTheArchivedBytesWereChangedBehindTheGuards_ThrowsUnavailable()
    {
        var store = await _folder.OpenAsync();
        var canonical = """{"kind":"Merged","rules":[]}"""u8.ToArray();
        var digest = AuditDigest.Sha256Hex(canonical);
        await store.ArchiveRuleSetAsync(digest, canonical, CancellationToken.None);

        using (var raw = _folder.OpenRaw())
        {
            using var command = raw.CreateCommand();
            command.CommandText = "DROP TRIGGER rule_sets_no_update; UPDATE rule_sets SET canonical = x'7b7d';";
            command.ExecuteNonQuery();
        }

        var e = await Assert.ThrowsAsync<AuditStoreUnavailableException>(() => store.GetRuleSetAsync(digest, CancellationToken.None));

        Assert.Contains("does not match its digest", e.Message, StringComparison.Ordinal);
    }
}
