namespace DischargeGuard.Deploy.Tests;

/// <summary>The test's own kustomize subset: strategic-merge semantics the overlays rely on, and refusal of what it does not model.</summary>
public sealed class KustomizeBuilderTests
{
    private static Dictionary<string, object?> Parse(string yaml)
    {
        var file = Path.GetTempFileName();
        try
        {
            File.WriteAllText(file, yaml);
            return Yaml.LoadOne(file);
        }
        finally
        {
            File.Delete(file);
        }
    }

    [Fact]
    public void Named_lists_merge_by_their_key_and_other_lists_are_replaced()
    {
        var target = Parse("""
            containers:
              - name: a
                env: [{name: X, value: "1"}, {name: Y, value: "2"}]
                args: [one, two]
                volumeMounts: [{name: data, mountPath: /data}]
            """);
        var patch = Parse("""
            containers:
              - name: a
                env: [{name: Y, value: "3"}, {name: Z, valueFrom: {secretKeyRef: {name: s, key: k}}}]
                args: [three]
            """);
        var merged = StrategicMerge.Apply(target, patch);
        var container = merged.Maps("containers").Single();
        Assert.Equal(["1", "3", null], container.Maps("env").Select(e => e.Str("value")));
        Assert.Equal("s", container.Maps("env").Last().Str("valueFrom", "secretKeyRef", "name"));
        Assert.Equal(["three"], container.List("args").Cast<string>());
        Assert.Single(container.Maps("volumeMounts"));
    }

    [Fact]
    public void A_null_in_the_patch_removes_the_field()
    {
        var target = Parse("volumes: [{name: data, emptyDir: {sizeLimit: 1Gi}}]\nstrategy: {type: RollingUpdate, rollingUpdate: {maxSurge: 1}}");
        var patch = Parse("volumes: [{name: data, emptyDir: null, persistentVolumeClaim: {claimName: c}}]\nstrategy: {type: Recreate, rollingUpdate: null}");
        var merged = StrategicMerge.Apply(target, patch);
        var volume = merged.Maps("volumes").Single();
        Assert.Null(volume.At("emptyDir"));
        Assert.False(volume.ContainsKey("emptyDir"));
        Assert.Equal("c", volume.Str("persistentVolumeClaim", "claimName"));
        Assert.Equal("Recreate", merged.Str("strategy", "type"));
        Assert.False(merged.Map("strategy")!.ContainsKey("rollingUpdate"));
    }

    [Fact]
    public void Patching_does_not_change_the_base()
    {
        var target = Parse("spec: {replicas: \"1\"}");
        _ = StrategicMerge.Apply(target, Parse("spec: {replicas: \"3\"}"));
        Assert.Equal("1", target.Str("spec", "replicas"));
    }

    [Fact]
    public void A_kustomization_field_the_builder_does_not_apply_fails_the_build()
    {
        var dir = Directory.CreateTempSubdirectory("kustomize-lite-");
        try
        {
            File.WriteAllText(Path.Combine(dir.FullName, "kustomization.yaml"), "resources: []\nreplicas: [{name: x, count: 5}]\n");
            var error = Assert.Throws<NotSupportedException>(() => Kustomization.Build(dir.FullName));
            Assert.Contains("replicas", error.Message, StringComparison.Ordinal);
        }
        finally
        {
            dir.Delete(recursive: true);
        }
    }

    [Fact]
    public void A_generator_file_outside_the_folder_is_refused_as_kustomize_refuses_it()
    {
        var dir = Directory.CreateTempSubdirectory("kustomize-lite-");
        try
        {
            File.WriteAllText(Path.Combine(dir.FullName, "kustomization.yaml"), "configMapGenerator:\n  - name: r\n    files: [default.yaml=../default.yaml]\n");
            Assert.Throws<InvalidDataException>(() => Kustomization.Build(dir.FullName));
        }
        finally
        {
            dir.Delete(recursive: true);
        }
    }

    [Fact]
    public void A_patch_with_no_object_to_patch_fails_the_build()
    {
        var dir = Directory.CreateTempSubdirectory("kustomize-lite-");
        try
        {
            File.WriteAllText(Path.Combine(dir.FullName, "kustomization.yaml"), "patches:\n  - path: p.yaml\n");
            File.WriteAllText(Path.Combine(dir.FullName, "p.yaml"), "apiVersion: apps/v1\nkind: Deployment\nmetadata: {name: missing}\n");
            Assert.Throws<InvalidDataException>(() => Kustomization.Build(dir.FullName));
        }
        finally
        {
            dir.Delete(recursive: true);
        }
    }
}
