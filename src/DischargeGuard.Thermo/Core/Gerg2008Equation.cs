namespace DischargeGuard.Thermo.Core;

/// <summary>
/// The GERG-2008 equation of state (Kunz &amp; Wagner, J. Chem. Eng. Data 57 (2012) 3032–3091; ISO 20765-2) for one
/// fixed composition: α(δ, τ, x) = α°(ρ, T, x) + Σ x_i α^r_oi(δ, τ) + Σ_{i&lt;j} x_i x_j F_ij α^r_ij(δ, τ), with
/// δ = ρ/ρ_r(x) and τ = T_r(x)/T from the published reducing functions.
/// </summary>
/// <remarks>
/// <para>
/// Built once per composition: every residual term of the mixture (pure-fluid terms and departure-function terms alike)
/// is folded into one flat list, terms with the same exponents summed (x_i n_ik, x_i x_j F_ij n_ijk), so an evaluation
/// costs the number of distinct terms, not components × terms. Evaluation is split the way the solvers use it: the
/// temperature factors n·τ^t once per temperature (<see cref="TemperatureTerms"/>), then any number of density evaluations
/// (<see cref="Residual"/>) with them. Scratch is the caller's (stack) spans; the instance is immutable and thread-safe.
/// </para>
/// <para>
/// Units: T in K, ρ in mol/m³, p in Pa, R = 8.314472 J/(mol·K) (the equation's), energies J/mol. The ideal-gas part has
/// the reference state of the NIST reference implementation (ideal gas h = 0 at 298.15 K, s = 0 at 298.15 K and
/// 101.325 kPa), see Data/gerg2008.json. No range checks here; the public layer does them.
/// </para>
/// </remarks>
internal sealed class Gerg2008Equation
{
    /// <summary>Largest number of distinct residual terms the stack scratch of the callers is sized for.</summary>
    public const int MaxStackTerms = 320;

    private const int MaxPower = 10;

    // Terms: coefficient, index of their τ exponent in _tDistinct, and their density group. Terms whose density factor is
    // the same (polynomial/exp(−δ^c) terms with equal d and c; Gaussian terms with equal d, η, ε, β, γ) share a group, so a
    // density evaluation costs one pass over the groups, whatever the number of terms: per temperature each group gets
    // Σ n τ^t, Σ n τ^t·t and Σ n τ^t·t(t − 1).
    private readonly double[] _pn;
    private readonly int[] _pTi;
    private readonly int[] _pG;
    private readonly double[] _gn;
    private readonly int[] _gTi;
    private readonly int[] _gG;
    private readonly double[] _tDistinct;

    // Polynomial / exp(−δ^c) groups.
    private readonly int[] _pgD;
    private readonly int[] _pgC;

    // Gaussian groups δ^d exp(−η(δ − ε)² − β(δ − γ)).
    private readonly int[] _ggD;
    private readonly double[] _ggEta;
    private readonly double[] _ggEps;
    private readonly double[] _ggBeta;
    private readonly double[] _ggGamma;
    private readonly double[] _ggZero;

    // Ideal-gas part, mixed: C + N2/T − N3 ln T + Σ hyperbolic terms (per component, weighted by x_i).
    private readonly double _idealConstant;
    private readonly double _idealN2;
    private readonly double _idealN3;
    private readonly double[] _hypN;
    private readonly double[] _hypTheta;
    private readonly bool[] _hypSinh;
    private readonly int _maxC;

