namespace DischargeGuard.Thermo.Core;

/// <summary>
/// The Peng-Robinson cubic equation of state for a mixture of fixed composition, with every constant given by the caller
/// so that published worked examples can be reproduced with their own constants.
/// </summary>
/// <remarks>
/// <para>
/// P = RT/(V − b) − a(T)/(V² + 2bV − b²) (Peng &amp; Robinson, Ind. Eng. Chem. Fundam. 15, 59, 1976), with
/// a_i = Ω_a R²Tc_i²/Pc_i · α_i(T), b_i = Ω_b R Tc_i/Pc_i and √α_i = 1 + κ_i(1 − √(T/Tc_i)); κ from the 1976
/// correlation 0.37464 + 1.54226ω − 0.26992ω², and for ω &gt; 0.49 from the 1978 one
/// 0.379642 + 1.48503ω − 0.164423ω² + 0.016666ω³ (Robinson &amp; Peng, GPA Research Report RR-28, 1978).
/// Components flagged for it use, above their Tc, the Boston–Mathias (1980) extrapolation
/// √α = exp[c(1 − Tr^d)], d = 1 + κ/2, c = 1 − 1/d, which keeps α and dα/dT continuous at Tc and lets α fall
/// towards 0 at high Tr instead of passing through a minimum and rising. Where κ &lt; 0 (helium: −0.257) both forms
/// make α grow without bound above Tc, so κ is taken as 0 in that branch (α ≡ 1): our decision, see docs/real-gas.md.
/// </para>
/// <para>
/// Van der Waals one-fluid mixing: a = ΣΣ x_i x_j (1 − k_ij)√(a_i a_j), b = Σ x_i b_i. Residual (departure) functions
/// are analytic, with the da/dT term: H − H_ig = RT(Z − 1) + (T·da/dT − a)/(2√2 b)·L and
/// S − S_ig = R ln(Z − B) + (da/dT)/(2√2 b)·L, L = ln[(Z + (1 + √2)B)/(Z + (1 − √2)B)], both at the same T and P.
/// </para>
/// <para>
/// Units: T in K, P in Pa, V in m³/mol, a in Pa·m⁶/mol², b in m³/mol, energies J/mol, entropies and heat capacities
/// J/(mol·K). No range checks here (the public layer does them). Immutable and thread-safe; evaluation allocates
/// nothing (scratch lives on the stack).
/// </para>
/// </remarks>
internal sealed class PengRobinsonMixture
{
    /// <summary>Ω_a = 0.45723552892138… (the root of the PR critical-point conditions, full precision).</summary>
    public const double OmegaA = 0.4572355289213821893834601962251837888504;

    /// <summary>Ω_b = 0.07779607390388… (full precision).</summary>
    public const double OmegaB = 0.0777960739038884559718447100373331839711;

    /// <summary>ω above which the 1978 κ(ω) correlation is used.</summary>
    public const double HeavyAcentricFactor = 0.49;

    /// <summary>V_c/b of the PR equation (Z_c/Ω_b = 0.307401…/0.077796…), used to call a single root liquid-like.</summary>
    public const double CriticalVolumeOverB = 3.9513730;

    private const int MaxStackComponents = 64;
    private const double Sqrt2 = 1.4142135623730950488;

    private readonly double[] _tc;
    private readonly double[] _pc;
    private readonly double[] _omega;
    private readonly double[] _sqrtTc;
    private readonly double[] _kappa;
    private readonly double[] _bmC;
    private readonly double[] _bmD;
    private readonly bool[] _bostonMathias;
    private readonly double[] _x;
    private readonly double[] _bi;

    // _q[i*n+j] = (1 − k_ij)·√(ac_i·ac_j); _m = x_i x_j q_ij (the mixture's quadratic form).
    private readonly double[] _q;
    private readonly double[] _m;

