namespace DischargeGuard.Thermo.Core;

/// <summary>
/// Phase stability and dew points of one Peng-Robinson mixture (its own mole fractions are the feed z): Michelsen's
/// tangent-plane stability test (Fluid Phase Equilibria 9, 1–19, 1982) by successive substitution with the
/// dominant-eigenvalue acceleration (Crowe &amp; Nishio, AIChE J. 21, 528, 1975), the upper dew point at a pressure by a
/// downward temperature scan of that test and bisection, and the pure-component saturation curve by equal fugacities
/// of the two roots. Units: K, Pa. Immutable and thread-safe; scratch lives on the stack.
/// </summary>
internal sealed class PhaseEquilibrium
{
    /// <summary>Lowest temperature the dew-point scan goes down to, K (just below methane's triple point, 90.7 K).</summary>
    public const double SearchFloorKelvin = 90.0;

    /// <summary>Scan step of the dew-point search, K.</summary>
    public const double ScanStepKelvin = 5.0;

    /// <summary>Reduced tangent-plane distance below which a trial phase counts as found (numerical noise above it).</summary>
    public const double UnstableBelow = -1e-8;

    private const int MaxStack = 32;
    private const double Sqrt2 = 1.4142135623730950488;
    private const int MaxIterations = 300;

    /// <summary>Convergence of the substitution: Σ(Δ ln W_i)² below this (|Δ ln W| ≈ 1e-9).</summary>
    public const double FineTolerance = 1e-18;

    /// <summary>Looser convergence for the scan steps, which need only the sign and a warm start.</summary>
    public const double ScanTolerance = 1e-12;

    private readonly PengRobinsonMixture _eos;
    private readonly double[] _lnZ;
    private readonly int _heaviest;
    private readonly int _lightest;

    public PhaseEquilibrium(PengRobinsonMixture eos)
    {
        _eos = eos;
        var n = eos.Count;
        _lnZ = new double[n];
        var x = eos.MoleFractions;
        var tc = eos.CriticalTemperaturesKelvin;
        double tpc = 0, maxTc = 0, minTc = double.MaxValue;
        for (var i = 0; i < n; i++)
        {
            _lnZ[i] = Math.Log(x[i]);
            tpc += x[i] * tc[i];
            if (tc[i] > maxTc)
            {
                maxTc = tc[i];
                _heaviest = i;
            }

            if (tc[i] < minTc)
            {
                minTc = tc[i];
                _lightest = i;
            }
        }

        PseudoCriticalTemperatureKelvin = tpc;
        MaximumCriticalTemperatureKelvin = maxTc;
    }

    public int Count => _eos.Count;

    /// <summary>Σ z_i Tc_i, K (Kay's rule), used to call a lone dense root liquid-like.</summary>
    public double PseudoCriticalTemperatureKelvin { get; }

    /// <summary>The highest component Tc, K.</summary>
    public double MaximumCriticalTemperatureKelvin { get; }

    /// <summary>
    /// ln φ_i of composition <paramref name="x"/> on the root of lower Gibbs energy; returns Z. <paramref name="liquidLike"/>
    /// is true for the smaller of three roots, or a lone root with V/b below the PR critical V_c/b.
    /// </summary>
    public static double LogFugacity(
        ReadOnlySpan<double> aij, ReadOnlySpan<double> bi, ReadOnlySpan<double> x, double rt, double pPascals, Span<double> lnPhi, Span<double> sumA, out bool liquidLike, out int roots)
    {
        var n = x.Length;
        double a = 0, b = 0;
        for (var i = 0; i < n; i++)
        {
            double s = 0;
            var row = aij.Slice(i * n, n);
            for (var j = 0; j < n; j++)
            {
                s += x[j] * row[j];
            }

            sumA[i] = s;
            a += x[i] * s;
            b += x[i] * bi[i];
        }

        var aDim = a * pPascals / (rt * rt);
        var bDim = b * pPascals / rt;
        roots = PengRobinsonMixture.Roots(aDim, bDim, out var zv, out var zl);
        var z = zv;
        if (roots == 3 && ReducedGibbs(zl, aDim, bDim) < ReducedGibbs(zv, aDim, bDim))
        {
            z = zl;
            liquidLike = true;
        }
        else
        {
            liquidLike = roots == 1 && z / bDim < PengRobinsonMixture.CriticalVolumeOverB;
        }

        var l = Math.Log((z + ((1 + Sqrt2) * bDim)) / (z + ((1 - Sqrt2) * bDim)));
        var lnZb = Math.Log(z - bDim);
        var k = aDim / (2 * Sqrt2 * bDim) * l;
        for (var i = 0; i < n; i++)
        {
            var br = bi[i] / b;
            lnPhi[i] = (br * (z - 1)) - lnZb - (k * ((2 * sumA[i] / a) - br));
        }

        return z;
    }