    private Gerg2008Equation(
        double r,
        double tr,
        double rhoR,
        double molarMass,
        double rho0,
        List<(int D, double T, int C, double N)> poly,
        List<(int D, double T, double Eta, double Eps, double Beta, double Gamma, double N)> gauss,
        double idealConstant,
        double idealN2,
        double idealN3,
        List<(double N, double Theta, bool Sinh)> hyperbolic)
    {
        R = r;
        ReducingTemperatureKelvin = tr;
        ReducingDensityMolesPerCubicMeter = rhoR;
        MolarMassKilogramsPerMole = molarMass;
        ReferenceDensityMolesPerCubicMeter = rho0;
        var distinct = poly.Select(p => p.T).Concat(gauss.Select(x => x.T)).Distinct().ToArray();
        _tDistinct = distinct;

        var pGroups = poly.Select(p => (p.D, p.C)).Distinct().ToArray();
        _pgD = [.. pGroups.Select(g => g.D)];
        _pgC = [.. pGroups.Select(g => g.C)];
        _pn = [.. poly.Select(p => p.N)];
        _pTi = [.. poly.Select(p => Array.IndexOf(distinct, p.T))];
        _pG = [.. poly.Select(p => Array.IndexOf(pGroups, (p.D, p.C)))];

        var gGroups = gauss.Select(g => (g.D, g.Eta, g.Eps, g.Beta, g.Gamma)).Distinct().ToArray();
        _ggD = [.. gGroups.Select(g => g.D)];
        _ggEta = [.. gGroups.Select(g => g.Eta)];
        _ggEps = [.. gGroups.Select(g => g.Eps)];
        _ggBeta = [.. gGroups.Select(g => g.Beta)];
        _ggGamma = [.. gGroups.Select(g => g.Gamma)];

        // exp(−ηε² + βγ): the Gaussian factor at δ = 0, for the second-virial start of the density solver.
        _ggZero = [.. gGroups.Select(g => Math.Exp((-g.Eta * g.Eps * g.Eps) + (g.Beta * g.Gamma)))];
        _gn = [.. gauss.Select(g => g.N)];
        _gTi = [.. gauss.Select(g => Array.IndexOf(distinct, g.T))];
        _gG = [.. gauss.Select(g => Array.IndexOf(gGroups, (g.D, g.Eta, g.Eps, g.Beta, g.Gamma)))];
        _maxC = poly.Count == 0 ? 0 : poly.Max(p => p.C);
        _idealConstant = idealConstant;
        _idealN2 = idealN2;
        _idealN3 = idealN3;
        _hypN = [.. hyperbolic.Select(h => h.N)];
        _hypTheta = [.. hyperbolic.Select(h => h.Theta)];
        _hypSinh = [.. hyperbolic.Select(h => h.Sinh)];
    }

    /// <summary>R of the equation, J/(mol·K).</summary>
    public double R { get; }

    /// <summary>T_r(x), K.</summary>
    public double ReducingTemperatureKelvin { get; }

    /// <summary>ρ_r(x), mol/m³.</summary>
    public double ReducingDensityMolesPerCubicMeter { get; }

    /// <summary>Σ x_i M_i with the equation's molar masses, kg/mol.</summary>
    public double MolarMassKilogramsPerMole { get; }

    /// <summary>p0/(R T0) of the ideal-gas reference state, mol/m³.</summary>
    public double ReferenceDensityMolesPerCubicMeter { get; }

    /// <summary>Length of the first temperature-term span: three sums per polynomial / exp(−δ^c) density group.</summary>
    public int PolynomialTermCount => 3 * _pgD.Length;

    /// <summary>Length of the second temperature-term span: three sums per Gaussian density group.</summary>
    public int GaussianTermCount => 3 * _ggD.Length;

