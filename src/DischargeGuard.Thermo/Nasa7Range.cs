namespace DischargeGuard.Thermo;

/// <summary>
/// One temperature range of a NASA 7-coefficient polynomial (McBride, Gordon &amp; Reno, NASA TM-4513, 1993):
/// cp/R = a1 + a2·T + a3·T² + a4·T³ + a5·T⁴; H/(R·T) = a1 + a2·T/2 + a3·T²/3 + a4·T³/4 + a5·T⁴/5 + a6/T;
/// S°/R = a1·ln T + a2·T + a3·T²/2 + a4·T³/3 + a5·T⁴/4 + a7, with T in kelvin and S° at 1 bar.
/// </summary>
/// <param name="LowKelvin">Lower end of the range, K.</param>
/// <param name="HighKelvin">Upper end of the range, K.</param>
/// <param name="A1">a1, dimensionless.</param>
/// <param name="A2">a2, 1/K.</param>
/// <param name="A3">a3, 1/K².</param>
/// <param name="A4">a4, 1/K³.</param>
/// <param name="A5">a5, 1/K⁴.</param>
/// <param name="A6">a6, K (enthalpy integration constant).</param>
/// <param name="A7">a7, dimensionless (entropy integration constant).</param>
public readonly record struct Nasa7Range(
    double LowKelvin,
    double HighKelvin,
    double A1,
    double A2,
    double A3,
    double A4,
    double A5,
    double A6,
    double A7)
{
    /// <summary>cp/R at <paramref name="tKelvin"/>, dimensionless.</summary>
    public double HeatCapacityOverR(double tKelvin) =>
        A1 + (tKelvin * (A2 + (tKelvin * (A3 + (tKelvin * (A4 + (tKelvin * A5)))))));

    /// <summary>H/R at <paramref name="tKelvin"/>, in K.</summary>
    public double EnthalpyOverR(double tKelvin) =>
        A6 + (tKelvin * (A1 + (tKelvin * ((A2 / 2) + (tKelvin * ((A3 / 3) + (tKelvin * ((A4 / 4) + (tKelvin * (A5 / 5))))))))));

    /// <summary>S°/R at <paramref name="tKelvin"/> and 1 bar, dimensionless.</summary>
    public double EntropyOverR(double tKelvin) =>
        (A1 * Math.Log(tKelvin)) + A7 + (tKelvin * (A2 + (tKelvin * ((A3 / 2) + (tKelvin * ((A4 / 3) + (tKelvin * (A5 / 4))))))));

    /// <summary>Whether <paramref name="tKelvin"/> lies in [LowKelvin, HighKelvin].</summary>
    public bool Contains(double tKelvin) => tKelvin >= LowKelvin && tKelvin <= HighKelvin;
}