    /// <summary>
    /// The tangent-plane stability test of the feed at (T, P). Trial phases: the warm start (if given), the Wilson
    /// liquid-like (z/K) and vapour-like (zK) phases, and pure-component-like phases (the heaviest and lightest
    /// component, or every component when <paramref name="allTrials"/>). With <paramref name="stopWhenUnstable"/>, the
    /// first trial whose modified tangent-plane distance tm* turns negative ends the test (its value is then an upper
    /// bound of the minimum). <paramref name="incipient"/> receives the composition of the lowest stationary point found.
    /// </summary>
    public StabilityOutcome Test(double tKelvin, double pPascals, bool allTrials, bool stopWhenUnstable, ReadOnlySpan<double> warmStart, Span<double> incipient, double tolerance = FineTolerance)
    {
        var n = Count;
        Span<double> aij = n <= MaxStack ? stackalloc double[n * n] : new double[n * n];
        Span<double> d = n <= MaxStack ? stackalloc double[n] : new double[n];
        Span<double> scratch = n <= MaxStack ? stackalloc double[n] : new double[n];
        Span<double> wilson = n <= MaxStack ? stackalloc double[n] : new double[n];
        Span<double> trial = n <= MaxStack ? stackalloc double[n] : new double[n];
        Span<double> best = n <= MaxStack ? stackalloc double[n] : new double[n];
        _eos.AttractionMatrix(tKelvin, aij);
        var rt = _eos.R * tKelvin;
        var bi = _eos.CoVolumes;
        var z = _eos.MoleFractions;
        var zFeed = LogFugacity(aij, bi, z, rt, pPascals, d, scratch, out var feedLiquid, out var feedRoots);
        for (var i = 0; i < n; i++)
        {
            d[i] += _lnZ[i];
        }

        if (feedRoots == 1 && tKelvin >= PseudoCriticalTemperatureKelvin)
        {
            feedLiquid = false;
        }

        WilsonK(tKelvin, pPascals, wilson);
        var minTpd = double.PositiveInfinity;
        var found = false;
        var incipientLiquid = false;
        var trials = 3 + (allTrials ? n : 2);
        for (var k = 0; k < trials; k++)
        {
            // The scan (not allTrials) looks for liquid dropping out of a gas-like feed: a warm start from the last
            // stationary point that stays non-trivial is enough; otherwise the liquid-like and heaviest-component trials.
            if (!allTrials && (k == 2 || k == 4 || (k > 0 && found)))
            {
                continue;
            }

            if (!InitialTrial(k, n, z, wilson, warmStart, allTrials, trial))
            {
                continue;
            }

            var tpd = Substitute(aij, bi, d, z, rt, pPascals, trial, scratch, stopWhenUnstable, tolerance, out var trivial, out var trialLiquid);
            if (!trivial && tpd < minTpd)
            {
                minTpd = tpd;
                found = true;
                incipientLiquid = trialLiquid;
                trial.CopyTo(best);
                if (stopWhenUnstable && tpd < UnstableBelow)
                {
                    break;
                }
            }
        }

        if (found && !incipient.IsEmpty)
        {
            best.CopyTo(incipient);
        }

        return new StabilityOutcome(found && minTpd < UnstableBelow, found ? minTpd : 0, feedLiquid, zFeed, found && incipientLiquid, found);
    }

