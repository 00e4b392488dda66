using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Rules.Tests;

public sealed class ProviderTests : IDisposable
{
    private readonly string _dir = Path.Combine(Path.GetTempPath(), "dg-rules-" + Guid.NewGuid().ToString("N"));

    public ProviderTests()
    {
        Directory.CreateDirectory(Path.Combine(_dir, "sites"));
        File.Copy(Path.Combine(Repo.RulesDirectory, "default.yaml"), Path.Combine(_dir, "default.yaml"));
        File.Copy(Path.Combine(Repo.RulesDirectory, "sites", "marlow-fen.yaml"), Path.Combine(_dir, "sites", "marlow-fen.yaml"));
    }

    public void Dispose()
    {
        if (Directory.Exists(_dir))
        {
            Directory.Delete(_dir, recursive: true);
        }
    }

    private string SitePath => Path.Combine(_dir, "sites", "marlow-fen.yaml");

    [Fact]
    public void Reload_WhenNewFileBroken_KeepsLastGoodAndRecordsError()
    {
        using var provider = FileRuleSetProvider.Open(_dir, watch: false);
        var before = provider.Current;
        File.AppendAllText(SitePath, "  - rule: R-DEPOSIT\n    disabled: true\n");

        var result = provider.Reload();

        Assert.False(result.Succeeded);
        Assert.Same(before, provider.Current);
        Assert.Equal(before.Digest, result.Digest);
        var e = Assert.Single(provider.LastError!.Errors);
        Assert.Equal("sites/marlow-fen.yaml", e.File);
        Assert.Equal("overrides.reason", e.Key);
        Assert.True(e.Line > 0);
    }

    [Fact]
    public void Reload_WhenFileFixed_SwapsSetAndClearsError()
    {
        using var provider = FileRuleSetProvider.Open(_dir, watch: false);
        var old = provider.Current;
        var oldSite = old.Resolve("marlow-fen", null);
        File.AppendAllText(SitePath, "  - rule: R-DEPOSIT\n    disabled: true\n    reason: \"test\"\n");

        var result = provider.Reload();

        Assert.True(result.Succeeded, string.Join("; ", result.Errors));
        Assert.Null(provider.LastError);
        Assert.NotSame(old, provider.Current);
        var newSite = provider.Current.Resolve("marlow-fen", null);
        Assert.NotEqual(oldSite.Digest, newSite.Digest);
        // An evaluation that took the old snapshot keeps it whole.
        Assert.Contains(oldSite.Rules, r => r.Id == "R-DEPOSIT");
        Assert.DoesNotContain(newSite.Rules, r => r.Id == "R-DEPOSIT");
        // The default layer did not change, so neither did its digest.
        Assert.Equal(old.Digest, provider.Current.Digest);
    }