    /// <summary>Builds the equation of a composition.</summary>
    /// <param name="data">The coefficients.</param>
    /// <param name="componentIndex">File index of each component (distinct).</param>
    /// <param name="moleFractions">x_i, summing to 1.</param>
    public static Gerg2008Equation Create(Gerg2008Data data, ReadOnlySpan<int> componentIndex, ReadOnlySpan<double> moleFractions)
    {
        var n = componentIndex.Length;
        var comps = data.Components;
        var r = data.GasConstant;
        var rsr = data.IdealGasConstant / r;
        var t0 = data.ReferenceTemperatureKelvin;

        // Reducing functions (Kunz & Wagner eqs. 7.9 and 7.10): 1/ρ_r and T_r, pairs taken in the file's order.
        double vr = 0, tr = 0, molarMass = 0;
        for (var a = 0; a < n; a++)
        {
            var i = componentIndex[a];
            var xi = moleFractions[a];
            var ci = comps[i];
            molarMass += xi * ci.MolarMassGramsPerMole / 1000;
            vr += xi * xi / (ci.CriticalDensityMolesPerLitre * 1000);
            tr += xi * xi * ci.CriticalTemperatureKelvin;
            for (var b = 0; b < n; b++)
            {
                var j = componentIndex[b];
                if (j <= i)
                {
                    continue;
                }

                var xj = moleFractions[b];
                var cj = comps[j];
                var p = data.Pairs[i, j]!;
                var vc = (Math.Cbrt(1 / (ci.CriticalDensityMolesPerLitre * 1000)) + Math.Cbrt(1 / (cj.CriticalDensityMolesPerLitre * 1000))) / 2;
                vr += 2 * xi * xj * p.BetaV * p.GammaV * (xi + xj) / ((p.BetaV * p.BetaV * xi) + xj) * vc * vc * vc;
                tr += 2 * xi * xj * p.BetaT * p.GammaT * (xi + xj) / ((p.BetaT * p.BetaT * xi) + xj) * Math.Sqrt(ci.CriticalTemperatureKelvin * cj.CriticalTemperatureKelvin);
            }
        }

        // Residual terms, summed over components and pairs where the exponents coincide.
        var poly = new List<(int D, double T, int C, double N)>();
        var polyIndex = new Dictionary<(int, double, int), int>();
        var gauss = new List<(int D, double T, double Eta, double Eps, double Beta, double Gamma, double N)>();
        var gaussIndex = new Dictionary<(int, double, double, double, double, double), int>();
        void AddPoly(int d, double t, int c, double coefficient)
        {
            if (polyIndex.TryGetValue((d, t, c), out var k))
            {
                poly[k] = poly[k] with { N = poly[k].N + coefficient };
            }
            else
            {
                polyIndex[(d, t, c)] = poly.Count;
                poly.Add((d, t, c, coefficient));
            }
        }

        for (var a = 0; a < n; a++)
        {
            var res = comps[componentIndex[a]].Residual;
            for (var k = 0; k < res.N.Count; k++)
            {
                AddPoly(res.D[k], res.T[k], res.C[k], moleFractions[a] * res.N[k]);
            }
        }

        for (var a = 0; a < n; a++)
        {
            for (var b = 0; b < n; b++)
            {
                var i = componentIndex[a];
                var j = componentIndex[b];
                if (j <= i || data.Pairs[i, j] is not { Departure: { } id } pair)
                {
                    continue;
                }

                var dep = data.Departures[id];
                var w = moleFractions[a] * moleFractions[b] * pair.F;
                for (var k = 0; k < dep.N.Count; k++)
                {
                    if (k < dep.PolynomialTerms)
                    {
                        AddPoly(dep.D[k], dep.T[k], 0, w * dep.N[k]);
                        continue;
                    }

                    var key = (dep.D[k], dep.T[k], dep.Eta[k], dep.Epsilon[k], dep.Beta[k], dep.Gamma[k]);
                    if (gaussIndex.TryGetValue(key, out var g))
                    {
                        gauss[g] = gauss[g] with { N = gauss[g].N + (w * dep.N[k]) };
                    }
                    else
                    {
                        gaussIndex[key] = gauss.Count;
                        gauss.Add((dep.D[k], dep.T[k], dep.Eta[k], dep.Epsilon[k], dep.Beta[k], dep.Gamma[k], w * dep.N[k]));
                    }
                }
            }
        }

        if (poly.Count + gauss.Count > MaxStackTerms || poly.Any(p => p.D > MaxPower || p.C > 6 || p.D < 0) || gauss.Any(g => g.D > MaxPower || g.D < 0))
        {
            throw new InvalidOperationException("GERG-2008 data outside the evaluator's limits (term count, powers).");
        }

        // Ideal-gas part in the reference implementation's form (see Data/gerg2008.json): per component
        // ln x_i + ln(ρ/ρ0) + n1' + n2'/T − n3' ln T + Σ hyperbolic, with n' = (R*/R)·n, n3' = (R*/R)(n3 − 1),
        // n2' = (R*/R)(n2 + T0) − T0.
        double constant = 0, n2 = 0, n3 = 0;
        var hyp = new List<(double N, double Theta, bool Sinh)>();
        for (var a = 0; a < n; a++)
        {
            var xi = moleFractions[a];
            var ideal = comps[componentIndex[a]].Ideal;
            constant += xi * (Math.Log(xi) + (rsr * ideal.N[0]));
            n2 += xi * ((rsr * (ideal.N[1] + t0)) - t0);
            n3 += xi * rsr * (ideal.N[2] - 1);
            for (var k = 0; k < 4; k++)
            {
                if (ideal.ThetaKelvin[k] > 0)
                {
                    hyp.Add((xi * rsr * ideal.N[3 + k], ideal.ThetaKelvin[k], k % 2 == 0));
                }
            }
        }

        var rho0 = data.ReferencePressurePascals / (r * t0);
        return new Gerg2008Equation(r, tr, 1 / vr, molarMass, rho0, poly, gauss, constant, n2, n3, hyp);
    }