    /// <summary>
    /// The highest temperature at <paramref name="pPascals"/> at which the feed becomes unstable (the upper, retrograde-side
    /// dew point of a gas), to <paramref name="toleranceKelvin"/>; see <see cref="DewPointSearch"/> for the outcomes.
    /// </summary>
    public DewPointSearch UpperDewPoint(double pPascals, double toleranceKelvin)
    {
        var n = Count;
        Span<double> warm = n <= MaxStack ? stackalloc double[n] : new double[n];
        Span<double> next = n <= MaxStack ? stackalloc double[n] : new double[n];
        var haveWarm = false;
        var top = 1.05 * MaximumCriticalTemperatureKelvin;
        var wilsonDew = WilsonDewTemperature(pPascals);
        var t = double.IsNaN(wilsonDew) ? top : Math.Min(top, Math.Max(wilsonDew + 30, 1.1 * wilsonDew));
        t = Math.Max(t, SearchFloorKelvin);

        // Start where the feed is stable; climb if the first guess is already inside the envelope.
        var start = Test(t, pPascals, false, true, default, next);
        for (var climb = 0; start.Unstable && climb < 40; climb++)
        {
            t += 10;
            start = Test(t, pPascals, false, true, default, next);
        }

        if (start.Unstable)
        {
            return new DewPointSearch(DewPointOutcome.NotFound, double.NaN);
        }

        if (start.FeedLiquidLike)
        {
            return new DewPointSearch(DewPointOutcome.AboveCricondenbar, double.NaN);
        }

        var hi = t;
        while (true)
        {
            var lo = hi - ScanStepKelvin;
            if (lo < SearchFloorKelvin)
            {
                return new DewPointSearch(DewPointOutcome.NotFound, double.NaN);
            }

            var r = Test(lo, pPascals, false, true, haveWarm ? warm : default, next, ScanTolerance);
            if (r.FoundStationaryPoint)
            {
                next.CopyTo(warm);
                haveWarm = true;
            }

            if (r.Unstable)
            {
                return new DewPointSearch(DewPointOutcome.Found, Refine(lo, hi, pPascals, toleranceKelvin, warm, next));
            }

            if (r.FeedLiquidLike)
            {
                // Gas-like to liquid-like without a second phase on the way: no dew point at this pressure.
                return new DewPointSearch(DewPointOutcome.AboveCricondenbar, double.NaN);
            }

            hi = lo;
        }
    }

    // The tangent-plane distance of the liquid-like stationary point is smooth in T and crosses 0 at the dew point:
    // regula falsi with the Illinois modification on it, falling back to bisection where the trial returns to the feed.
    private double Refine(double lo, double hi, double pPascals, double toleranceKelvin, Span<double> warm, Span<double> next)
    {
        var fLo = Test(lo, pPascals, false, false, warm, next).MinimumReducedDistance;
        next.CopyTo(warm);
        var fHi = double.NaN;
        var side = 0;
        var previous = double.NaN;
        for (var i = 0; i < 60 && hi - lo > toleranceKelvin; i++)
        {
            var t = double.IsNaN(fHi) || !(fLo < 0) || !(fHi > 0) ? 0.5 * (lo + hi) : lo + ((hi - lo) * fLo / (fLo - fHi));
            var r = Test(t, pPascals, false, false, warm, next);
            if (r.Unstable)
            {
                lo = t;
                fLo = r.MinimumReducedDistance;
                next.CopyTo(warm);
                if (side == -1 && !double.IsNaN(fHi))
                {
                    fHi /= 2;
                }

                side = -1;
            }
            else
            {
                hi = t;
                fHi = r.FoundStationaryPoint && r.MinimumReducedDistance > 0 ? r.MinimumReducedDistance : double.NaN;
                if (side == 1)
                {
                    fLo /= 2;
                }

                side = 1;
            }

            if (Math.Abs(t - previous) < 0.5 * toleranceKelvin)
            {
                return t;
            }

            previous = t;
        }

        return 0.5 * (lo + hi);
    }

