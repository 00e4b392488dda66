namespace DischargeGuard.Deploy.Tests;

/// <summary>The kustomizations under deploy/kubernetes and the pieces of their Deployment the tests look at.</summary>
internal static class Manifests
{
    public const string Base = "base";
    public const string Single = "overlays/single";
    public const string Cluster = "overlays/cluster";

    public static readonly string[] Kustomizations = [Base, Single, Cluster];

    public static readonly string[] Overlays = [Single, Cluster];

    public static Kustomization Build(string name) => Kustomization.Build(Path.Combine(Repo.Kubernetes, name));

    public static Dictionary<string, object?> PodSpec(this Kustomization k) =>
        k.Single("Deployment").Doc.Map("spec", "template", "spec") ?? throw new InvalidDataException("the Deployment has no pod template spec");

    public static Dictionary<string, object?> Container(this Kustomization k)
    {
        var containers = k.PodSpec().Maps("containers").ToList();
        return containers.SingleOrDefault(c => c.Str("name") == "dischargeguard")
            ?? throw new InvalidDataException($"no container 'dischargeguard' among {containers.Count}");
    }

    /// <summary>The container's env entries by name.</summary>
    public static Dictionary<string, Dictionary<string, object?>> Env(this Kustomization k) =>
        k.Container().Maps("env").ToDictionary(e => e.Str("name") ?? string.Empty, e => e, StringComparer.Ordinal);

    /// <summary>A plain env value, or null when absent or not given as a value.</summary>
    public static string? EnvValue(this Kustomization k, string name) => k.Env().GetValueOrDefault(name)?.Str("value");

    /// <summary>The pod volume mounted at a path.</summary>
    public static Dictionary<string, object?>? VolumeAt(this Kustomization k, string mountPath)
    {
        var mount = k.Container().Maps("volumeMounts").FirstOrDefault(m => m.Str("mountPath") == mountPath);
        return mount is null ? null : k.PodSpec().Maps("volumes").FirstOrDefault(v => v.Str("name") == mount.Str("name"));
    }

    /// <summary>Every container of every pod template or pod in a built kustomization.</summary>
    public static IEnumerable<(Resource Owner, Dictionary<string, object?> Container)> AllContainers(this Kustomization k) =>
        k.Resources.SelectMany(r =>
        {
            var spec = r.Kind == "Pod" ? r.Doc.Map("spec") : r.Doc.Map("spec", "template", "spec") ?? r.Doc.Map("spec", "jobTemplate", "spec", "template", "spec");
            return spec.Maps("containers").Concat(spec.Maps("initContainers")).Select(c => (r, c));
        });

    /// <summary>Kubernetes quantity to a number (cores or bytes): 250m, 2, 256Mi, 1Gi, 500M.</summary>
    public static double Quantity(string text)
    {
        (string Suffix, double Factor)[] units =
        [
            ("Ki", 1024d), ("Mi", 1024d * 1024), ("Gi", 1024d * 1024 * 1024), ("Ti", 1024d * 1024 * 1024 * 1024),
            ("k", 1e3), ("M", 1e6), ("G", 1e9), ("T", 1e12), ("m", 1e-3),
        ];
        foreach (var (suffix, factor) in units)
        {
            if (text.EndsWith(suffix, StringComparison.Ordinal))
            {
                return double.Parse(text[..^suffix.Length], System.Globalization.CultureInfo.InvariantCulture) * factor;
            }
        }

        return double.Parse(text, System.Globalization.CultureInfo.InvariantCulture);
    }
}