    /// <summary>
    /// The temperature sums of every density group into the spans (lengths <see cref="PolynomialTermCount"/> and
    /// <see cref="GaussianTermCount"/>; per group Σ n τ^t, Σ n τ^t·t, Σ n τ^t·t(t − 1)); returns τ = T_r/T.
    /// </summary>
    public double TemperatureTerms(double tKelvin, Span<double> polyTau, Span<double> gaussTau)
    {
        var tau = ReducingTemperatureKelvin / tKelvin;
        var lnTau = Math.Log(tau);
        var distinct = _tDistinct;
        Span<double> powers = stackalloc double[distinct.Length];
        for (var k = 0; k < distinct.Length; k++)
        {
            var t = distinct[k];
            powers[k] = t == 0 ? 1 : Math.Exp(t * lnTau);
        }

        Accumulate(_pn, _pTi, _pG, distinct, powers, polyTau);
        Accumulate(_gn, _gTi, _gG, distinct, powers, gaussTau);
        return tau;
    }

    /// <summary>
    /// B(T)·ρ_r: the limit of ∂α^r/∂δ at δ → 0 (so Z ≈ 1 + B·ρ at low density), from the temperature terms.
    /// </summary>
    public double ReducedSecondVirial(ReadOnlySpan<double> polyTau, ReadOnlySpan<double> gaussTau)
    {
        double b = 0;
        for (var g = 0; g < _pgD.Length; g++)
        {
            if (_pgD[g] == 1)
            {
                b += polyTau[3 * g];
            }
        }

        for (var g = 0; g < _ggD.Length; g++)
        {
            if (_ggD[g] == 1)
            {
                b += gaussTau[3 * g] * _ggZero[g];
            }
        }

        return b;
    }

