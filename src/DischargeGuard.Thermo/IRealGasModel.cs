namespace DischargeGuard.Thermo;

/// <summary>
/// What the real-gas stage and envelope solvers need from an equation of state, so Peng-Robinson
/// (<see cref="RealGasMixture"/>) and GERG-2008 (<see cref="Gerg2008Mixture"/>) share one implementation of the paths.
/// </summary>
internal interface IRealGasModel
{
    /// <summary>The ideal-gas mixture underneath: the ideal-gas answer beside the real-gas one, and the molar mass for works.</summary>
    GasMixture IdealGas { get; }

    /// <summary>Lowest temperature the model and the ideal-gas data both cover, K (the bracket of every temperature solve).</summary>
    double MinimumKelvin { get; }

    /// <summary>Highest temperature the model and the ideal-gas data both cover, K.</summary>
    double MaximumKelvin { get; }

    /// <summary>Highest pressure the model accepts, Pa.</summary>
    double MaximumPressurePascals { get; }

    /// <summary>Pairs whose interaction parameter was taken as 0 (none for GERG-2008).</summary>
    IReadOnlyList<SpeciesPair> DefaultedPairs { get; }

    /// <summary>Whether <paramref name="tKelvin"/> lies in [<see cref="MinimumKelvin"/>, <see cref="MaximumKelvin"/>].</summary>
    bool InRange(double tKelvin);

    /// <summary>Throws <see cref="ThermoInputException"/> naming <paramref name="member"/> when T is outside the model's range.</summary>
    void RequireTemperature(double tKelvin, string member);

    /// <summary>Throws <see cref="ThermoInputException"/> naming <paramref name="member"/> when p is outside the model's range.</summary>
    void RequirePressure(double pPascals, string member);

    /// <summary>Throws <see cref="ThermoInputException"/> naming <paramref name="member"/> when (T, p) is liquid or two-phase.</summary>
    void RequireVapour(double tKelvin, double pPascals, string member);

    /// <summary>Hot-path properties at (T, p) on the gas root (no checks; NaN fields where the model has no gas root).</summary>
    RealGasPoint Evaluate(double tKelvin, double pPascals);
}
