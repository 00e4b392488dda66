namespace DischargeGuard.Deploy.Tests;

/// <summary>One object of a built kustomization, with the file it came from.</summary>
internal sealed record Resource(string Source, Dictionary<string, object?> Doc)
{
    public string Kind => Doc.Str("kind") ?? string.Empty;

    public string Name => Doc.Str("metadata", "name") ?? string.Empty;

    public override string ToString() => $"{Kind}/{Name} ({Repo.Relative(Source)})";
}

/// <summary>A configMapGenerator entry: the ConfigMap's key and the file it is read from.</summary>
internal sealed record GeneratedFile(string ConfigMap, string Key, string Path);

/// <summary>
/// The part of <c>kustomize build</c> these manifests use, so the tests can check the objects an overlay really
/// produces without kustomize installed. It applies <c>resources</c> (files and folders, recursively),
/// <c>configMapGenerator</c> (files only, kept inside the kustomization's folder as kustomize requires),
/// <c>patches</c> / <c>patchesStrategicMerge</c> (strategic-merge patch files, matched by kind and name or by an explicit
/// target) and <c>namespace</c>. Any other kustomization field fails the build here instead of being silently ignored,
/// so a manifest change that this builder does not understand shows up as a failing test to extend it.
/// Not modelled: the content-hash suffix of generated names (every reference keeps the unsuffixed name, as kustomize
/// rewrites them consistently) and JSON 6902 patches.
/// </summary>
internal sealed class Kustomization
{
    private static readonly HashSet<string> Supported = new(StringComparer.Ordinal)
    {
        "apiVersion", "kind", "resources", "patches", "patchesStrategicMerge", "configMapGenerator", "namespace",
    };

    public List<Resource> Resources { get; } = [];

    public List<GeneratedFile> GeneratedFiles { get; } = [];

    /// <summary>Every file the build read (kustomizations, resources, patches, generator inputs).</summary>
    public List<string> FilesRead { get; } = [];

    public static Kustomization Build(string directory)
    {
        var result = new Kustomization();
        result.BuildInto(Path.GetFullPath(directory));
        return result;
    }

    public IEnumerable<Resource> OfKind(string kind) => Resources.Where(r => r.Kind == kind);

    public Resource Single(string kind)
    {
        var all = OfKind(kind).ToList();
        return all.Count == 1 ? all[0] : throw new InvalidOperationException($"expected one {kind}, found {all.Count}: {string.Join(", ", all)}");
    }

