namespace DischargeGuard.Thermo;

/// <summary>Physical constants used throughout the thermodynamic core.</summary>
public static class ThermoConstants
{
    /// <summary>Molar gas constant R in J/(mol·K) (2018 CODATA exact value, from the SI definitions of k and N_A).</summary>
    public const double MolarGasConstantJoulesPerMoleKelvin = 8.31446261815324;

    /// <summary>Standard-state pressure of the NASA polynomials' S°, 1 bar, in Pa.</summary>
    public const double StandardStatePressurePascals = 100_000.0;

    /// <summary>Standard atmosphere at sea level, 101 325 Pa (ISO 2533).</summary>
    public const double StandardAtmospherePascals = 101_325.0;

    /// <summary>0 °C in kelvin.</summary>
    public const double ZeroCelsiusInKelvin = 273.15;
}
