using DischargeGuard.Rules.Provider;

namespace DischargeGuard.Deploy.Tests;

/// <summary>
/// The rules ConfigMap. kustomize reads only inside its folder, so base/rules holds a copy of the repository's rule
/// layers; these tests keep the copy exact and check that the ConfigMap, laid out by the volume's items the way the
/// kubelet mounts it at /rules, loads with the service's own loader to the same rule set as rules/.
/// </summary>
public sealed class RulesConfigMapTests
{
    private static List<GeneratedFile> Generated() =>
        Manifests.Build(Manifests.Base).GeneratedFiles.Where(g => g.ConfigMap == "dischargeguard-rules").ToList();

    private static IEnumerable<string> RepoLayers() =>
        new[] { Repo.At("rules", "default.yaml") }
            .Concat(Directory.EnumerateFiles(Repo.At("rules", "sites"), "*.yaml"))
            .Concat(Directory.EnumerateFiles(Repo.At("rules", "assets"), "*.yaml"));

    [Fact]
    public void The_copy_holds_every_rule_layer_of_the_repository_byte_for_byte()
    {
        var copies = Generated().ToDictionary(g => Path.GetRelativePath(Path.Combine(Repo.Kubernetes, "base", "rules"), g.Path).Replace('\\', '/'), StringComparer.Ordinal);
        foreach (var layer in RepoLayers())
        {
            var relative = Path.GetRelativePath(Repo.At("rules"), layer).Replace('\\', '/');
            Assert.True(copies.TryGetValue(relative, out var copy), $"rules/{relative} is not in the ConfigMap (add it to base/rules and to the generator and volume items)");
            Assert.True(
                File.ReadAllBytes(layer).AsSpan().SequenceEqual(File.ReadAllBytes(copy!.Path)),
                $"deploy/kubernetes/base/rules/{relative} differs from rules/{relative}: copy it again (cp rules/{relative} deploy/kubernetes/base/rules/{relative})");
        }

        Assert.Equal(RepoLayers().Count(), copies.Count);
    }

    [Fact]
    public void The_volume_items_map_every_configmap_key_to_its_layer_path()
    {
        var generated = Generated();
        var items = Manifests.Build(Manifests.Base).VolumeAt("/rules").Maps("configMap", "items")
            .ToDictionary(i => i.Str("key")!, i => i.Str("path")!, StringComparer.Ordinal);
        Assert.Equal(generated.Select(g => g.Key).Order(StringComparer.Ordinal), items.Keys.Order(StringComparer.Ordinal));
        foreach (var g in generated)
        {
            var expected = Path.GetRelativePath(Path.Combine(Repo.Kubernetes, "base", "rules"), g.Path).Replace('\\', '/');
            Assert.Equal(expected, items[g.Key]);
        }
    }

    [Fact]
    public void The_mounted_layout_loads_to_the_same_rule_set_as_the_repository()
    {
        var k = Manifests.Build(Manifests.Base);
        var data = k.OfKind("ConfigMap").Single(c => c.Name == "dischargeguard-rules").Doc.Map("data")!;
        var mount = Directory.CreateTempSubdirectory("dischargeguard-rules-mount-");
        try
        {
            foreach (var item in k.VolumeAt("/rules").Maps("configMap", "items"))
            {
                var path = Path.Combine(mount.FullName, item.Str("path")!);
                Directory.CreateDirectory(Path.GetDirectoryName(path)!);
                File.WriteAllText(path, (string)data[item.Str("key")!]!);
            }

            var now = DateTimeOffset.UnixEpoch;
            var mounted = FileRuleSetProvider.LoadDirectory(mount.FullName, now);
            var shipped = FileRuleSetProvider.LoadDirectory(Repo.At("rules"), now);
            Assert.Equal(shipped.Digest, mounted.Digest);
            Assert.Equal(shipped.Sites.Keys.Order(StringComparer.Ordinal), mounted.Sites.Keys.Order(StringComparer.Ordinal));
            Assert.Equal(shipped.Assets.Keys.Order(StringComparer.Ordinal), mounted.Assets.Keys.Order(StringComparer.Ordinal));
            Assert.Contains("marlow-fen", mounted.Sites.Keys);
            Assert.Contains("C-204B", mounted.Assets.Keys);
        }
        finally
        {
            mount.Delete(recursive: true);
        }
    }

    [Fact]
    public void Configmap_keys_are_valid_and_the_whole_map_fits_the_size_limit()
    {
        var generated = Generated();
        Assert.All(generated, g => Assert.Matches("^[-._a-zA-Z0-9]+$", g.Key));
        var total = generated.Sum(g => new FileInfo(g.Path).Length);
        Assert.True(total < 1_000_000, $"the rules ConfigMap would hold {total} bytes; a ConfigMap holds at most 1 MiB");
    }
}