    /// <summary>
    /// α^r and its reduced derivatives at δ from the temperature terms. With <paramref name="full"/> false only
    /// δα^r_δ and δ²α^r_δδ (what the pressure and its density derivative need) are summed.
    /// </summary>
    public ResidualHelmholtz Residual(double delta, ReadOnlySpan<double> polyTau, ReadOnlySpan<double> gaussTau, bool full)
    {
        Span<double> dp = stackalloc double[MaxPower + 1];
        Span<double> ec = stackalloc double[7];
        dp[0] = 1;
        for (var i = 1; i <= MaxPower; i++)
        {
            dp[i] = dp[i - 1] * delta;
        }

        ec[0] = 1;
        for (var c = 1; c <= _maxC; c++)
        {
            ec[c] = Math.Exp(-dp[c]);
        }

        double a00 = 0, a01 = 0, a02 = 0, a03 = 0, a10 = 0, a11 = 0, a20 = 0;
        var pd = _pgD;
        var pc = _pgC;
        for (var g = 0; g < pd.Length; g++)
        {
            var d = pd[g];
            var c = pc[g];
            var f = dp[d] * ec[c];
            var v = polyTau[3 * g] * f;
            double first, second;
            if (c == 0)
            {
                first = d;
                second = d * (d - 1);
            }
            else
            {
                var gc = c * dp[c];
                first = d - gc;
                second = (first * (first - 1)) - (c * gc);
            }

            a01 += v * first;
            a02 += v * second;
            if (full)
            {
                var third = c == 0
                    ? d * (d - 1) * (d - 2)
                    : (first * (first - 1) * (first - 2)) - (c * c * dp[c] * ((3 * first) - 3 + c));
                var v1 = polyTau[(3 * g) + 1] * f;
                a00 += v;
                a10 += v1;
                a20 += polyTau[(3 * g) + 2] * f;
                a11 += v1 * first;
                a03 += v * third;
            }
        }

        var gd = _ggD;
        for (var g = 0; g < gd.Length; g++)
        {
            var d = gd[g];
            var eta = _ggEta[g];
            var eps = _ggEps[g];
            var beta = _ggBeta[g];
            var dm = delta - eps;
            var f = dp[d] * Math.Exp((-eta * dm * dm) - (beta * (delta - _ggGamma[g])));
            var v = gaussTau[3 * g] * f;

            // With D = δ·d/dδ and b = D ln f: D f = b f, δ²f'' = (b² + Db − b) f, δ³f''' = (b³ + 3b·Db + D²b − 3b² − 3Db + 2b) f.
            var b = d - (2 * eta * delta * dm) - (beta * delta);
            var db = (-4 * eta * delta * delta) + (((2 * eta * eps) - beta) * delta);
            a01 += v * b;
            a02 += v * ((b * b) + db - b);
            if (full)
            {
                var d2b = (-8 * eta * delta * delta) + (((2 * eta * eps) - beta) * delta);
                var v1 = gaussTau[(3 * g) + 1] * f;
                a00 += v;
                a10 += v1;
                a20 += gaussTau[(3 * g) + 2] * f;
                a11 += v1 * b;
                a03 += v * ((b * b * b) + (3 * b * db) + d2b - (3 * b * b) - (3 * db) + (2 * b));
            }
        }

        return new ResidualHelmholtz(a00, a01, a02, a03, a10, a11, a20);
    }

    private static void Accumulate(double[] n, int[] ti, int[] group, double[] distinct, ReadOnlySpan<double> powers, Span<double> sums)
    {
        sums.Clear();
        for (var k = 0; k < n.Length; k++)
        {
            var t = distinct[ti[k]];
            var v = n[k] * powers[ti[k]];
            var g = 3 * group[k];
            sums[g] += v;
            sums[g + 1] += v * t;
            sums[g + 2] += v * t * (t - 1);
        }
    }

    /// <summary>α° without its ln(ρ/ρ0) term, τα°_τ and τ²α°_ττ at <paramref name="tKelvin"/>.</summary>
    public IdealHelmholtz Ideal(double tKelvin)
    {
        double a0 = _idealConstant + (_idealN2 / tKelvin) - (_idealN3 * Math.Log(tKelvin));
        double a1 = _idealN3 + (_idealN2 / tKelvin);
        double a2 = -_idealN3;
        var hn = _hypN;
        for (var k = 0; k < hn.Length; k++)
        {
            var u = _hypTheta[k] / tKelvin;
            var ep = Math.Exp(u);
            var em = 1 / ep;
            var sh = (ep - em) / 2;
            var ch = (ep + em) / 2;
            var nk = hn[k];
            if (_hypSinh[k])
            {
                a0 += nk * Math.Log(sh);
                a1 += nk * u * ch / sh;
                a2 -= nk * (u / sh) * (u / sh);
            }
            else
            {
                a0 -= nk * Math.Log(ch);
                a1 -= nk * u * sh / ch;
                a2 -= nk * (u / ch) * (u / ch);
            }
        }

        return new IdealHelmholtz(a0, a1, a2);
    }

