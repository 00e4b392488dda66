namespace DischargeGuard.Deploy.Tests;

/// <summary>What each overlay promises: one pod on a SQLite file, or several on PostgreSQL (see <see cref="ManifestTests"/> for how they are built).</summary>
public sealed class OverlayTests
{
    [Fact]
    public void Single_runs_one_replica_recreated_on_sqlite_on_a_persistent_volume()
    {
        var k = Manifests.Build(Manifests.Single);
        var spec = k.Single("Deployment").Doc.Map("spec")!;
        Assert.Equal(1, spec.Int("replicas"));
        Assert.Equal("Recreate", spec.Str("strategy", "type"));
        Assert.Null(spec.At("strategy", "rollingUpdate"));
        Assert.Equal("1", k.EnvValue("DischargeGuard__Replicas"));
        Assert.NotEqual("postgresql", k.EnvValue("Audit__Provider"));
        Assert.False(k.Env().ContainsKey("Audit__ConnectionString"), "the single overlay has a PostgreSQL connection string");

        var data = k.VolumeAt("/data")!;
        Assert.Null(data.At("emptyDir"));
        var claim = data.Str("persistentVolumeClaim", "claimName");
        var pvc = Assert.Single(k.OfKind("PersistentVolumeClaim"), r => r.Name == claim);
        Assert.Contains("ReadWriteOnce", pvc.Doc.List("spec", "accessModes").Cast<string>());
        Assert.StartsWith("/data/", k.EnvValue("Audit__SqlitePath"), StringComparison.Ordinal);
    }

    [Fact]
    public void Single_has_no_autoscaler_or_anything_else_that_could_start_a_second_pod_on_the_file()
    {
        var k = Manifests.Build(Manifests.Single);
        Assert.Empty(k.OfKind("HorizontalPodAutoscaler"));
        Assert.Single(k.OfKind("Deployment"));
        Assert.Empty(k.OfKind("StatefulSet"));
    }

    [Fact]
    public void Cluster_runs_at_least_three_replicas_rolling_on_postgresql()
    {
        var k = Manifests.Build(Manifests.Cluster);
        var spec = k.Single("Deployment").Doc.Map("spec")!;
        var replicas = spec.Int("replicas");
        Assert.True(replicas >= 3, $"cluster replicas: {replicas}");
        Assert.Equal("RollingUpdate", spec.Str("strategy", "type"));
        Assert.Equal("0", spec.Str("strategy", "rollingUpdate", "maxUnavailable"));

        Assert.Equal("postgresql", k.EnvValue("Audit__Provider"));
        var declared = int.Parse(k.EnvValue("DischargeGuard__Replicas")!, System.Globalization.CultureInfo.InvariantCulture);
        Assert.True(declared >= 2, "DischargeGuard__Replicas must be above 1 so the service refuses a SQLite store");
        Assert.Equal(replicas, declared);

        var connection = k.Env()["Audit__ConnectionString"];
        Assert.Null(connection.At("value"));
        Assert.Equal("dischargeguard-audit-db", connection.Str("valueFrom", "secretKeyRef", "name"));
        Assert.Equal("connection-string", connection.Str("valueFrom", "secretKeyRef", "key"));
    }

    [Fact]
    public void Cluster_autoscales_from_at_least_three_and_targets_its_deployment()
    {
        var k = Manifests.Build(Manifests.Cluster);
        var hpa = k.Single("HorizontalPodAutoscaler").Doc;
        Assert.Equal("autoscaling/v2", hpa.Str("apiVersion"));
        var min = hpa.Int("spec", "minReplicas");
        var max = hpa.Int("spec", "maxReplicas");
        Assert.True(min >= 3, $"minReplicas {min}");
        Assert.True(max >= min, $"maxReplicas {max} below minReplicas {min}");
        Assert.Equal(k.Single("Deployment").Doc.Int("spec", "replicas"), min);
        Assert.Equal("Deployment", hpa.Str("spec", "scaleTargetRef", "kind"));
        Assert.Equal(k.Single("Deployment").Name, hpa.Str("spec", "scaleTargetRef", "name"));
        Assert.NotEmpty(hpa.List("spec", "metrics"));
    }

    [Fact]
    public void Cluster_has_a_disruption_budget_over_its_pods_that_still_lets_a_drain_proceed()
    {
        var k = Manifests.Build(Manifests.Cluster);
        var pdb = k.Single("PodDisruptionBudget").Doc;
        Assert.Equal("policy/v1", pdb.Str("apiVersion"));
        var podLabels = k.Single("Deployment").Doc.Map("spec", "template", "metadata", "labels")!;
        var selector = pdb.Map("spec", "selector", "matchLabels")!;
        Assert.NotEmpty(selector);
        Assert.All(selector, kv => Assert.Equal(kv.Value, podLabels.GetValueOrDefault(kv.Key)));

        var replicas = k.Single("Deployment").Doc.Int("spec", "replicas")!.Value;
        var minAvailable = pdb.Int("spec", "minAvailable");
        var maxUnavailable = pdb.Int("spec", "maxUnavailable");
        Assert.True(minAvailable is not null || maxUnavailable is not null, "the PDB sets neither minAvailable nor maxUnavailable (as a count)");
        Assert.True(minAvailable is null || (minAvailable >= 2 && minAvailable < replicas), $"minAvailable {minAvailable} with {replicas} replicas");
        Assert.True(maxUnavailable is null || maxUnavailable >= 1, $"maxUnavailable {maxUnavailable}");
    }

    [Theory]
    [InlineData(Manifests.Base)]
    [InlineData(Manifests.Single)]
    [InlineData(Manifests.Cluster)]
    public void Several_replicas_never_run_on_sqlite(string name)
    {
        var k = Manifests.Build(name);
        var replicas = k.Single("Deployment").Doc.Int("spec", "replicas") ?? 1;
        var hpaMax = k.OfKind("HorizontalPodAutoscaler").Select(h => h.Doc.Int("spec", "maxReplicas") ?? 1).DefaultIfEmpty(1).Max();
        if (Math.Max(replicas, hpaMax) > 1 || k.Single("Deployment").Doc.Str("spec", "strategy", "type") != "Recreate")
        {
            if (k.EnvValue("Audit__Provider") != "postgresql")
            {
                // Only the base may, since every pod has its own emptyDir; the docs say not to deploy it alone.
                Assert.Equal(Manifests.Base, name);
                Assert.NotNull(k.VolumeAt("/data").Map("emptyDir"));
                Assert.Equal(1, replicas);
            }
        }
    }
}
