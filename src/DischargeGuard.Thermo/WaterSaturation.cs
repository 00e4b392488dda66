using System.Globalization;
using UnitsNet;

namespace DischargeGuard.Thermo;

/// <summary>
/// Saturation pressure of water. Over liquid water, 273.15–647.096 K: the IAPWS-IF97 region 4 saturation-pressure
/// equation and its backward saturation-temperature equation (IAPWS, "Revised Release on the IAPWS Industrial
/// Formulation 1997 for the Thermodynamic Properties of Water and Steam", 2007, eqs. 30 and 31). Over ice,
/// 200–273.16 K: the IAPWS sublimation-pressure equation (Wagner, Riethmann, Feistel &amp; Harvey, J. Phys. Chem. Ref.
/// Data 40, 043103, 2011), so a relative humidity below 0 °C is taken over ice and a dew point there is a frost point.
/// </summary>
public static class WaterSaturation
{
    /// <summary>Lowest temperature covered, K.</summary>
    public const double MinimumKelvin = 200.0;

    /// <summary>Critical temperature of water, K (IAPWS-IF97).</summary>
    public const double CriticalKelvin = 647.096;

    /// <summary>Triple-point temperature, K.</summary>
    public const double TriplePointKelvin = 273.16;

    /// <summary>Triple-point pressure, Pa (IAPWS 2011).</summary>
    public const double TriplePointPascals = 611.657;

    private const double N1 = 0.11670521452767e4;
    private const double N2 = -0.72421316703206e6;
    private const double N3 = -0.17073846940092e2;
    private const double N4 = 0.12020824702470e5;
    private const double N5 = -0.32325550322333e7;
    private const double N6 = 0.14915108613530e2;
    private const double N7 = -0.48232657361591e4;
    private const double N8 = 0.40511340542057e6;
    private const double N9 = -0.23855557567849;
    private const double N10 = 0.65017534844798e3;

    /// <summary>Saturation (or sublimation) pressure at <paramref name="temperature"/>.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Outside 200–647.096 K.</exception>
    public static Pressure SaturationPressure(Temperature temperature) =>
        Pressure.FromPascals(SaturationPressurePascals(temperature.Kelvins));

    /// <summary>Saturation (or sublimation) pressure in Pa at <paramref name="tKelvin"/>.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Outside 200–647.096 K.</exception>
    public static double SaturationPressurePascals(double tKelvin)
    {
        if (!(tKelvin >= MinimumKelvin && tKelvin <= CriticalKelvin))
        {
            throw ThermoErrors.OutOfRange(
                nameof(tKelvin),
                tKelvin,
                string.Create(CultureInfo.InvariantCulture, $"Water saturation is defined here for {MinimumKelvin} K to {CriticalKelvin} K; got {tKelvin:0.###} K."));
        }

        return tKelvin < TriplePointKelvin ? SublimationPascals(tKelvin) : LiquidPascals(tKelvin);
    }

    /// <summary>Saturation (dew or frost point) temperature at water partial pressure <paramref name="partialPressure"/>.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Below the sublimation pressure at 200 K or above the critical pressure.</exception>
    public static Temperature SaturationTemperature(Pressure partialPressure) =>
        Temperature.FromKelvins(SaturationTemperatureKelvin(partialPressure.Pascals));

    /// <summary>Saturation temperature in K at water partial pressure <paramref name="pPascals"/>.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Outside the covered pressure range.</exception>
    public static double SaturationTemperatureKelvin(double pPascals)
    {
        var pMin = SublimationPascals(MinimumKelvin);
        var pMax = LiquidPascals(CriticalKelvin);
        if (!(pPascals >= pMin && pPascals <= pMax))
        {
            throw ThermoErrors.OutOfRange(
                nameof(pPascals),
                pPascals,
                string.Create(CultureInfo.InvariantCulture, $"Water partial pressure must lie in {pMin:0.####}–{pMax:0} Pa; got {pPascals:0.####} Pa."));
        }

        if (pPascals >= LiquidPascals(TriplePointKelvin))
        {
            // IF97 eq. 31 (backward equation, consistent with eq. 30 to well below 1e-6 relative).
            var beta = Math.Pow(pPascals / 1e6, 0.25);
            var e = (beta * beta) + (N3 * beta) + N6;
            var f = (N1 * beta * beta) + (N4 * beta) + N7;
            var g = (N2 * beta * beta) + (N5 * beta) + N8;
            var d = 2 * g / (-f - Math.Sqrt((f * f) - (4 * e * g)));
            return 0.5 * (N10 + d - Math.Sqrt(((N10 + d) * (N10 + d)) - (4 * (N9 + (N10 * d)))));
        }

        // Sublimation curve: Newton on ln p, which is nearly linear in 1/T.
        var lnTarget = Math.Log(pPascals);
        var t = 250.0;
        for (var i = 0; i < 50; i++)
        {
            var lnP = Math.Log(SublimationPascals(t));
            var h = 1e-4;
            var slope = (Math.Log(SublimationPascals(t + h)) - lnP) / h;
            var step = (lnP - lnTarget) / slope;
            t -= step;
            if (Math.Abs(step) < 1e-10)
            {
                break;
            }
        }

        return t;
    }

    private static double LiquidPascals(double t)
    {
        var theta = t + (N9 / (t - N10));
        var a = (theta * theta) + (N1 * theta) + N2;
        var b = (N3 * theta * theta) + (N4 * theta) + N5;
        var c = (N6 * theta * theta) + (N7 * theta) + N8;
        var x = 2 * c / (-b + Math.Sqrt((b * b) - (4 * a * c)));
        return x * x * x * x * 1e6;
    }

    private static double SublimationPascals(double t)
    {
        var theta = t / TriplePointKelvin;
        var sum = (-0.212144006e2 * Math.Pow(theta, 0.333333333e-2))
            + (0.273203819e2 * Math.Pow(theta, 0.120666667e1))
            + (-0.610598130e1 * Math.Pow(theta, 0.170333333e1));
        return TriplePointPascals * Math.Exp(sum / theta);
    }
}