    /// <summary>Creates the mixture.</summary>
    /// <param name="criticalTemperaturesKelvin">Tc_i, K.</param>
    /// <param name="criticalPressuresPascals">Pc_i, Pa.</param>
    /// <param name="acentricFactors">ω_i, dimensionless.</param>
    /// <param name="bostonMathias">Per component: use the Boston–Mathias α above Tc (quantum gases); null = none.</param>
    /// <param name="kij">Binary interaction parameters, n×n row-major, symmetric, zero diagonal; null = all 0.</param>
    /// <param name="moleFractions">x_i, summing to 1.</param>
    /// <param name="gasConstant">R, J/(mol·K).</param>
    public PengRobinsonMixture(
        ReadOnlySpan<double> criticalTemperaturesKelvin,
        ReadOnlySpan<double> criticalPressuresPascals,
        ReadOnlySpan<double> acentricFactors,
        ReadOnlySpan<bool> bostonMathias,
        ReadOnlySpan<double> kij,
        ReadOnlySpan<double> moleFractions,
        double gasConstant = ThermoConstants.MolarGasConstantJoulesPerMoleKelvin)
    {
        var n = moleFractions.Length;
        if (n == 0 || criticalTemperaturesKelvin.Length != n || criticalPressuresPascals.Length != n || acentricFactors.Length != n
            || (!bostonMathias.IsEmpty && bostonMathias.Length != n) || (!kij.IsEmpty && kij.Length != n * n))
        {
            throw new ArgumentException("Every per-component array must have one entry per component (kij n×n).", nameof(moleFractions));
        }

        Count = n;
        R = gasConstant;
        _tc = criticalTemperaturesKelvin.ToArray();
        _pc = criticalPressuresPascals.ToArray();
        _omega = acentricFactors.ToArray();
        _sqrtTc = new double[n];
        _kappa = new double[n];
        _bmC = new double[n];
        _bmD = new double[n];
        _bostonMathias = new bool[n];
        _x = moleFractions.ToArray();
        _bi = new double[n];
        _q = new double[n * n];
        _m = new double[n * n];
        var ac = new double[n];
        double b = 0;
        for (var i = 0; i < n; i++)
        {
            var tc = _tc[i];
            var pc = criticalPressuresPascals[i];
            _sqrtTc[i] = Math.Sqrt(tc);
            ac[i] = OmegaA * R * R * tc * tc / pc;
            _bi[i] = OmegaB * R * tc / pc;
            _kappa[i] = Kappa(acentricFactors[i]);
            _bostonMathias[i] = !bostonMathias.IsEmpty && bostonMathias[i];
            var kBm = Math.Max(_kappa[i], 0.0);
            _bmD[i] = 1 + (kBm / 2);
            _bmC[i] = 1 - (1 / _bmD[i]);
            b += _x[i] * _bi[i];
        }

        B = b;
        for (var i = 0; i < n; i++)
        {
            for (var j = 0; j < n; j++)
            {
                var k = kij.IsEmpty || i == j ? 0.0 : kij[(i * n) + j];
                _q[(i * n) + j] = (1 - k) * Math.Sqrt(ac[i] * ac[j]);
                _m[(i * n) + j] = _x[i] * _x[j] * _q[(i * n) + j];
            }
        }
    }

    // Shares every composition-independent array of the template; only x, the quadratic form m and b are recomputed.
    private PengRobinsonMixture(PengRobinsonMixture template, ReadOnlySpan<double> moleFractions)
    {
        var n = template.Count;
        Count = n;
        R = template.R;
        _tc = template._tc;
        _pc = template._pc;
        _omega = template._omega;
        _sqrtTc = template._sqrtTc;
        _kappa = template._kappa;
        _bmC = template._bmC;
        _bmD = template._bmD;
        _bostonMathias = template._bostonMathias;
        _bi = template._bi;
        _q = template._q;
        _x = moleFractions.ToArray();
        _m = new double[n * n];
        double b = 0;
        for (var i = 0; i < n; i++)
        {
            b += _x[i] * _bi[i];
        }

        B = b;
        for (var i = 0; i < n; i++)
        {
            for (var j = 0; j < n; j++)
            {
                _m[(i * n) + j] = _x[i] * _x[j] * _q[(i * n) + j];
            }
        }
    }

    /// <summary>
    /// The same components at other mole fractions (same order), reusing every composition-independent constant; the
    /// result is bit for bit the mixture the full constructor would build.
    /// </summary>
    public PengRobinsonMixture WithMoleFractions(ReadOnlySpan<double> moleFractions)
    {
        if (moleFractions.Length != Count)
        {
            throw new ArgumentException("One mole fraction per component.", nameof(moleFractions));
        }

        return new PengRobinsonMixture(this, moleFractions);
    }