    /// <summary>
    /// Saturation pressure of a pure component (component 0) at <paramref name="tKelvin"/>, Pa, by Newton on
    /// ln φ_L − ln φ_V = 0 in ln P (d ln φ/d ln P = Z − 1); NaN at or above Tc or without convergence.
    /// </summary>
    public double PureSaturationPressure(double tKelvin)
    {
        var tc = _eos.CriticalTemperaturesKelvin[0];
        if (!(tKelvin < tc) || !(tKelvin > 0))
        {
            return double.NaN;
        }

        var pc = _eos.CriticalPressuresPascals[0];
        var omega = _eos.AcentricFactors[0];
        var lnP = Math.Log(pc) + (5.373 * (1 + omega) * (1 - (tc / tKelvin)));
        var att = _eos.AttractionAt(tKelvin);
        var rt = _eos.R * tKelvin;
        for (var i = 0; i < 200; i++)
        {
            var p = Math.Exp(lnP);
            var aDim = att.A * p / (rt * rt);
            var bDim = _eos.B * p / rt;
            var roots = PengRobinsonMixture.Roots(aDim, bDim, out var zv, out var zl);
            if (roots == 1)
            {
                // One root: below the liquid spinodal (vapour-like) raise P, above the vapour spinodal lower it.
                lnP += zv / bDim > PengRobinsonMixture.CriticalVolumeOverB ? 0.2 : -0.2;
                continue;
            }

            var step = (PureLnPhi(zl, aDim, bDim) - PureLnPhi(zv, aDim, bDim)) / (zv - zl);
            step = Math.Clamp(step, -1, 1);
            lnP += step;
            if (Math.Abs(step) < 1e-13)
            {
                return Math.Exp(lnP);
            }
        }

        return double.NaN;
    }

    /// <summary>
    /// Saturation temperature of a pure component at <paramref name="pPascals"/>, K: secant on ln P_sat(T) − ln P in 1/T
    /// (nearly linear); NaN at or above Pc.
    /// </summary>
    public double PureSaturationTemperature(double pPascals)
    {
        var tc = _eos.CriticalTemperaturesKelvin[0];
        var pc = _eos.CriticalPressuresPascals[0];
        if (!(pPascals < pc) || !(pPascals > 0))
        {
            return double.NaN;
        }

        var omega = _eos.AcentricFactors[0];
        var lnTarget = Math.Log(pPascals);
        var t0 = tc / (1 - (Math.Log(pPascals / pc) / (5.373 * (1 + omega))));
        t0 = Math.Min(t0, tc * 0.999);
        var t1 = Math.Min(t0 * 1.01, (t0 + tc) / 2);
        var f0 = Math.Log(PureSaturationPressure(t0)) - lnTarget;
        var f1 = Math.Log(PureSaturationPressure(t1)) - lnTarget;
        for (var i = 0; i < 100; i++)
        {
            if (double.IsNaN(f0) || double.IsNaN(f1))
            {
                return double.NaN;
            }

            if (Math.Abs(f1) < 1e-12 || f1 == f0)
            {
                return t1;
            }

            var x0 = 1 / t0;
            var x1 = 1 / t1;
            var x2 = x1 - (f1 * (x1 - x0) / (f1 - f0));
            var t2 = 1 / x2;
            if (!(t2 < tc) || !(t2 > 0))
            {
                t2 = 0.5 * (t1 + tc);
            }

            t0 = t1;
            f0 = f1;
            t1 = t2;
            f1 = Math.Log(PureSaturationPressure(t1)) - lnTarget;
            if (Math.Abs(t1 - t0) < 1e-10 * t1)
            {
                return t1;
            }
        }

        return double.NaN;
    }

