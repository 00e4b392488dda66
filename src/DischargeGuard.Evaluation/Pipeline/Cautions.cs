namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>The cautions every answer carries, and the ones that depend on the case.</summary>
public static class Cautions
{
    /// <summary>Always present: defer to the manufacturer, the standard, local codes and licensed review.</summary>
    public const string DeferToCodes =
        "Screening result only: the manufacturer's limits, the applicable design standard and local codes take precedence, and a licensed engineer must review any change before the machine runs at new conditions.";

    /// <summary>Always present: the result does not replace the machine's own protection.</summary>
    public const string KeepProtection =
        "A pass does not replace the machine's own discharge-temperature alarms and shutdowns; keep them in service and set from the manufacturer's data. Overheated stages can coke valves and start discharge-line fires.";

    /// <summary>Added when a stage's temperatures come from the ideal gas.</summary>
    public const string IdealGas =
        "Stages marked ideal-gas are computed as an ideal gas with temperature-dependent specific heats; ?detail=full gives the Peng-Robinson real-gas answer beside each of them for comparison.";

    /// <summary>Added when a stage's temperatures come from the Peng-Robinson real gas.</summary>
    public const string RealGas =
        "Stages marked peng-robinson use the Peng-Robinson equation of state (typically within 1-3 % in Z of the reference equations, worse near the critical point and for hydrogen and helium); confirm critical cases with the gas's reference equation of state and the manufacturer's data.";

    /// <summary>Added when a stage's temperatures come from GERG-2008.</summary>
    public const string Gerg2008 =
        "Stages marked gerg-2008 use the GERG-2008 reference equation for natural gases and related mixtures (ISO 20765-2; in its normal range Z typically within 0.1 % for natural gas, larger uncertainty in its extended range); ?detail=full shows Peng-Robinson beside it as a second opinion. Confirm critical cases with the manufacturer's data.";

    /// <summary>Added when a discharge pressure is high enough that real-gas effects may matter.</summary>
    public const string HighPressure =
        "At least one stage discharges above 3 MPa (30 bar) absolute: natural gas, CO2 and hydrogen deviate from the ideal gas there, which can shift discharge temperatures by several kelvin or more. Treat this result as indicative and confirm with a real-gas method.";

    /// <summary>Added when some rule could not be checked.</summary>
    public const string NotChecked =
        "Some rules could not be checked for lack of an input (each stage lists them as not checked, with what is missing); an unchecked rule is not a pass.";

    /// <summary>Added when an efficiency came from the rule file's compressor-type default.</summary>
    public const string DefaultEfficiency =
        "At least one stage used the compressor type's default efficiency from the rule file; a measured or vendor efficiency gives a better estimate.";

    /// <summary>Added when a finding's warning band was widened for the model's own error.</summary>
    public const string ModelUncertainty =
        "At least one margin is comparable to the model's own error (the equation of state's known error against the reference equations, and the efficiency's stated uncertainty): its warning band was widened by that error, as the finding says. Treat such a margin as unproven and confirm with the manufacturer's data.";

    /// <summary>Added when a later stage is fed directly (its cooler bypassed or out of service).</summary>
    public const string FedDirectly =
        "At least one stage is fed directly by the previous stage's discharge (its cooler bypassed or out of service): its suction is hot and every stage after it runs hotter. Run this way only as the manufacturer allows, and keep the discharge-temperature protection of every stage in service.";
}