    /// <summary>Number of components.</summary>
    public int Count { get; }

    /// <summary>R used, J/(mol·K).</summary>
    public double R { get; }

    /// <summary>Mixture co-volume b, m³/mol.</summary>
    public double B { get; }

    /// <summary>Tc_i, K.</summary>
    public ReadOnlySpan<double> CriticalTemperaturesKelvin => _tc;

    /// <summary>Pc_i, Pa.</summary>
    public ReadOnlySpan<double> CriticalPressuresPascals => _pc;

    /// <summary>ω_i, dimensionless.</summary>
    public ReadOnlySpan<double> AcentricFactors => _omega;

    /// <summary>b_i, m³/mol.</summary>
    public ReadOnlySpan<double> CoVolumes => _bi;

    /// <summary>The mixture's own mole fractions x_i.</summary>
    public ReadOnlySpan<double> MoleFractions => _x;

    /// <summary>
    /// a_ij(T) = (1 − k_ij)√(a_i a_j) at <paramref name="tKelvin"/>, n×n row-major (Pa·m⁶/mol²), for fugacities of any
    /// composition at that temperature.
    /// </summary>
    public void AttractionMatrix(double tKelvin, Span<double> aij)
    {
        var n = Count;
        Span<double> u = n <= MaxStackComponents ? stackalloc double[n] : new double[n];
        Span<double> du = n <= MaxStackComponents ? stackalloc double[n] : new double[n];
        Span<double> d2u = n <= MaxStackComponents ? stackalloc double[n] : new double[n];
        SqrtAlpha(tKelvin, u, du, d2u);
        for (var i = 0; i < n; i++)
        {
            for (var j = 0; j < n; j++)
            {
                aij[(i * n) + j] = _q[(i * n) + j] * u[i] * u[j];
            }
        }
    }

    /// <summary>κ(ω): the 1976 correlation, or the 1978 one for ω &gt; 0.49.</summary>
    public static double Kappa(double omega) => omega > HeavyAcentricFactor
        ? 0.379642 + (omega * (1.48503 + (omega * (-0.164423 + (omega * 0.016666)))))
        : 0.37464 + (omega * (1.54226 - (omega * 0.26992)));

    /// <summary>a(T), da/dT and d²a/dT² of the mixture (Pa·m⁶/mol², per K, per K²).</summary>
    public Attraction AttractionAt(double tKelvin)
    {
        var n = Count;
        Span<double> u = n <= MaxStackComponents ? stackalloc double[n] : new double[n];
        Span<double> du = n <= MaxStackComponents ? stackalloc double[n] : new double[n];
        Span<double> d2u = n <= MaxStackComponents ? stackalloc double[n] : new double[n];
        SqrtAlpha(tKelvin, u, du, d2u);

        // a = Σ_ij m_ij u_i u_j, a' = 2 Σ_ij m_ij u'_i u_j, a'' = 2 Σ_ij m_ij (u''_i u_j + u'_i u'_j); m is symmetric, so
        // the off-diagonal terms are summed once and doubled.
        double a = 0, da = 0, d2a = 0;
        var m = _m.AsSpan();
        for (var i = 0; i < n; i++)
        {
            var row = m.Slice(i * n, n);
            var ui = u[i];
            var dui = du[i];
            var d2ui = d2u[i];
            double w = 0, wd = 0, wdd = 0;
            for (var j = i + 1; j < n; j++)
            {
                var mij = row[j];
                w += mij * u[j];
                wd += mij * du[j];
                wdd += mij * d2u[j];
            }

            var mii = row[i];
            a += (mii * ui * ui) + (2 * ui * w);
            da += (mii * dui * ui) + (dui * w) + (ui * wd);
            d2a += (mii * ((d2ui * ui) + (dui * dui))) + (d2ui * w) + (ui * wdd) + (2 * dui * wd);
        }

        return new Attraction(a, 2 * da, 2 * d2a);
    }

