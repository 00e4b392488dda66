namespace DischargeGuard.Cli;

/// <summary>
/// The gate's exit codes (BSD sysexits values for the errors). Across several files and cases the code of highest
/// precedence wins: <see cref="InternalError"/> &gt; <see cref="KeyRefused"/> &gt; <see cref="ServiceUnavailable"/> &gt;
/// <see cref="RateLimited"/> &gt; <see cref="InvalidInput"/> &gt; <see cref="Fail"/> &gt; <see cref="Review"/> &gt; <see cref="Pass"/>.
/// </summary>
public static class ExitCodes
{
    /// <summary>Every case evaluated and passed.</summary>
    public const int Pass = 0;

    /// <summary>Every case evaluated; at least one needs review (a warning finding, or a rule that could not be checked).</summary>
    public const int Review = 1;

    /// <summary>Every case evaluated; at least one fails (a violation finding).</summary>
    public const int Fail = 2;

    /// <summary>Invalid input or usage (EX_USAGE): a proposal, rule file or command line that cannot be used, with file, line and field named; or the active rules are not the approved set.</summary>
    public const int InvalidInput = 64;

    /// <summary>The service, or the local audit store, is unavailable (EX_UNAVAILABLE): not listening, timed out, 5xx, or the audit record could not be written.</summary>
    public const int ServiceUnavailable = 69;

    /// <summary>An internal error of the gate itself (EX_SOFTWARE).</summary>
    public const int InternalError = 70;

    /// <summary>The service refused the request for its rate limit (EX_TEMPFAIL): retry later.</summary>
    public const int RateLimited = 75;

    /// <summary>The service refused the API key (EX_NOPERM): missing, unknown, or without the evaluate role (401/403).</summary>
    public const int KeyRefused = 77;

    /// <summary>The code that wins when two cases or files end with <paramref name="a"/> and <paramref name="b"/>.</summary>
    /// <param name="a">One exit code.</param>
    /// <param name="b">Another exit code.</param>
    /// <returns>The one of higher precedence.</returns>
    public static int Worst(int a, int b) => Rank(a) >= Rank(b) ? a : b;

    /// <summary>Precedence rank of an exit code (higher wins); an unknown code ranks as an internal error.</summary>
    /// <param name="code">The exit code.</param>
    /// <returns>0 for pass up to 7 for an internal error.</returns>
    public static int Rank(int code) => code switch
    {
        Pass => 0,
        Review => 1,
        Fail => 2,
        InvalidInput => 3,
        RateLimited => 4,
        ServiceUnavailable => 5,
        KeyRefused => 6,
        _ => 7,
    };

    /// <summary>The exit code of a verdict word (pass, review, fail).</summary>
    /// <param name="verdict">The verdict.</param>
    /// <returns>0, 1 or 2; an unknown word is an internal error.</returns>
    public static int OfVerdict(string? verdict) => verdict switch
    {
        "pass" => Pass,
        "review" => Review,
        "fail" => Fail,
        _ => InternalError,
    };

    /// <summary>A short name for an exit code, for reports.</summary>
    /// <param name="code">The exit code.</param>
    /// <returns>e.g. "pass", "invalid input", "key refused".</returns>
    public static string Describe(int code) => code switch
    {
        Pass => "pass",
        Review => "review needed",
        Fail => "fail",
        InvalidInput => "invalid input",
        ServiceUnavailable => "service unavailable",
        RateLimited => "rate limited",
        KeyRefused => "key refused",
        _ => "internal error",
    };
}