    /// <summary>The temperature where Σ z_i/K_i = 1 with Wilson's K-values (a first guess); NaN when none exists.</summary>
    public double WilsonDewTemperature(double pPascals)
    {
        // Σ z_i/K_i falls monotonically with T; bisect in 1/T between the search floor and a very high temperature.
        var lo = SearchFloorKelvin;
        var hi = 20 * MaximumCriticalTemperatureKelvin;
        if (WilsonDewSum(hi, pPascals) > 1)
        {
            return double.NaN;
        }

        if (WilsonDewSum(lo, pPascals) < 1)
        {
            return lo;
        }

        for (var i = 0; i < 60; i++)
        {
            var mid = 2 / ((1 / lo) + (1 / hi));
            if (WilsonDewSum(mid, pPascals) > 1)
            {
                lo = mid;
            }
            else
            {
                hi = mid;
            }
        }

        return 0.5 * (lo + hi);
    }

    private static double ReducedGibbs(double z, double aDim, double bDim) =>
        z - 1 - Math.Log(z - bDim) - (aDim / (2 * Sqrt2 * bDim) * Math.Log((z + ((1 + Sqrt2) * bDim)) / (z + ((1 - Sqrt2) * bDim))));

    private static double PureLnPhi(double z, double aDim, double bDim) => ReducedGibbs(z, aDim, bDim);

    private double WilsonDewSum(double tKelvin, double pPascals)
    {
        var tc = _eos.CriticalTemperaturesKelvin;
        var pc = _eos.CriticalPressuresPascals;
        var w = _eos.AcentricFactors;
        var z = _eos.MoleFractions;
        double s = 0;
        for (var i = 0; i < Count; i++)
        {
            s += z[i] * pPascals / pc[i] * Math.Exp(-5.373 * (1 + w[i]) * (1 - (tc[i] / tKelvin)));
        }

        return s;
    }

    // Wilson (1968): K_i = (Pc_i/P) exp[5.373(1 + ω_i)(1 − Tc_i/T)].
    private void WilsonK(double tKelvin, double pPascals, Span<double> k)
    {
        var tc = _eos.CriticalTemperaturesKelvin;
        var pc = _eos.CriticalPressuresPascals;
        var w = _eos.AcentricFactors;
        for (var i = 0; i < Count; i++)
        {
            k[i] = pc[i] / pPascals * Math.Exp(5.373 * (1 + w[i]) * (1 - (tc[i] / tKelvin)));
        }
    }

    // Trial k: 0 warm start, 1 Wilson liquid-like, 2 Wilson vapour-like, 3.. pure-component-like.
    private bool InitialTrial(int k, int n, ReadOnlySpan<double> z, ReadOnlySpan<double> wilson, ReadOnlySpan<double> warm, bool allTrials, Span<double> w)
    {
        switch (k)
        {
            case 0:
                if (warm.IsEmpty)
                {
                    return false;
                }

                warm.CopyTo(w);
                return true;
            case 1:
                for (var i = 0; i < n; i++)
                {
                    w[i] = z[i] / wilson[i];
                }

                return true;
            case 2:
                for (var i = 0; i < n; i++)
                {
                    w[i] = z[i] * wilson[i];
                }

                return true;
            default:
                if (n == 1)
                {
                    return false;
                }

                var c = allTrials ? k - 3 : (k == 3 ? _heaviest : _lightest);
                if (!allTrials && k == 4 && _lightest == _heaviest)
                {
                    return false;
                }

                for (var i = 0; i < n; i++)
                {
                    w[i] = i == c ? 0.99 : 0.01 * z[i];
                }

                return true;
        }
    }