    /// <summary>
    /// The gas (lowest-density) root of p(T, ρ) = <paramref name="pPascals"/>: Newton on ρ from <paramref name="guessMolesPerCubicMeter"/>
    /// (or, when it is not positive, from the second-virial estimate), kept in a bracket [lo, hi] that starts as
    /// [0, ∞): a state with p above the target bounds the root from above, one below it from below, and a mechanically
    /// unstable state (∂p/∂ρ ≤ 0 or p ≤ 0) from above, since the gas branch rises monotonically from ρ = 0 to its
    /// spinodal. Steps leaving the bracket or changing ρ by more than half are replaced by bisection or clipped, so
    /// Newton never jumps across the two-phase loop onto the liquid branch. Converged when the last step, relative to ρ,
    /// or its square is within <paramref name="relativeTolerance"/>; false (no gas root: the target lies above the vapour spinodal, or no
    /// convergence in <paramref name="maxIterations"/>) otherwise.
    /// </summary>
    public bool TrySolveGasDensity(double tKelvin, double pPascals, ReadOnlySpan<double> polyTau, ReadOnlySpan<double> gaussTau, double guessMolesPerCubicMeter, double relativeTolerance, int maxIterations, out double rhoMolesPerCubicMeter)
    {
        var rt = R * tKelvin;
        var rhoR = ReducingDensityMolesPerCubicMeter;
        var rho = guessMolesPerCubicMeter;
        if (!(rho > 0))
        {
            // p = ρRT(1 + Bρ): the positive root of Bρ² + ρ − p/RT = 0, or the ideal gas when the discriminant fails.
            var c = pPascals / rt;
            var b = ReducedSecondVirial(polyTau, gaussTau) / rhoR;
            var disc = 1 + (4 * b * c);
            rho = disc > 0 ? 2 * c / (1 + Math.Sqrt(disc)) : c;
        }

        double lo = 0, hi = double.PositiveInfinity;
        var hiUnstable = false;
        for (var it = 0; it < maxIterations; it++)
        {
            var ar = Residual(rho / rhoR, polyTau, gaussTau, full: false);
            var p = rho * rt * (1 + ar.A01);
            var dpdrho = rt * (1 + (2 * ar.A01) + ar.A02);
            double next;
            if (!(dpdrho > 0) || !(p > 0))
            {
                hi = rho;
                hiUnstable = true;
                next = 0.5 * (lo + hi);
            }
            else
            {
                var f = p - pPascals;
                if (f < 0)
                {
                    lo = rho;
                }
                else
                {
                    hi = rho;
                    hiUnstable = false;
                }

                var step = f / dpdrho;
                next = rho - step;
                // Newton's remaining error after a relative step r is of order r² (quadratic convergence), so a step whose
                // square is within the tolerance already lands within it (as CompressionPath stops its temperature solves).
                var r = step / rho;
                if (Math.Abs(r) <= relativeTolerance || r * r <= relativeTolerance)
                {
                    rhoMolesPerCubicMeter = Math.Clamp(next, lo, hi);
                    return true;
                }

                next = Math.Clamp(next, 0.5 * rho, 1.5 * rho);
                if (!(next > lo && next < hi))
                {
                    next = double.IsPositiveInfinity(hi) ? 1.5 * rho : 0.5 * (lo + hi);
                }
            }

            if (!double.IsPositiveInfinity(hi) && hi - lo <= relativeTolerance * hi)
            {
                // The bracket closed: on a root when its upper end is a stable state above the target, on the vapour
                // spinodal (no gas root) when it is an unstable one.
                if (!hiUnstable)
                {
                    rhoMolesPerCubicMeter = 0.5 * (lo + hi);
                    return true;
                }

                break;
            }

            rho = next;
        }

        rhoMolesPerCubicMeter = double.NaN;
        return false;
    }

    /// <summary>
    /// A root of p(T, ρ) = <paramref name="pPascals"/> denser than the gas root <paramref name="gasRho"/>, searched as a
    /// liquid root is: Newton from 3ρ_r downwards (the liquid branch is convex, so Newton from above descends onto its
    /// root). False when the search reaches the gas root, a mechanically unstable state or runs out of iterations: then
    /// the isotherm has no second stable root at this pressure.
    /// </summary>
    public bool TryFindDenserRoot(double tKelvin, double pPascals, ReadOnlySpan<double> polyTau, ReadOnlySpan<double> gaussTau, double gasRho, double relativeTolerance, int maxIterations, out double rhoMolesPerCubicMeter)
    {
        var rt = R * tKelvin;
        var rhoR = ReducingDensityMolesPerCubicMeter;
        var rho = Math.Max(3 * rhoR, 1.5 * gasRho);
        for (var it = 0; it < maxIterations; it++)
        {
            var ar = Residual(rho / rhoR, polyTau, gaussTau, full: false);
            var p = rho * rt * (1 + ar.A01);
            var dpdrho = rt * (1 + (2 * ar.A01) + ar.A02);
            if (!(dpdrho > 0))
            {
                break;
            }

            var step = (p - pPascals) / dpdrho;
            var next = rho - step;
            if (!(next > gasRho * (1 + 1e-6)))
            {
                break;
            }

            if (Math.Abs(step) <= relativeTolerance * rho)
            {
                rhoMolesPerCubicMeter = next;
                return true;
            }

            rho = Math.Max(next, 0.5 * rho);
        }

        rhoMolesPerCubicMeter = double.NaN;
        return false;
    }

