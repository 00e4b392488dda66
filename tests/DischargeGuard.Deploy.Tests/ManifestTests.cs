namespace DischargeGuard.Deploy.Tests;

/// <summary>
/// The Kubernetes manifests under deploy/kubernetes, checked as the objects each kustomization produces. kustomize is
/// not installed on the build machines, so <see cref="Kustomization"/> builds them itself: it reads each
/// kustomization.yaml, loads its resources (every document of every file), generates the rules ConfigMap from its
/// files and applies the overlay's strategic-merge patch files over the base. It refuses any kustomization field it
/// does not apply, so the overlays stay within what it models (see <see cref="KustomizeBuilderTests"/>).
/// </summary>
public sealed class ManifestTests
{
    public static TheoryData<string> All => new(Manifests.Kustomizations);

    [Fact]
    public void Every_manifest_file_parses_and_every_object_names_its_api_version_kind_and_name()
    {
        var files = Directory.EnumerateFiles(Repo.Kubernetes, "*.yaml", SearchOption.AllDirectories)
            .Where(f => !f.Contains($"{Path.DirectorySeparatorChar}rules{Path.DirectorySeparatorChar}", StringComparison.Ordinal))
            .ToList();
        Assert.NotEmpty(files);
        foreach (var file in files)
        {
            var docs = Yaml.LoadAll(file);
            Assert.True(docs.Count > 0, $"{Repo.Relative(file)} holds no document");
            foreach (var doc in docs)
            {
                Assert.False(string.IsNullOrEmpty(doc.Str("apiVersion")), $"{Repo.Relative(file)}: a document has no apiVersion");
                Assert.False(string.IsNullOrEmpty(doc.Str("kind")), $"{Repo.Relative(file)}: a document has no kind");
                if (doc.Str("kind") != "Kustomization")
                {
                    Assert.False(string.IsNullOrEmpty(doc.Str("metadata", "name")), $"{Repo.Relative(file)}: a {doc.Str("kind")} has no metadata.name");
                }
            }
        }
    }

    [Fact]
    public void Every_manifest_file_is_used_by_some_kustomization()
    {
        var used = Manifests.Kustomizations.SelectMany(k => Manifests.Build(k).FilesRead).ToHashSet(StringComparer.Ordinal);
        var unused = Directory.EnumerateFiles(Repo.Kubernetes, "*.yaml", SearchOption.AllDirectories).Where(f => !used.Contains(f)).Select(Repo.Relative).ToList();
        Assert.True(unused.Count == 0, "files no kustomization reads: " + string.Join(", ", unused));
    }

    [Theory]
    [MemberData(nameof(All))]
    public void Readiness_and_liveness_probe_the_health_endpoints_on_the_container_port(string name)
    {
        var k = Manifests.Build(name);
        var container = k.Container();
        var ports = container.Maps("ports").ToList();
        var http = Assert.Single(ports, p => p.Str("name") == "http");
        Assert.Equal("8080", http.Str("containerPort"));
        Assert.Equal("http://+:8080", k.EnvValue("Urls"));

        Assert.Equal("/health/ready", container.Str("readinessProbe", "httpGet", "path"));
        Assert.Equal("/health/live", container.Str("livenessProbe", "httpGet", "path"));
        foreach (var probe in new[] { "readinessProbe", "livenessProbe", "startupProbe" })
        {
            var port = container.Str(probe, "httpGet", "port");
            Assert.True(port is "http" or "8080", $"{name}: {probe} probes port '{port}', not the container's port");
        }

        // Liveness must not depend on the audit store: a database outage should take pods out of the Service, not restart them.
        Assert.NotEqual(container.Str("livenessProbe", "httpGet", "path"), container.Str("readinessProbe", "httpGet", "path"));
    }

    [Theory]
    [MemberData(nameof(All))]
    public void Cpu_and_memory_requests_and_limits_are_set_and_requests_fit_the_limits(string name)
    {
        foreach (var (owner, container) in Manifests.Build(name).AllContainers())
        {
            foreach (var resource in new[] { "cpu", "memory" })
            {
                var request = container.Str("resources", "requests", resource);
                var limit = container.Str("resources", "limits", resource);
                Assert.False(request is null, $"{owner}: container {container.Str("name")} has no {resource} request");
                Assert.False(limit is null, $"{owner}: container {container.Str("name")} has no {resource} limit");
                Assert.True(Manifests.Quantity(request!) <= Manifests.Quantity(limit!), $"{owner}: {resource} request {request} is above the limit {limit}");
            }
        }
    }