    /// <summary>
    /// Successive substitution ln W_i ← d_i − ln φ_i(w) from the trial amounts in <paramref name="w"/>, accelerated every
    /// fifth step. Returns the reduced tangent-plane distance −ln ΣW at the stationary point (or tm* when stopped early
    /// on a negative value); on return <paramref name="w"/> holds the normalised composition.
    /// </summary>
    private static double Substitute(
        ReadOnlySpan<double> aij, ReadOnlySpan<double> bi, ReadOnlySpan<double> d, ReadOnlySpan<double> z, double rt, double p, Span<double> w, Span<double> scratch, bool stopWhenUnstable, double tolerance, out bool trivial, out bool liquidLike)
    {
        var n = z.Length;
        Span<double> lnW = stackalloc double[n];
        Span<double> lnPhi = stackalloc double[n];
        Span<double> delta = stackalloc double[n];
        Span<double> previous = stackalloc double[n];
        Span<double> big = stackalloc double[n];
        for (var i = 0; i < n; i++)
        {
            lnW[i] = Math.Log(Math.Max(w[i], 1e-300));
        }

        trivial = false;
        liquidLike = false;
        var result = 0.0;
        for (var it = 0; it < MaxIterations; it++)
        {
            double sumW = 0;
            for (var i = 0; i < n; i++)
            {
                lnW[i] = Math.Min(lnW[i], 50);
                big[i] = Math.Exp(lnW[i]);
                sumW += big[i];
            }

            double distance = 0;
            for (var i = 0; i < n; i++)
            {
                w[i] = big[i] / sumW;
                var dz = w[i] - z[i];
                distance += dz * dz;
            }

            LogFugacity(aij, bi, w, rt, p, lnPhi, scratch, out liquidLike, out _);

            // tm* = 1 + Σ W_i (ln W_i + ln φ_i(w) − d_i − 1); at a stationary point it equals 1 − ΣW.
            double tm = 1, err = 0, dot = 0, prevDot = 0;
            for (var i = 0; i < n; i++)
            {
                tm += big[i] * (lnW[i] + lnPhi[i] - d[i] - 1);
                var next = d[i] - lnPhi[i];
                delta[i] = next - lnW[i];
                err += delta[i] * delta[i];
                dot += delta[i] * previous[i];
                prevDot += previous[i] * previous[i];
            }

            if (distance < 1e-10 && it > 0)
            {
                trivial = true;
                return 0;
            }

            if (stopWhenUnstable && tm < UnstableBelow && it > 0)
            {
                return tm;
            }

            if (err < tolerance)
            {
                result = -Math.Log(sumW);
                return result;
            }

            var accelerate = it % 5 == 4 && prevDot > 0;
            var lambda = accelerate ? dot / prevDot : 0;
            var factor = accelerate && lambda > 0 && lambda < 0.99 ? 1 + (lambda / (1 - lambda)) : 1;
            for (var i = 0; i < n; i++)
            {
                lnW[i] += factor * delta[i];
                previous[i] = delta[i];
            }

            result = -Math.Log(sumW);
        }

        return result;
    }
}

/// <summary>The outcome of one stability test.</summary>
/// <param name="Unstable">A trial phase with negative tangent-plane distance was found.</param>
/// <param name="MinimumReducedDistance">Lowest reduced tangent-plane distance of the non-trivial stationary points found (0 if every trial went to the feed).</param>
/// <param name="FeedLiquidLike">The feed's chosen root is liquid-like.</param>
/// <param name="FeedZ">Z of the feed's chosen root.</param>
/// <param name="IncipientLiquidLike">The lowest stationary point's root is liquid-like.</param>
/// <param name="FoundStationaryPoint">A non-trivial stationary point was found (stable or not).</param>
internal readonly record struct StabilityOutcome(bool Unstable, double MinimumReducedDistance, bool FeedLiquidLike, double FeedZ, bool IncipientLiquidLike, bool FoundStationaryPoint);

/// <summary>What the dew-point search found.</summary>
internal enum DewPointOutcome
{
    /// <summary>A dew point was bracketed and refined.</summary>
    Found,

    /// <summary>The fluid turns liquid-like on cooling without a second phase: no dew point at this pressure.</summary>
    AboveCricondenbar,

    /// <summary>No instability between the start and the search floor.</summary>
    NotFound,
}

/// <summary>A dew-point search result; <paramref name="TemperatureKelvin"/> is NaN unless found.</summary>
internal readonly record struct DewPointSearch(DewPointOutcome Outcome, double TemperatureKelvin);