    [Fact]
    public void Open_WhenDefaultBroken_ThrowsWithFileLineKey()
    {
        File.AppendAllText(Path.Combine(_dir, "default.yaml"), "bogus: 1\n");
        var ex = Assert.Throws<RuleFileException>(() => FileRuleSetProvider.Open(_dir, watch: false));
        Assert.Contains("default.yaml:", ex.Message, StringComparison.Ordinal);
        Assert.Contains("bogus", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void LoadDirectory_WhenNoDefaultFile_IsIoError()
    {
        File.Delete(Path.Combine(_dir, "default.yaml"));
        var ex = Assert.Throws<RuleFileException>(() => FileRuleSetProvider.LoadDirectory(_dir, DateTimeOffset.UnixEpoch));
        var e = Assert.Single(ex.Errors);
        Assert.Equal((RuleFileErrorKind.Io, "default.yaml"), (e.Kind, e.File));
    }

    [Fact]
    public void LoadDirectory_WhenSiteIdDiffersFromFileName_IsError()
    {
        File.Move(SitePath, Path.Combine(_dir, "sites", "other.yaml"));
        var ex = Assert.Throws<RuleFileException>(() => FileRuleSetProvider.LoadDirectory(_dir, DateTimeOffset.UnixEpoch));
        Assert.Contains("sites/other.yaml", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Watcher_WhenMountSwapsSymlink_ReloadsNewContent()
    {
        // Mounted configuration layout: default.yaml -> ..data/default.yaml, ..data -> ..v1, swapped atomically to ..v2.
        var mount = Path.Combine(_dir, "mount");
        var v1 = Path.Combine(mount, "..v1");
        var v2 = Path.Combine(mount, "..v2");
        Directory.CreateDirectory(v1);
        Directory.CreateDirectory(v2);
        var text = File.ReadAllText(Path.Combine(_dir, "default.yaml"));
        File.WriteAllText(Path.Combine(v1, "default.yaml"), text);
        File.WriteAllText(Path.Combine(v2, "default.yaml"), text.Replace("limit: 150 °C", "limit: 149 °C", StringComparison.Ordinal));
        MountedRules.Link(mount, "..v1", layers: false);

        using var provider = FileRuleSetProvider.Open(mount, watch: true, debounce: TimeSpan.FromMilliseconds(100));
        var before = provider.Current.Digest;
        var reloaded = new TaskCompletionSource<ReloadResult>(TaskCreationOptions.RunContinuationsAsynchronously);
        provider.Reloaded += (_, r) => reloaded.TrySetResult(r);

        MountedRules.Swap(mount, "..v2");

        var done = await Task.WhenAny(reloaded.Task, Task.Delay(TimeSpan.FromSeconds(30)));
        Assert.Same(reloaded.Task, done);
        Assert.True((await reloaded.Task).Succeeded);
        Assert.NotEqual(before, provider.Current.Digest);
    }

    [Fact]
    public async Task Reload_WhenMountSwapsBetweenTwoSetsWhileReloading_ActivatesOnlyOneSetOrTheOtherNeverAMix()
    {
        // Mounted configuration again (default.yaml, sites and assets each through ..data), swapped atomically between
        // two complete sets that differ in three files: v2 lowers a default limit and adds a site and an asset layer.
        // Every state on disk is one whole set, so a reload that activates anything else read the files across a swap.
        var mount = Path.Combine(_dir, "mount");
        var v1 = Path.Combine(mount, "..v1");
        var v2 = Path.Combine(mount, "..v2");
        var text = File.ReadAllText(Path.Combine(_dir, "default.yaml"));
        foreach (var v in new[] { v1, v2 })
        {
            Directory.CreateDirectory(Path.Combine(v, "sites"));
            Directory.CreateDirectory(Path.Combine(v, "assets"));
        }

        File.WriteAllText(Path.Combine(v1, "default.yaml"), text);
        File.WriteAllText(Path.Combine(v2, "default.yaml"), text.Replace("limit: 150 °C", "limit: 149 °C", StringComparison.Ordinal));
        File.WriteAllText(Path.Combine(v2, "sites", "kestrel-ridge.yaml"), KestrelRidgeLayers.Site);
        File.WriteAllText(Path.Combine(v2, "assets", "K-101A.yaml"), KestrelRidgeLayers.Asset);
        string DigestOf(string directory) => FileRuleSetProvider.LoadDirectory(directory, DateTimeOffset.UnixEpoch).Resolve("kestrel-ridge", "K-101A").Digest;
        var whole = new[] { DigestOf(v1), DigestOf(v2) };
        Assert.NotEqual(whole[0], whole[1]);

        MountedRules.Link(mount, "..v1", layers: true);
        using var provider = FileRuleSetProvider.Open(mount, watch: false);
        Assert.Equal(whole[0], provider.Current.Resolve("kestrel-ridge", "K-101A").Digest);

        using var stop = new CancellationTokenSource();
        var swapper = MountedRules.StartSwapping(mount, "..v1", "..v2", TimeSpan.FromMilliseconds(10), stop.Token);

        var activated = new List<string>();
        var refused = 0;
        try
        {
            for (var i = 0; i < 300; i++)
            {
                var result = provider.Reload();
                if (result.Succeeded)
                {
                    activated.Add(provider.Current.Resolve("kestrel-ridge", "K-101A").Digest);
                }
                else
                {
                    refused++;
                }
            }
        }
        finally
        {
            await stop.CancelAsync();
            await swapper;
        }

        var mixed = activated.Count(d => !whole.Contains(d));
        Assert.True(mixed == 0, $"{mixed} of {activated.Count} reloads activated a set that was never on disk ({refused} refused, {swapper.Swaps} swaps)");
        Assert.Contains(whole[0], activated);
        Assert.Contains(whole[1], activated);
    }

    [Fact]
    public async Task ReloadAsync_WhenCalled_ReturnsOutcome()
    {
        using var provider = FileRuleSetProvider.Open(_dir, watch: false);
        var r = await provider.ReloadAsync();
        Assert.True(r.Succeeded);
        Assert.Equal(provider.Current.Digest, r.Digest);
    }
}
