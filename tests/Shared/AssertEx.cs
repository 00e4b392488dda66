using System.Globalization;
using System.Runtime.CompilerServices;
using Xunit.Sdk;

namespace DischargeGuard.Testing;

/// <summary>Tolerance asserts that print expected, actual and the difference (linked into every test project).</summary>
internal static class AssertEx
{
    public static void Within(double expected, double actual, double absoluteTolerance, string? what = null, [CallerArgumentExpression(nameof(actual))] string? expression = null)
    {
        var diff = actual - expected;
        if (!(Math.Abs(diff) <= absoluteTolerance))
        {
            throw new XunitException(string.Create(CultureInfo.InvariantCulture,
                $"{what ?? expression}: expected {expected:R}, actual {actual:R}, difference {diff:R} (tolerance ±{absoluteTolerance:R})."));
        }
    }

    public static void WithinRelative(double expected, double actual, double relativeTolerance, string? what = null, [CallerArgumentExpression(nameof(actual))] string? expression = null)
    {
        var rel = (actual - expected) / expected;
        if (!(Math.Abs(rel) <= relativeTolerance))
        {
            throw new XunitException(string.Create(CultureInfo.InvariantCulture,
                $"{what ?? expression}: expected {expected:R}, actual {actual:R}, difference {actual - expected:R} = {rel * 100:0.####} % (tolerance ±{relativeTolerance * 100:0.####} %)."));
        }
    }
}