    private void BuildInto(string directory)
    {
        var file = Path.Combine(directory, "kustomization.yaml");
        if (!File.Exists(file))
        {
            throw new FileNotFoundException($"no kustomization.yaml in {Repo.Relative(directory)}", file);
        }

        FilesRead.Add(file);
        var k = Yaml.LoadOne(file);
        if (k.Keys.FirstOrDefault(key => !Supported.Contains(key)) is { } unknown)
        {
            throw new NotSupportedException($"{Repo.Relative(file)}: '{unknown}' is not applied by the test's kustomize builder; extend Kustomization or keep the overlay simpler.");
        }

        var own = new List<Resource>();
        foreach (var entry in k.List("resources").Cast<string>())
        {
            var full = Path.GetFullPath(Path.Combine(directory, entry));
            if (Directory.Exists(full))
            {
                var inner = Build(full);
                own.AddRange(inner.Resources);
                GeneratedFiles.AddRange(inner.GeneratedFiles);
                FilesRead.AddRange(inner.FilesRead);
            }
            else
            {
                FilesRead.Add(full);
                own.AddRange(Yaml.LoadAll(full).Select(d => new Resource(full, d)));
            }
        }

        foreach (var generator in k.Maps("configMapGenerator"))
        {
            var name = generator.Str("name") ?? throw new InvalidDataException($"{Repo.Relative(file)}: a configMapGenerator has no name.");
            if (generator.Keys.Any(key => key is not ("name" or "files")))
            {
                throw new NotSupportedException($"{Repo.Relative(file)}: configMapGenerator '{name}' uses more than name and files.");
            }

            var data = new Dictionary<string, object?>(StringComparer.Ordinal);
            foreach (var spec in generator.List("files").Cast<string>())
            {
                var eq = spec.IndexOf('=', StringComparison.Ordinal);
                var key = eq < 0 ? Path.GetFileName(spec) : spec[..eq];
                var relative = eq < 0 ? spec : spec[(eq + 1)..];
                var full = Path.GetFullPath(Path.Combine(directory, relative));
                if (!full.StartsWith(directory + Path.DirectorySeparatorChar, StringComparison.Ordinal))
                {
                    throw new InvalidDataException($"{Repo.Relative(file)}: '{relative}' is outside the kustomization's folder, which kustomize refuses to read.");
                }

                FilesRead.Add(full);
                data[key] = File.ReadAllText(full);
                GeneratedFiles.Add(new GeneratedFile(name, key, full));
            }

            own.Add(new Resource(file, new Dictionary<string, object?>(StringComparer.Ordinal)
            {
                ["apiVersion"] = "v1",
                ["kind"] = "ConfigMap",
                ["metadata"] = new Dictionary<string, object?>(StringComparer.Ordinal) { ["name"] = name },
                ["data"] = data,
            }));
        }

        var patchFiles = k.Maps("patches").Select(p => (Path: p.Str("path"), Target: p.Map("target"), Entry: p))
            .Concat(k.List("patchesStrategicMerge").Cast<string>().Select(p => (Path: (string?)p, Target: (Dictionary<string, object?>?)null, Entry: new Dictionary<string, object?>())));
        foreach (var (path, target, entry) in patchFiles)
        {
            if (path is null || entry.ContainsKey("patch"))
            {
                throw new NotSupportedException($"{Repo.Relative(file)}: only patch files (path:) are applied, not inline patches.");
            }

            var full = Path.GetFullPath(Path.Combine(directory, path));
            FilesRead.Add(full);
            foreach (var patch in Yaml.LoadAll(full))
            {
                var kind = target.Str("kind") ?? patch.Str("kind");
                var name = target.Str("name") ?? patch.Str("metadata", "name");
                var index = own.FindIndex(r => r.Kind == kind && r.Name == name);
                if (index < 0)
                {
                    throw new InvalidDataException($"{Repo.Relative(full)}: no {kind}/{name} to patch.");
                }

                own[index] = own[index] with { Doc = (Dictionary<string, object?>)StrategicMerge.Apply(own[index].Doc, patch)! };
            }
        }

        if (k.Str("namespace") is { } ns)
        {
            foreach (var r in own)
            {
                if (r.Doc.Map("metadata") is { } metadata)
                {
                    metadata["namespace"] = ns;
                }
            }
        }

        Resources.AddRange(own);
    }
}

/// <summary>
/// Strategic-merge patch as kustomize applies it to these objects: mappings merge field by field, a <see langword="null"/>
/// in the patch removes the field, lists with a Kubernetes merge key (containers, env, volumes, volumeMounts … by name;
/// ports by containerPort; topologySpreadConstraints by topologyKey) merge item by item, and every other list is replaced.
/// </summary>
internal static class StrategicMerge
{
    private static readonly Dictionary<string, string> MergeKeys = new(StringComparer.Ordinal)
    {
        ["containers"] = "name",
        ["initContainers"] = "name",
        ["ephemeralContainers"] = "name",
        ["env"] = "name",
        ["volumes"] = "name",
        ["volumeMounts"] = "mountPath",
        ["volumeDevices"] = "devicePath",
        ["imagePullSecrets"] = "name",
        ["ports"] = "containerPort",
        ["topologySpreadConstraints"] = "topologyKey",
        ["hostAliases"] = "ip",
    };

    public static object? Apply(object? target, object? patch, string? field = null)
    {
        switch (target, patch)
        {
            case (Dictionary<string, object?> t, Dictionary<string, object?> p):
                var result = (Dictionary<string, object?>)Yaml.Clone(t);
                foreach (var (key, value) in p)
                {
                    if (value is null)
                    {
                        result.Remove(key);
                    }
                    else
                    {
                        result[key] = result.TryGetValue(key, out var existing) ? Apply(existing, value, key) : Yaml.Clone(value);
                    }
                }

                return result;

            case (List<object?> t, List<object?> p) when field is not null && MergeKeys.TryGetValue(field, out var mergeKey):
                var merged = t.Select(i => i is null ? null : Yaml.Clone(i)).ToList();
                foreach (var item in p.OfType<Dictionary<string, object?>>())
                {
                    var key = item.Str(mergeKey);
                    var index = merged.FindIndex(m => key is not null && m.Str(mergeKey) == key);
                    if (index >= 0)
                    {
                        merged[index] = Apply(merged[index], item, null);
                    }
                    else
                    {
                        merged.Add(Yaml.Clone(item));
                    }
                }

                return merged;

            default:
                return patch is null ? null : Yaml.Clone(patch);
        }
    }
}
