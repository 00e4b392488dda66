using System.Globalization;
using DischargeGuard.Rules;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Thermo;
using RuleStageResult = DischargeGuard.Rules.Evaluation.StageResult;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>How far a finding's warning band was widened for the model's own error, and why.</summary>
/// <param name="RuleId">The rule.</param>
/// <param name="WidenedByKelvin">The widening, K: the equation of state's known error plus, on the estimate, the efficiency's stated uncertainty.</param>
/// <param name="EquationOfStateKelvin">The equation of state's part, K.</param>
/// <param name="EfficiencyKelvin">The efficiency's part, K (T2 at the lower efficiency less T2).</param>
/// <param name="Note">The widening in words, with its basis.</param>
internal sealed record UncertaintyWidening(string RuleId, double WidenedByKelvin, double EquationOfStateKelvin, double EfficiencyKelvin, string Note);

/// <summary>
/// The model's own error in the margin. A predicted temperature carries the equation of state's known error against the
/// reference equations and, for the estimate, the spread the efficiency's stated uncertainty gives. Where that error is
/// comparable to the margin (the margin lies inside the rule's warning band widened by it), the finding moves into the
/// band — a violation rule's pass becomes a warning — and says by how much and why.
/// </summary>
/// <remarks>
/// Error as a share of the stage's temperature rise (T − T1), the worst of the stage checks against the reference
/// equations at 1 → 10 MPa in docs/real-gas.md ("Stage temperatures against the reference equations"; CO2 at 316 K is the
/// worst row): Peng-Robinson 1.51 % on T2s (3.02 K of 200.01 K) and 1.04 % on T2 (2.46 K of 236.56 K); the ideal gas
/// 6.70 % on T2s (13.39 K) and 3.05 % on T2 (7.21 K), scaled by p2/10 MPa below 10 MPa because the departure from the
/// ideal gas grows about linearly with pressure at moderate pressure (second virial coefficient — common practice, no
/// single source); GERG-2008 0.1 % of the rise, the order of its stated uncertainty in Z in the normal range (ISO 20765-2;
/// carrying a Z uncertainty over to a temperature rise one for one is common practice, no single source). The two parts
/// add linearly (not in quadrature: a bound, not a standard uncertainty). A stage whose estimate comes from a measured duty
/// or from an oil energy balance has the equation of state's part on its η = 1 temperatures only.
/// </remarks>
internal static class ModelUncertainty
{
    internal const double PengRobinsonIsentropicShare = 3.02 / 200.01;
    internal const double PengRobinsonEstimatedShare = 2.46 / 236.56;
    internal const double IdealGasIsentropicShareAt10MPa = 13.39 / 200.01;
    internal const double IdealGasEstimatedShareAt10MPa = 7.21 / 236.56;
    internal const double Gerg2008Share = 0.001;
    private const double ReferencePressurePascals = 10e6;

    /// <summary>The stage's findings with widened warning bands where the model's error reaches the margin; the widenings by rule id.</summary>
    public static (RuleStageResult Ruled, IReadOnlyDictionary<string, UncertaintyWidening> Widenings) Apply(
        RuleStageResult ruled, StageFacts facts, string method, bool estimateFromModel, EffectiveRuleSet rules)
    {
        Dictionary<string, UncertaintyWidening>? widened = null;
        var findings = ruled.Findings.ToArray();
        for (var i = 0; i < findings.Length; i++)
        {
            var f = findings[i];
            if (f is not { Limit: not null, Margin: { } margin, Direction: LimitDirection.Upper } || margin.SiValue < 0
                || f.Quantity is not (CheckedQuantity.Isentropic or CheckedQuantity.IsentropicInternal or CheckedQuantity.Estimated or CheckedQuantity.EstimatedUpperBound)
                || f.RuleSeverity is not (Severity.Violation or Severity.Warning))
            {
                continue;
            }

            var rule = rules.Rules.FirstOrDefault(r => r.Id == f.RuleId);
            if (rule is null)
            {
                continue;
            }

            var isentropic = f.Quantity is CheckedQuantity.Isentropic or CheckedQuantity.IsentropicInternal;
            if (!isentropic && !estimateFromModel)
            {
                continue;
            }

            var value = f.Value?.SiValue ?? (f.Limit.Value.SiValue - margin.SiValue);
            var riseKelvin = Math.Max(0, value - facts.SuctionTemperature.Kelvins);
            var eos = riseKelvin * Share(method, isentropic, facts.DischargePressure.Pascals);
            var efficiency = f.Quantity == CheckedQuantity.Estimated ? Math.Max(0, facts.EstimatedUpperBound.Kelvins - facts.Estimated.Kelvins) : 0;
            var u = eos + efficiency;
            var band = rule.WarningBand;
            if (!(u > 0) || margin.SiValue >= band + u)
            {
                continue;
            }

            var note = string.Create(CultureInfo.InvariantCulture,
                $"Warning band widened by {u:0.##} K for the model's own error, comparable to the {margin.SiValue:0.##} K margin: {Describe(method, eos, efficiency)} (see docs/real-gas.md).");
            var severity = f.Severity == Severity.Pass ? (f.RuleSeverity == Severity.Violation ? Severity.Warning : Severity.Info) : f.Severity;
            findings[i] = f with
            {
                Severity = severity,
                Message = OutcomeWording.For(rule, Outcome.Near, margin, band + u),
            };
            (widened ??= new(StringComparer.Ordinal))[f.RuleId] = new UncertaintyWidening(f.RuleId, u, eos, efficiency, note);
        }

        if (widened is null)
        {
            return (ruled, new Dictionary<string, UncertaintyWidening>(StringComparer.Ordinal));
        }

        var verdict = findings.Any(f => f.Severity == Severity.Violation) ? Verdict.Fail
            : findings.Any(f => f.Severity == Severity.Warning) ? Verdict.Review
            : Verdict.Pass;
        verdict = (Verdict)Math.Max((int)verdict, (int)ruled.Verdict);
        return (ruled with { Verdict = verdict, Findings = findings }, widened);
    }

    /// <summary>The equation of state's error as a share of the temperature rise, for the stage's method.</summary>
    internal static double Share(string method, bool isentropic, double dischargePascals) => method switch
    {
        GasModels.PengRobinson => isentropic ? PengRobinsonIsentropicShare : PengRobinsonEstimatedShare,
        GasModels.Gerg2008 => Gerg2008Share,
        _ => (isentropic ? IdealGasIsentropicShareAt10MPa : IdealGasEstimatedShareAt10MPa) * Math.Min(1, dischargePascals / ReferencePressurePascals),
    };

    private static string Describe(string method, double eos, double efficiency)
    {
        var model = method switch
        {
            GasModels.PengRobinson => "Peng-Robinson's error against the reference equations, up to 1.0–1.5 % of the temperature rise",
            GasModels.Gerg2008 => "GERG-2008's stated uncertainty, about 0.1 % of the temperature rise",
            _ => "the ideal gas's error against the reference equations, up to 3–7 % of the temperature rise at 10 MPa, scaled to the discharge pressure",
        };
        return efficiency > 0
            ? string.Create(CultureInfo.InvariantCulture, $"{model} ({eos:0.##} K), plus the efficiency's stated uncertainty ({efficiency:0.##} K)")
            : string.Create(CultureInfo.InvariantCulture, $"{model} ({eos:0.##} K)");
    }
}
