using System.Globalization;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Thermo;
using UnitsNet;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>The gas models a stage's answer can rest on, with their wire names.</summary>
internal static class GasModels
{
    /// <summary>Ideal gas with temperature-dependent cp (NASA polynomials).</summary>
    public const string IdealGas = "ideal-gas";

    /// <summary>Peng-Robinson (1976) on the NASA ideal-gas part.</summary>
    public const string PengRobinson = "peng-robinson";

    /// <summary>GERG-2008 (Kunz &amp; Wagner 2012; ISO 20765-2).</summary>
    public const string Gerg2008 = "gerg-2008";

    /// <summary>Request value kept as an alias of <see cref="PengRobinson"/> (the name before GERG-2008 was added).</summary>
    public const string RealGasAlias = "real-gas";

    /// <summary>Request value: choose per stage (GERG-2008 where it covers the gas and the states, else Peng-Robinson; the ideal gas only where Peng-Robinson cannot answer and its switch criteria do not call for a real gas).</summary>
    public const string Auto = "auto";

    /// <summary>The request's method with the alias resolved (null → auto).</summary>
    public static string Normalize(string? method) => method switch
    {
        null => Auto,
        RealGasAlias => PengRobinson,
        var m => m,
    };
}

/// <summary>
/// What the real gas came to for one stage: which model decides (<see cref="Method"/>) and why, the real-gas model's
/// result shown beside the ideal gas (GERG-2008 where it was computed, else Peng-Robinson), Peng-Robinson as a second
/// opinion where GERG-2008 decided, and the deciding model for the envelope and the curve.
/// </summary>
internal sealed record RealGasStage(
    string Method,
    string Reason,
    RealGasMixture? PengRobinson,
    Gerg2008Mixture? Gerg,
    RealGasStageResult? Result,
    string? ResultModel,
    RealGasStageResult? PengRobinsonResult,
    RealGasAssessment? Assessment,
    string? Note)
{
    /// <summary>Whether the stage's temperatures come from a real-gas model.</summary>
    public bool Used => Method != GasModels.IdealGas;

    /// <summary>The deciding model's stage solve at other conditions (curve points); the ideal gas when it decided.</summary>
    public RealGasStageResult? SolveDeciding(in StageConditions c) => Method switch
    {
        GasModels.Gerg2008 when Gerg is not null => RealGasStageSolver.Solve(Gerg, c),
        GasModels.PengRobinson when PengRobinson is not null => RealGasStageSolver.Solve(PengRobinson, c),
        _ => null,
    };

    /// <summary>A stage whose discharge is two-phase by the ideal-gas estimate: no real gas computed.</summary>
    public static RealGasStage NotComputed(string note) => new(GasModels.IdealGas, note, null, null, null, null, null, null, note);
}

/// <summary>
/// The per-stage choice of gas model (request <c>method</c>): decided once per stage from the composition and the
/// suction and discharge states, kept apart from the pipeline so the choice reads in one place.
/// </summary>
internal static class RealGasChoice
{
    /// <summary>Decides and solves the real-gas side of one stage; throws a 422 problem where the chosen model cannot answer.</summary>
    /// <param name="s">The ideal-gas stage (gas, states).</param>
    /// <param name="conditions">The stage's conditions.</param>
    /// <param name="method">The normalized request method (<see cref="GasModels.Normalize"/>).</param>
    /// <param name="index">The stage index, for field paths.</param>
    /// <param name="mapMember">Maps a Thermo error (its stage and member) to the request's field path.</param>
    /// <param name="secondOpinion">Whether to compute Peng-Robinson beside GERG-2008 where GERG-2008 decides (the full answer shows it; nothing the verdict reads depends on it).</param>
    public static RealGasStage Decide(TrainStageResult s, in StageConditions conditions, string method, int index, Func<ThermoInputException, string> mapMember, bool secondOpinion = true)
    {
        if (method == GasModels.Gerg2008)
        {
            return Gerg(s, conditions, index, required: true, secondOpinion)!;
        }

        if (method == GasModels.Auto && Gerg2008.AreAllComponents(s.Gas)
            && Gerg2008.IsInNormalRange(s.Stage.SuctionTemperature, s.Stage.SuctionPressure)
            && s.Stage.DischargePressure.Pascals <= Gerg2008.NormalMaximumPressurePascals)
        {
            var gerg = Gerg(s, conditions, index, required: false, secondOpinion);
            if (gerg is not null)
            {
                return gerg;
            }
        }

        return PengRobinsonOf(s, conditions, method, index, mapMember, AutoReasonWithoutGerg(s, method));
    }

