namespace DischargeGuard.Thermo.Core;

/// <summary>
/// The fast first attempt of the envelope searches: the secant method on a smooth, monotone stage temperature, started
/// from two points near the answer. It gives up (false) at the first sign of trouble — a trial without an answer, a
/// step leaving the window it was given, a function that does not move, no convergence within a few steps — and the
/// caller then runs its bracketed search, so the fast path only ever replaces the bracketed one where both agree.
/// </summary>
internal static class SecantRoot
{
    /// <summary>Finds x in [<paramref name="lo"/>, <paramref name="hi"/>] with |f(x)| ≤ <paramref name="toleranceKelvin"/>.</summary>
    /// <param name="f">The stage temperature minus the limit, K; null where the model gives no answer.</param>
    /// <param name="x0">First point.</param>
    /// <param name="f0">f(x0), already solved.</param>
    /// <param name="x1">Second point (a first estimate of the root).</param>
    /// <param name="lo">Lower end of the window every iterate must stay inside.</param>
    /// <param name="hi">Upper end of the window.</param>
    /// <param name="toleranceKelvin">Stop when |f| is at most this, K.</param>
    /// <param name="maxSteps">Most function evaluations after x0.</param>
    /// <param name="root">The root when true.</param>
    public static bool TryFind(Func<double, double?> f, double x0, double f0, double x1, double lo, double hi, double toleranceKelvin, int maxSteps, out double root)
    {
        root = double.NaN;
        if (Math.Abs(f0) <= toleranceKelvin)
        {
            root = x0;
            return true;
        }

        for (var i = 0; i < maxSteps; i++)
        {
            if (!(x1 >= lo && x1 <= hi) || x1 == x0 || f(x1) is not { } f1)
            {
                return false;
            }

            if (Math.Abs(f1) <= toleranceKelvin)
            {
                root = x1;
                return true;
            }

            if (f1 == f0)
            {
                return false;
            }

            var x2 = x1 - (f1 * (x1 - x0) / (f1 - f0));
            x0 = x1;
            f0 = f1;
            x1 = x2;
        }

        return false;
    }
}
