namespace DischargeGuard.Cli;

/// <summary>What the gate reads from its surroundings: environment variables and the default rules directory. Tests pass their own.</summary>
public sealed class GateEnvironment
{
    /// <summary>The variable naming the service's base address; when set, <c>check</c> evaluates through it unless <c>--local</c> is given.</summary>
    public const string ServerVariable = "DISCHARGEGUARD_SERVER";

    /// <summary>The default variable holding the API key (another one can be named with <c>--key-env</c>).</summary>
    public const string KeyVariable = "DISCHARGEGUARD_API_KEY";

    /// <summary>Optional variable naming the caller written into local audit records.</summary>
    public const string CallerVariable = "DISCHARGEGUARD_CALLER";

    private readonly Func<string, string?> _variables;

    /// <summary>Creates an environment.</summary>
    /// <param name="variables">Looks up an environment variable.</param>
    /// <param name="shippedRulesDirectory">The rules shipped beside the binary.</param>
    public GateEnvironment(Func<string, string?> variables, string shippedRulesDirectory)
    {
        _variables = variables;
        ShippedRulesDirectory = shippedRulesDirectory;
    }

    /// <summary>The process's own environment and the rules copied beside the binary.</summary>
    public static GateEnvironment Process { get; } = new(Environment.GetEnvironmentVariable, Path.Combine(AppContext.BaseDirectory, "rules"));

    /// <summary>The rules directory used by <c>--local</c> when <c>--rules</c> is not given.</summary>
    public string ShippedRulesDirectory { get; }

    /// <summary>An environment variable's value, or null when unset or empty.</summary>
    /// <param name="name">The variable.</param>
    /// <returns>Its value.</returns>
    public string? Variable(string name) => _variables(name) is { Length: > 0 } v ? v : null;
}