    private static string AutoReasonWithoutGerg(TrainStageResult s, string method)
    {
        if (method != GasModels.Auto)
        {
            return method == GasModels.PengRobinson ? "Peng-Robinson was requested." : "The ideal gas was requested.";
        }

        var missing = s.Gas.Components.Select(c => c.Species.Id).Where(id => !Gerg2008.IsComponent(id)).ToArray();
        if (missing.Length > 0)
        {
            return $"GERG-2008 does not cover {string.Join(", ", missing)}, so it was not used.";
        }

        return string.Create(CultureInfo.InvariantCulture,
            $"A state of this stage lies outside GERG-2008's normal range ({Gerg2008.NormalMinimumKelvin:0}–{Gerg2008.NormalMaximumKelvin:0} K, up to {Gerg2008.NormalMaximumPressurePascals / 1e6:0} MPa), so it was not used.");
    }

    // GERG-2008 decides. required (method gerg-2008): outside the extended range, a species it does not cover, or a
    // state it cannot solve is a 422 on `method`. Not required (auto): any of those returns null and Peng-Robinson follows.
    private static RealGasStage? Gerg(TrainStageResult s, StageConditions conditions, int index, bool required, bool secondOpinion)
    {
        var missing = s.Gas.Components.Select(c => c.Species.Id).Where(id => !Gerg2008.IsComponent(id)).ToArray();
        if (missing.Length > 0)
        {
            return required
                ? throw Method($"GERG-2008 does not cover {string.Join(", ", missing)} (its 21 components: {string.Join(", ", Gerg2008.ComponentIds)}); use auto, peng-robinson or ideal-gas.")
                : null;
        }

        var t1 = s.Stage.SuctionTemperature;
        var p1 = s.Stage.SuctionPressure;
        var p2 = s.Stage.DischargePressure;
        if (!Gerg2008.IsInExtendedRange(t1, p1) || p2.Pascals > Gerg2008.MaximumPressurePascals)
        {
            return required
                ? throw Method(string.Create(CultureInfo.InvariantCulture,
                    $"Stage {index}: the suction state ({t1.Kelvins:0.##} K, {p1.Pascals / 1e6:0.###} MPa) or the discharge pressure ({p2.Pascals / 1e6:0.###} MPa) lies outside GERG-2008's extended range ({Gerg2008.MinimumKelvin:0}–{Gerg2008.MaximumKelvin:0} K, up to {Gerg2008.MaximumPressurePascals / 1e6:0} MPa)."))
                : null;
        }

        var mixture = Gerg2008Mixture.Create(s.Gas);
        RealGasStageResult result;
        try
        {
            result = RealGasStageSolver.Solve(mixture, conditions);
        }
        catch (ThermoInputException ex)
        {
            return required ? throw Method(string.Create(CultureInfo.InvariantCulture, $"Stage {index}, GERG-2008: {ex.Reason}")) : null;
        }

        var t2 = result.EstimatedUpperBound;
        var inNormal = Gerg2008.IsInNormalRange(t1, p1) && Gerg2008.IsInNormalRange(result.EstimatedDischargeTemperature, p2) && Gerg2008.IsInNormalRange(t2, p2);
        if (!required && !inNormal)
        {
            return null;
        }

        string? note = inNormal
            ? null
            : string.Create(CultureInfo.InvariantCulture,
                $"A state of this stage lies outside GERG-2008's normal range ({Gerg2008.NormalMinimumKelvin:0}–{Gerg2008.NormalMaximumKelvin:0} K, up to {Gerg2008.NormalMaximumPressurePascals / 1e6:0} MPa) but inside its extended range, where its uncertainty is larger (Kunz & Wagner 2012).");

        // Peng-Robinson as a second opinion (only where the answer shows it); its failure is a note, never an error, since
        // GERG-2008 decides.
        RealGasMixture? pr = null;
        RealGasStageResult? prResult = null;
        RealGasAssessment? assessment = null;
        if (secondOpinion)
        {
            pr = RealGasMixture.Create(s.Gas);
            try
            {
                assessment = RealGasCriteria.Assess(pr, t1, p1, s.Stage.EstimatedDischargeTemperature, p2);
                prResult = RealGasStageSolver.Solve(pr, conditions);
            }
            catch (ThermoInputException ex)
            {
                note = (note is null ? "" : note + " ") + "The Peng-Robinson second opinion could not be computed: " + ex.Reason;
            }
        }

        var reason = required
            ? "GERG-2008 was requested."
            : "Every species is a GERG-2008 component and the suction and discharge states lie in its normal range (90–450 K, up to 35 MPa).";
        return new RealGasStage(GasModels.Gerg2008, reason, pr, mixture, result, GasModels.Gerg2008, prResult, assessment, note);
    }

