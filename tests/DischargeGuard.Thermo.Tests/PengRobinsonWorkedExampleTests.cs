using System.Globalization;
using DischargeGuard.Thermo.Core;

namespace DischargeGuard.Thermo.Tests;

/// <summary>
/// The Peng-Robinson worked examples of realgas-checks.csv (rows PR-THERMO-*), each computed through the
/// constants-as-parameters core with the example's own constants and checked to its printed digits (± one unit in the
/// last printed digit). Source of every value: CalebBell/thermo@2bb466e98439c2395a004e7095d07f9b97a5a0f0, files named per
/// test (docstring examples of classes PR and PRMIX, and docs/cubic_equations_of_state.rst), as copied into
/// Data/realgas-checks.csv (columns values_as_printed and model_parameters).
/// </summary>
public sealed class PengRobinsonWorkedExampleTests
{
    // R as used by the examples (model_parameters of the PR-THERMO rows).
    private const double R = 8.31446261815324;

    private static PengRobinsonMixture Hexane() =>
        // n-C6H14: Tc = 507.6 K, Pc = 3 025 000 Pa, ω = 0.2975 (PR-THERMO-nC6H14-* model_parameters; thermo/eos.py, class PR).
        new([507.6], [3025000], [0.2975], [], [], [1.0], R);

    private static PengRobinsonMixture NitrogenMethane(double kij) =>
        // N2: Tc = 126.1 K, Pc = 3 394 000 Pa, ω = 0.04; CH4: Tc = 190.6 K, Pc = 4 604 000 Pa, ω = 0.011; x = 0.5/0.5
        // (PR-THERMO-N2CH4-* model_parameters; thermo/eos_mix.py class PRMIX and docs/cubic_equations_of_state.rst).
        new([126.1, 190.6], [3394000, 4604000], [0.04, 0.011], [], [0, kij, kij, 0], [0.5, 0.5], R);

    [Fact]
    public void Hexane_400K_1000kPa_BothRootsAndDepartures_MatchPrintedDigits()
    {
        // thermo/eos.py, docstring of class PR: PR(Tc=507.6, Pc=3025000, omega=0.2975, T=400., P=1E6).
        var eos = Hexane();
        const double t = 400, p = 1e6;
        var att = eos.AttractionAt(t);
        var (a, b) = eos.Dimensionless(t, p, att.A);
        Assert.Equal(3, PengRobinsonMixture.Roots(a, b, out var zv, out var zl));
        var gas = eos.ResidualAt(t, p, zv, att);
        var liq = eos.ResidualAt(t, p, zl, att);

        Printed("0.0021418768167", gas.MolarVolume, "V_g, m3/mol");
        Printed("0.000156073184785", liq.MolarVolume, "V_l, m3/mol");
        Printed("-3549.30057795", gas.Enthalpy, "H_dep_g, J/mol");
        Printed("-6.4394518931", gas.Entropy, "S_dep_g, J/(mol K)");
        Printed("-973.51982071", gas.Gibbs, "G_dep_g, J/mol");
        Printed("-26111.8775716", liq.Enthalpy, "H_dep_l, J/mol");
        Printed("-58.098447843", liq.Entropy, "S_dep_l, J/(mol K)");
        Printed("-2872.49843435", liq.Gibbs, "G_dep_l, J/mol");
        Printed("59.0878123050", liq.Cp, "Cp_dep_l, J/(mol K)");
        Printed("18.8921126734", liq.Cv, "Cv_dep_l, J/(mol K)");

        // Volume derivatives (the polytropic path uses (∂V/∂T)_P): beta = (1/V)(∂V/∂T)_P, kappa = −(1/V)(∂V/∂P)_T,
        // and Cp − Cv = −T (∂P/∂T)_V² / (∂P/∂V)_T (total, not departure).
        Printed("0.0101232239111", gas.DvDtAtConstantP / gas.MolarVolume, "beta_g, 1/K");
        Printed("1.97106698097e-06", -1 / (gas.MolarVolume * gas.DpDvAtConstantT), "isothermal compressibility_g, 1/Pa");
        Printed("44.544161128", gas.Cp - gas.Cv + R, "Cp − Cv (gas), J/(mol K)");
        Printed("0.00269337091778", liq.DvDtAtConstantP / liq.MolarVolume, "beta_l, 1/K");
        Printed("9.3357215438e-09", -1 / (liq.MolarVolume * liq.DpDvAtConstantT), "isothermal compressibility_l, 1/Pa");
        Printed("48.510162249", liq.Cp - liq.Cv + R, "Cp − Cv (liquid), J/(mol K)");

        // The docs note the liquid is the stable phase here: its G departure is the lower one.
        Assert.True(liq.Gibbs < gas.Gibbs);
    }