    /// <summary>Σ_j x_j a_ij of every component i at <paramref name="tKelvin"/>, for fugacities (Pa·m⁶/mol²).</summary>
    public void PartialAttraction(double tKelvin, Span<double> sumXjAij)
    {
        var n = Count;
        Span<double> u = n <= MaxStackComponents ? stackalloc double[n] : new double[n];
        Span<double> du = n <= MaxStackComponents ? stackalloc double[n] : new double[n];
        Span<double> d2u = n <= MaxStackComponents ? stackalloc double[n] : new double[n];
        SqrtAlpha(tKelvin, u, du, d2u);
        for (var i = 0; i < n; i++)
        {
            double s = 0;
            for (var j = 0; j < n; j++)
            {
                s += _x[j] * _q[(i * n) + j] * u[i] * u[j];
            }

            sumXjAij[i] = s;
        }
    }

    /// <summary>A = aP/(RT)² and B = bP/(RT) at the state.</summary>
    public (double A, double B) Dimensionless(double tKelvin, double pPascals, double a)
    {
        var rt = R * tKelvin;
        return (a * pPascals / (rt * rt), B * pPascals / rt);
    }

    /// <summary>The largest real root of the cubic in Z (the vapour root), by Newton from Z = 1 + B.</summary>
    /// <remarks>
    /// Every root satisfies Z ≤ 1 + B (the attraction term only lowers P), and the cubic is convex above its inflection
    /// point (1 − B)/3 &lt; 1 + B, so Newton from 1 + B descends monotonically onto the largest root.
    /// </remarks>
    public static double LargestRoot(double a, double b)
    {
        var c2 = b - 1;
        var c1 = a - (3 * b * b) - (2 * b);
        var c0 = -((a * b) - (b * b) - (b * b * b));
        var z = 1 + b;
        for (var i = 0; i < 100; i++)
        {
            var f = (((z + c2) * z) + c1) * z + c0;
            var df = (((3 * z) + (2 * c2)) * z) + c1;
            var step = f / df;
            z -= step;
            if (!(Math.Abs(step) > 1e-15 * z))
            {
                break;
            }
        }

        return z;
    }

    /// <summary>
    /// All real roots above B: the largest (vapour) and the smallest (liquid). Returns 1 when a single valid root exists
    /// (then both outputs are that root) and 3 when three real roots exist (the middle one is unphysical and not given).
    /// </summary>
    public static int Roots(double a, double b, out double zVapour, out double zLiquid)
    {
        zVapour = LargestRoot(a, b);
        zLiquid = zVapour;
        var c2 = b - 1;
        var c1 = a - (3 * b * b) - (2 * b);

        // Deflate: Z³ + c2 Z² + c1 Z + c0 = (Z − z1)(Z² + p Z + q).
        var p = c2 + zVapour;
        var q = c1 + (zVapour * p);
        var disc = (p * p) - (4 * q);
        if (disc < 0)
        {
            return 1;
        }

        var sq = Math.Sqrt(disc);
        var small = p > 0 ? (-p - sq) / 2 : 2 * q / (-p + sq);
        if (!(small > b) || Math.Abs(small - zVapour) <= 1e-12 * zVapour)
        {
            return 1;
        }

        // Polish the smallest root on the full cubic.
        var c0 = -((a * b) - (b * b) - (b * b * b));
        for (var i = 0; i < 4; i++)
        {
            var f = (((small + c2) * small) + c1) * small + c0;
            var df = (((3 * small) + (2 * c2)) * small) + c1;
            if (df == 0)
            {
                break;
            }

            small -= f / df;
        }

        zLiquid = small;
        return 3;
    }

    /// <summary>Residual properties at (T, P) on the given root Z.</summary>
    public Residual ResidualAt(double tKelvin, double pPascals, double z, in Attraction attraction)
    {
        var r = R;
        var rt = r * tKelvin;
        var (_, bDim) = Dimensionless(tKelvin, pPascals, attraction.A);
        var b = B;
        var l = Math.Log((z + ((1 + Sqrt2) * bDim)) / (z + ((1 - Sqrt2) * bDim)));
        var k = l / (2 * Sqrt2 * b);
        var hRes = (rt * (z - 1)) + (((tKelvin * attraction.DaDt) - attraction.A) * k);
        var sRes = (r * Math.Log(z - bDim)) + (attraction.DaDt * k);
        var gRes = hRes - (tKelvin * sRes);

        // Heat capacities and the volume derivatives from (∂P/∂T)_V and (∂P/∂V)_T.
        var v = z * rt / pPascals;
        var den = (v * v) + (2 * b * v) - (b * b);
        var dPdT = (r / (v - b)) - (attraction.DaDt / den);
        var dPdV = (-rt / ((v - b) * (v - b))) + (2 * attraction.A * (v + b) / (den * den));
        var cvRes = tKelvin * attraction.D2aDt2 * k;
        var cpRes = cvRes - (tKelvin * dPdT * dPdT / dPdV) - r;
        return new Residual(z, v, hRes, sRes, gRes, cvRes, cpRes, -dPdT / dPdV, dPdV);
    }