    // Peng-Robinson where GERG-2008 does not decide: "auto" and "peng-robinson" use it, "ideal-gas" never; its answer is
    // computed beside the ideal one whenever it can be. Under "auto" the switch criteria are still assessed and reported
    // (realGas.recommended, reasons); they decide only whether a Peng-Robinson failure is an error or a note beside the
    // ideal gas.
    private static RealGasStage PengRobinsonOf(TrainStageResult s, StageConditions conditions, string method, int index, Func<ThermoInputException, string> mapMember, string reasonPrefix)
    {
        var mixture = RealGasMixture.Create(s.Gas);
        RealGasAssessment? assessment = null;
        try
        {
            assessment = RealGasCriteria.Assess(mixture, s.Stage.SuctionTemperature, s.Stage.SuctionPressure, s.Stage.EstimatedDischargeTemperature, s.Stage.DischargePressure);
            var use = method is GasModels.PengRobinson or GasModels.Auto;
            var result = RealGasStageSolver.Solve(mixture, conditions);
            return new RealGasStage(use ? GasModels.PengRobinson : GasModels.IdealGas, Reason(method, reasonPrefix, use, assessment), mixture, null, result, GasModels.PengRobinson, result, assessment, null);
        }
        catch (ThermoInputException ex)
        {
            // A state the real gas finds liquid or two-phase, or out of its range: a domain error when the real gas must
            // decide, and a note beside the ideal-gas answer when it need not.
            var mustDecide = method == GasModels.PengRobinson || (method == GasModels.Auto && (assessment?.RealGasRecommended ?? true));
            if (mustDecide)
            {
                throw RequestProblemException.Field(ProblemKind.Unprocessable, "out-of-range", "The request is physically impossible or outside the data's valid range.",
                    mapMember(ex), "Real gas (Peng-Robinson): " + ex.Reason);
            }

            var why = method == GasModels.Auto
                ? reasonPrefix + " Peng-Robinson could not answer (" + ex.Reason + "), and the switch criteria do not call for a real gas, so the ideal gas decides."
                : reasonPrefix;
            return new RealGasStage(GasModels.IdealGas, why, mixture, null, null, null, null, assessment, "The real-gas answer could not be computed: " + ex.Reason);
        }
    }

    private static string Reason(string method, string prefix, bool used, RealGasAssessment assessment) => method != GasModels.Auto || !used
        ? prefix
        : prefix + (assessment.RealGasRecommended
            ? " Peng-Robinson decides (its switch criteria call for a real gas, see reasons)."
            : " Peng-Robinson decides (near the ideal gas here: its switch criteria do not call for a real gas).");

    private static RequestProblemException Method(string message) =>
        RequestProblemException.Field(ProblemKind.Unprocessable, "out-of-range", "The request is physically impossible or outside the data's valid range.", "method", message);
}
