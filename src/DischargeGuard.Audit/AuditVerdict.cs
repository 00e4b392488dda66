namespace DischargeGuard.Audit;

/// <summary>The verdict strings the audit store accepts.</summary>
public static class AuditVerdict
{
    /// <summary>Every limit is met with margin.</summary>
    public const string Pass = "pass";

    /// <summary>A limit is approached; an engineer should look.</summary>
    public const string Review = "review";

    /// <summary>A limit is exceeded.</summary>
    public const string Fail = "fail";

    /// <summary>Whether <paramref name="verdict"/> is one of the accepted strings (exact, lower case).</summary>
    /// <param name="verdict">The string to test.</param>
    /// <returns><see langword="true"/> for <c>pass</c>, <c>review</c> or <c>fail</c>.</returns>
    public static bool IsKnown(string? verdict) => verdict is Pass or Review or Fail;
}