    /// <summary>ln φ_i of every component at (T, P) on root Z; <paramref name="lnPhi"/> has one entry per component.</summary>
    public void LogFugacityCoefficients(double tKelvin, double pPascals, double z, Span<double> lnPhi)
    {
        var n = Count;
        Span<double> sum = n <= MaxStackComponents ? stackalloc double[n] : new double[n];
        PartialAttraction(tKelvin, sum);
        double a = 0;
        for (var i = 0; i < n; i++)
        {
            a += _x[i] * sum[i];
        }

        var (aDim, bDim) = Dimensionless(tKelvin, pPascals, a);
        var l = Math.Log((z + ((1 + Sqrt2) * bDim)) / (z + ((1 - Sqrt2) * bDim)));
        var lnZb = Math.Log(z - bDim);
        for (var i = 0; i < n; i++)
        {
            var bRatio = _bi[i] / B;
            lnPhi[i] = (bRatio * (z - 1)) - lnZb - (aDim / (2 * Sqrt2 * bDim) * ((2 * sum[i] / a) - bRatio) * l);
        }
    }

    // √α_i and its first two temperature derivatives.
    private void SqrtAlpha(double tKelvin, Span<double> u, Span<double> du, Span<double> d2u)
    {
        var sqrtT = Math.Sqrt(tKelvin);
        for (var i = 0; i < Count; i++)
        {
            var tc = _tc[i];
            if (_bostonMathias[i] && tKelvin > tc)
            {
                // √α = exp[c(1 − Tr^d)]; d√α/dT = −√α·c·d·Tr^(d−1)/Tc.
                var tr = tKelvin / tc;
                var d = _bmD[i];
                var c = _bmC[i];
                var trd = Math.Pow(tr, d);
                var ui = Math.Exp(c * (1 - trd));
                var g1 = -c * d * trd / tKelvin;
                var g2 = -c * d * (d - 1) * trd / (tKelvin * tKelvin);
                u[i] = ui;
                du[i] = ui * g1;
                d2u[i] = ui * ((g1 * g1) + g2);
            }
            else
            {
                var k = _kappa[i];
                var sTc = _sqrtTc[i];
                u[i] = 1 + (k * (1 - (sqrtT / sTc)));
                du[i] = -k / (2 * sqrtT * sTc);
                d2u[i] = k / (4 * tKelvin * sqrtT * sTc);
            }
        }
    }
}

/// <summary>The attraction parameter and its temperature derivatives.</summary>
/// <param name="A">a, Pa·m⁶/mol².</param>
/// <param name="DaDt">da/dT, Pa·m⁶/(mol²·K).</param>
/// <param name="D2aDt2">d²a/dT², Pa·m⁶/(mol²·K²).</param>
internal readonly record struct Attraction(double A, double DaDt, double D2aDt2);

/// <summary>Residual (real minus ideal gas at the same T and P) properties on one root.</summary>
/// <param name="Z">Compressibility factor.</param>
/// <param name="MolarVolume">V, m³/mol.</param>
/// <param name="Enthalpy">H − H_ig, J/mol.</param>
/// <param name="Entropy">S − S_ig, J/(mol·K).</param>
/// <param name="Gibbs">G − G_ig = RT ln φ, J/mol.</param>
/// <param name="Cv">Cv − Cv_ig, J/(mol·K).</param>
/// <param name="Cp">Cp − Cp_ig, J/(mol·K).</param>
/// <param name="DvDtAtConstantP">(∂V/∂T)_P, m³/(mol·K).</param>
/// <param name="DpDvAtConstantT">(∂P/∂V)_T, Pa·mol/m³.</param>
internal readonly record struct Residual(double Z, double MolarVolume, double Enthalpy, double Entropy, double Gibbs, double Cv, double Cp, double DvDtAtConstantP, double DpDvAtConstantT);