    [Theory]
    [MemberData(nameof(All))]
    public void Pods_run_as_non_root_without_privilege_escalation_on_a_read_only_root_with_no_capabilities(string name)
    {
        var k = Manifests.Build(name);
        var pod = k.PodSpec();
        Assert.Equal(true, pod.Bool("securityContext", "runAsNonRoot"));
        Assert.Equal("RuntimeDefault", pod.Str("securityContext", "seccompProfile", "type"));
        Assert.Equal("false", pod.Str("automountServiceAccountToken"));
        var runAsUser = pod.Int("securityContext", "runAsUser");
        Assert.True(runAsUser is > 0, $"{name}: runAsUser is {runAsUser?.ToString(System.Globalization.CultureInfo.InvariantCulture) ?? "unset"}");

        foreach (var (owner, container) in k.AllContainers())
        {
            var what = $"{owner}: container {container.Str("name")}";
            Assert.True(container.Bool("securityContext", "allowPrivilegeEscalation") == false, $"{what}: allowPrivilegeEscalation is not false");
            Assert.True(container.Bool("securityContext", "readOnlyRootFilesystem") == true, $"{what}: readOnlyRootFilesystem is not true");
            Assert.True(container.Bool("securityContext", "privileged") != true, $"{what}: privileged");
            Assert.True(container.Bool("securityContext", "runAsNonRoot") != false, $"{what}: runAsNonRoot overridden to false");
            Assert.Contains("ALL", container.List("securityContext", "capabilities", "drop").Cast<string>());
            Assert.Empty(container.List("securityContext", "capabilities", "add"));
            var seccomp = container.Str("securityContext", "seccompProfile", "type") ?? pod.Str("securityContext", "seccompProfile", "type");
            Assert.Equal("RuntimeDefault", seccomp);
        }
    }

    [Theory]
    [MemberData(nameof(All))]
    public void Only_data_and_tmp_are_writable_and_the_rules_come_read_only_from_the_configmap(string name)
    {
        var k = Manifests.Build(name);
        var mounts = k.Container().Maps("volumeMounts").ToList();
        var writable = mounts.Where(m => m.Bool("readOnly") != true).Select(m => m.Str("mountPath")).Order(StringComparer.Ordinal).ToList();
        Assert.Equal(["/data", "/tmp"], writable);
        Assert.Contains(mounts, m => m.Str("mountPath") == "/rules" && m.Bool("readOnly") == true);
        Assert.Equal("/rules", k.EnvValue("DischargeGuard__RulesDirectory"));
        Assert.Equal("dischargeguard-rules", k.VolumeAt("/rules").Str("configMap", "name"));
        Assert.NotNull(k.VolumeAt("/tmp").Map("emptyDir"));

        // Every mount names a volume the pod defines.
        var volumes = k.PodSpec().Maps("volumes").Select(v => v.Str("name")).ToHashSet(StringComparer.Ordinal);
        Assert.All(mounts, m => Assert.Contains(m.Str("name"), volumes));
    }

    [Theory]
    [MemberData(nameof(All))]
    public void The_service_selects_the_pods_and_targets_the_container_port(string name)
    {
        var k = Manifests.Build(name);
        var deployment = k.Single("Deployment").Doc;
        var podLabels = deployment.Map("spec", "template", "metadata", "labels")!;
        var service = k.Single("Service").Doc;
        var selector = service.Map("spec", "selector")!;
        Assert.NotEmpty(selector);
        Assert.All(selector, kv => Assert.Equal(kv.Value, podLabels.GetValueOrDefault(kv.Key)));
        Assert.All(deployment.Map("spec", "selector", "matchLabels")!, kv => Assert.Equal(kv.Value, podLabels.GetValueOrDefault(kv.Key)));
        var target = service.Maps("spec", "ports").Single().Str("targetPort");
        Assert.True(target is "http" or "8080", $"the Service targets port '{target}'");
    }

    [Theory]
    [MemberData(nameof(All))]
    public void Api_keys_come_from_a_required_secret_so_the_service_listens_beyond_loopback(string name)
    {
        var k = Manifests.Build(name);
        var secretRef = Assert.Single(k.Container().Maps("envFrom"), e => e.Map("secretRef") is not null).Map("secretRef")!;
        Assert.Equal("dischargeguard-api-keys", secretRef.Str("name"));
        Assert.NotEqual("true", secretRef.Str("optional"));
    }

    [Fact]
    public void The_pods_run_as_the_images_user()
    {
        var user = DockerfileModel.Load(Repo.At("Dockerfile")).Runtime.Last(i => i.Keyword == "USER").Arguments;
        var pod = Manifests.Build(Manifests.Base).PodSpec();
        Assert.Equal(user.Split(':')[0], pod.Str("securityContext", "runAsUser"));
        Assert.Equal(user.Split(':')[^1], pod.Str("securityContext", "runAsGroup"));
        Assert.Equal(user.Split(':')[^1], pod.Str("securityContext", "fsGroup"));
    }

    [Theory]
    [MemberData(nameof(All))]
    public void The_deployment_sets_the_same_paths_as_the_image(string name)
    {
        var image = DockerfileModel.Env(DockerfileModel.Load(Repo.At("Dockerfile")).Runtime);
        var k = Manifests.Build(name);
        foreach (var variable in new[] { "Urls", "DischargeGuard__RulesDirectory", "Audit__SqlitePath" })
        {
            Assert.Equal(image[variable], k.EnvValue(variable));
        }
    }
}