    /// <summary>Every property at (T, ρ) from the two Helmholtz parts.</summary>
    public GergProperties Properties(double tKelvin, double rhoMolesPerCubicMeter, in ResidualHelmholtz ar, in IdealHelmholtz a0)
    {
        var r = R;
        var rt = r * tKelvin;
        var rho = rhoMolesPerCubicMeter;
        var lnRho = Math.Log(rho / ReferenceDensityMolesPerCubicMeter);
        var alpha0 = a0.A00 + lnRho;
        var z = 1 + ar.A01;
        var p = rho * rt * z;
        var dpdrho = rt * (1 + (2 * ar.A01) + ar.A02);
        var d2pdrho2 = rt * ((2 * ar.A01) + (4 * ar.A02) + ar.A03) / rho;
        var dpdt = rho * r * (1 + ar.A01 - ar.A11);
        var u = rt * (a0.A10 + ar.A10);
        var h = rt * (1 + ar.A01 + a0.A10 + ar.A10);
        var s = r * (a0.A10 + ar.A10 - alpha0 - ar.A00);
        var cv = -r * (a0.A20 + ar.A20);
        var cp = cv + (tKelvin * (dpdt / rho) * (dpdt / rho) / dpdrho);
        var w2 = cp / cv * dpdrho / MolarMassKilogramsPerMole;
        var w = w2 > 0 ? Math.Sqrt(w2) : 0;
        var g = rt * (1 + ar.A01 + alpha0 + ar.A00);
        var a = rt * (alpha0 + ar.A00);
        var jt = ((tKelvin / rho * dpdt / dpdrho) - 1) / cp / rho;
        var kappa = w * w * MolarMassKilogramsPerMole / (rt * z);

        // Departures from the ideal gas at the same T and P (ideal-gas density ρZ): h − h° = RT(ταr_τ + δαr_δ),
        // s − s° = R(ταr_τ − αr + ln Z).
        var hRes = rt * (ar.A10 + ar.A01);
        var sRes = r * (ar.A10 - ar.A00 + Math.Log(z));
        return new GergProperties(tKelvin, rho, p, z, dpdrho, d2pdrho2, dpdt, u, h, s, cv, cp, w, g, a, jt, kappa, hRes, sRes, -r * ar.A20);
    }
}

/// <summary>Reduced residual Helmholtz energy and derivatives: A_mn = τ^m δ^n ∂^(m+n)α^r/∂τ^m∂δ^n.</summary>
internal readonly record struct ResidualHelmholtz(double A00, double A01, double A02, double A03, double A10, double A11, double A20);

/// <summary>Ideal-gas α° (without ln(ρ/ρ0)), τα°_τ and τ²α°_ττ.</summary>
internal readonly record struct IdealHelmholtz(double A00, double A10, double A20);

/// <summary>Properties at one (T, ρ), SI units (mol, m³, Pa, J, K).</summary>
internal readonly record struct GergProperties(
    double TemperatureKelvin,
    double DensityMolesPerCubicMeter,
    double PressurePascals,
    double Z,
    double DpDrho,
    double D2pDrho2,
    double DpDt,
    double InternalEnergy,
    double Enthalpy,
    double Entropy,
    double Cv,
    double Cp,
    double SpeedOfSound,
    double Gibbs,
    double Helmholtz,
    double JouleThomson,
    double IsentropicExponent,
    double ResidualEnthalpy,
    double ResidualEntropy,
    double ResidualCv);
