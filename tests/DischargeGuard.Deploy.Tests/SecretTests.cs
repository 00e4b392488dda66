using System.Text.RegularExpressions;

namespace DischargeGuard.Deploy.Tests;

/// <summary>No secret in the repository: no Secret object with values, no generated secret, no secret-looking env var given as a value.</summary>
public sealed partial class SecretTests
{
    [GeneratedRegex(@"(?i)(password|passwd|secret|token|credential|connection_?string|api_?key|sha256|__keys__|(^|_)key$)")]
    private static partial Regex SecretLikeName();

    [GeneratedRegex(@"(?m)^\s*kind:\s*[""']?Secret[""']?\s*$")]
    private static partial Regex SecretKindLine();

    [Fact]
    public void No_yaml_file_in_the_repository_holds_a_secret_object_with_values()
    {
        var offenders = new List<string>();
        foreach (var file in Repo.Files(".yaml", ".yml"))
        {
            List<Dictionary<string, object?>> docs;
            try
            {
                docs = Yaml.LoadAll(file);
            }
            catch (YamlDotNet.Core.YamlException)
            {
                // Not plain YAML (a template, say): fall back to the text.
                if (SecretKindLine().IsMatch(File.ReadAllText(file)))
                {
                    offenders.Add($"{Repo.Relative(file)}: kind: Secret");
                }

                continue;
            }

            offenders.AddRange(docs
                .Where(d => d.Str("kind") == "Secret" && (d.Map("data") is { Count: > 0 } || d.Map("stringData") is { Count: > 0 }))
                .Select(d => $"{Repo.Relative(file)}: Secret/{d.Str("metadata", "name")}"));
        }

        Assert.True(offenders.Count == 0, "Secrets with values: " + string.Join("; ", offenders));
    }

    [Fact]
    public void No_kustomization_generates_a_secret()
    {
        foreach (var file in Directory.EnumerateFiles(Repo.Kubernetes, "kustomization.yaml", SearchOption.AllDirectories))
        {
            Assert.False(Yaml.LoadOne(file).ContainsKey("secretGenerator"), $"{Repo.Relative(file)} has a secretGenerator; create Secrets outside the repository");
        }
    }

    [Theory]
    [InlineData(Manifests.Base)]
    [InlineData(Manifests.Single)]
    [InlineData(Manifests.Cluster)]
    public void No_secret_looking_env_var_is_given_as_a_plain_value(string name)
    {
        foreach (var (owner, container) in Manifests.Build(name).AllContainers())
        {
            foreach (var env in container.Maps("env"))
            {
                var variable = env.Str("name") ?? string.Empty;
                if (SecretLikeName().IsMatch(variable))
                {
                    Assert.True(env.At("value") is null, $"{owner}: {variable} is given as a plain value; use valueFrom.secretKeyRef or envFrom.secretRef");
                    Assert.NotNull(env.Map("valueFrom", "secretKeyRef"));
                }
            }
        }
    }

    [Fact]
    public void Plain_files_under_deploy_carry_no_secret_looking_env_value_either()
    {
        // The patches themselves, before any merge: a value in a patch would be a value in the repository.
        foreach (var file in Directory.EnumerateFiles(Repo.Kubernetes, "*.yaml", SearchOption.AllDirectories)
                     .Where(f => !f.Contains($"{Path.DirectorySeparatorChar}rules{Path.DirectorySeparatorChar}", StringComparison.Ordinal)))
        {
            foreach (var doc in Yaml.LoadAll(file))
            {
                foreach (var env in doc.Maps("spec", "template", "spec", "containers").SelectMany(c => c.Maps("env")))
                {
                    var variable = env.Str("name") ?? string.Empty;
                    Assert.False(SecretLikeName().IsMatch(variable) && env.At("value") is not null, $"{Repo.Relative(file)}: {variable} has a plain value");
                }
            }
        }
    }

    [Theory]
    [InlineData("Audit__ConnectionString", true)]
    [InlineData("Auth__Keys__0__sha256", true)]
    [InlineData("Auth__Keys__0__id", true)]
    [InlineData("DB_PASSWORD", true)]
    [InlineData("SIGNING_KEY", true)]
    [InlineData("Audit__Provider", false)]
    [InlineData("DischargeGuard__Replicas", false)]
    [InlineData("Urls", false)]
    public void The_secret_name_pattern_catches_what_it_should(string variable, bool secret) =>
        Assert.Equal(secret, SecretLikeName().IsMatch(variable));
}