    [Fact]
    public void Hexane_299K_1000kPa_SingleLiquidRoot_MatchesPrintedDigits()
    {
        // thermo/eos.py, docstring of class PR: the same fluid at T = 299 K, P = 1E6 Pa (only a liquid root).
        var eos = Hexane();
        const double t = 299, p = 1e6;
        var att = eos.AttractionAt(t);
        var (a, b) = eos.Dimensionless(t, p, att.A);
        Assert.Equal(1, PengRobinsonMixture.Roots(a, b, out var z, out _));
        var liq = eos.ResidualAt(t, p, z, att);
        Printed("0.000130222125139", liq.MolarVolume, "V_l, m3/mol");
        Printed("-31134.75084", liq.Enthalpy, "H_dep_l, J/mol");
        Printed("-72.47561931", liq.Entropy, "S_dep_l, J/(mol K)");
    }

    [Theory]
    // thermo/eos_mix.py, docstring of class PRMIX (kij = 0): V and fugacities (N2, CH4) of both roots.
    [InlineData(0.0, "0.00070066592313", "3.6257362939e-05", "436530.92470", "358114.63827", "793860.83821", "73468.552253")]
    // docs/cubic_equations_of_state.rst, 'Working With Mixtures' (kij = 0.0289).
    [InlineData(0.0289, "0.00070676607", "3.658707770e-05", "438108.61", "359993.48", "838516.99", "78350.27")]
    public void NitrogenMethane_115K_1000kPa_VolumesAndFugacities_MatchPrintedDigits(
        double kij, string vGas, string vLiquid, string fN2Gas, string fCh4Gas, string fN2Liquid, string fCh4Liquid)
    {
        var eos = NitrogenMethane(kij);
        const double t = 115, p = 1e6;
        var att = eos.AttractionAt(t);
        var (a, b) = eos.Dimensionless(t, p, att.A);
        Assert.Equal(3, PengRobinsonMixture.Roots(a, b, out var zv, out var zl));
        Printed(vGas, zv * R * t / p, "V_g, m3/mol");
        Printed(vLiquid, zl * R * t / p, "V_l, m3/mol");

        Span<double> lnPhi = stackalloc double[2];
        eos.LogFugacityCoefficients(t, p, zv, lnPhi);
        Printed(fN2Gas, 0.5 * p * Math.Exp(lnPhi[0]), "f_N2 (gas), Pa");
        Printed(fCh4Gas, 0.5 * p * Math.Exp(lnPhi[1]), "f_CH4 (gas), Pa");
        eos.LogFugacityCoefficients(t, p, zl, lnPhi);
        Printed(fN2Liquid, 0.5 * p * Math.Exp(lnPhi[0]), "f_N2 (liquid), Pa");
        Printed(fCh4Liquid, 0.5 * p * Math.Exp(lnPhi[1]), "f_CH4 (liquid), Pa");
    }

    [Fact]
    public void NitrogenMethane_400C_30psi_GasEnthalpyDeparture_MatchesPrintedDigits()
    {
        // docs/cubic_equations_of_state.rst, 'Using Units with Cubic Equations of State': T = 400 °C, P = 30 psi,
        // kij = 0.0289 → H_dep_g = −2.53858854 J/mol. 1 psi = 6.894757293168361 kPa (exact).
        var eos = NitrogenMethane(0.0289);
        const double t = 673.15, p = 30 * 6894.757293168361;
        var att = eos.AttractionAt(t);
        var (a, b) = eos.Dimensionless(t, p, att.A);
        var z = PengRobinsonMixture.LargestRoot(a, b);
        Printed("-2.53858854", eos.ResidualAt(t, p, z, att).Enthalpy, "H_dep_g, J/mol");
    }

    [Fact]
    public void Kappa_AboveOmega049_Uses1978Correlation()
    {
        // Robinson & Peng (1978), GPA RR-28 (from memory): κ = 0.379642 + 1.48503ω − 0.164423ω² + 0.016666ω³ for ω > 0.49;
        // the 1976 form below. Checked as the formulas themselves at ω = 0.6 and 0.3.
        AssertEx.WithinRelative(0.379642 + (1.48503 * 0.6) - (0.164423 * 0.36) + (0.016666 * 0.216), PengRobinsonMixture.Kappa(0.6), 1e-15);
        AssertEx.WithinRelative(0.37464 + (1.54226 * 0.3) - (0.26992 * 0.09), PengRobinsonMixture.Kappa(0.3), 1e-15);
    }

    // ± one unit in the last printed digit.
    private static void Printed(string printed, double actual, string what)
    {
        var expected = double.Parse(printed, NumberStyles.Float, CultureInfo.InvariantCulture);
        var mantissa = printed.Split('e', 'E')[0];
        var exponent = printed.Contains('e', StringComparison.OrdinalIgnoreCase) ? int.Parse(printed.Split('e', 'E')[1], CultureInfo.InvariantCulture) : 0;
        var dot = mantissa.IndexOf('.', StringComparison.Ordinal);
        var decimals = dot < 0 ? 0 : mantissa.Length - dot - 1;
        var unit = Math.Pow(10, exponent - decimals);
        AssertEx.Within(expected, actual, unit, what);
    }
}
