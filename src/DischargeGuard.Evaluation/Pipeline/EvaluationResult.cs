using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Provider;
using DischargeGuard.Thermo;
using UnitsNet;
using RuleStageResult = DischargeGuard.Rules.Evaluation.StageResult;

namespace DischargeGuard.Evaluation.Pipeline;

/// <summary>How much an answer carries: the compact default, or everything (each finding's basis, the per-limit envelope, the models side by side).</summary>
public enum AnswerDetail
{
    /// <summary>What a planner and a technician need (rule id, title, severity, quantity, limit, margin, outcome wording).</summary>
    Compact,

    /// <summary>Everything the evaluation computed, with each rule's basis (<c>?detail=full</c>).</summary>
    Full,
}

/// <summary>
/// What an evaluation came to, in SI and as data: the verdict, each stage's outcome with its findings, the rule layers
/// and the gas. The wire answer (<see cref="ResponseMapper"/>), the audit record's per-stage summary, trend history and
/// the gate's reports are all made from it; none of them reads the answer's JSON back.
/// </summary>
public sealed class EvaluationResult
{
    internal EvaluationResult(Guid id, DateTimeOffset evaluatedAt, EvaluationInput input, Verdict verdict, string method, IReadOnlyList<StageOutcome> stages,
        IReadOnlyList<string> serviceClasses, IReadOnlyList<string> cautions)
    {
        Id = id;
        EvaluatedAt = evaluatedAt;
        Input = input;
        BaseVerdict = verdict;
        Method = method;
        Stages = stages;
        ServiceClasses = serviceClasses;
        Cautions = cautions;
        Governing = stages
            .Where(s => s.Governing is not null)
            .OrderByDescending(s => (int)s.Verdict)
            .ThenBy(s => GoverningOrder(s.Governing!))
            .FirstOrDefault();
    }

    // Among stages of equal verdict: a violation with no number (a prohibited combination, liquid at the suction) comes
    // first, then the smallest margin. Kelvin and ratio margins are ordered by their SI values, as before.
    private static double GoverningOrder(Finding governing) => governing.Margin?.SiValue ?? double.NegativeInfinity;

    /// <summary>The evaluation id (UUIDv7), shared by the answer and its audit record.</summary>
    public Guid Id { get; }

    /// <summary>When it was evaluated (UTC).</summary>
    public DateTimeOffset EvaluatedAt { get; }

    /// <summary>The overall verdict: the worst stage's, in the base case and in every scenario.</summary>
    public Verdict Verdict => Scenarios.Aggregate(BaseVerdict, (v, s) => (Verdict)Math.Max((int)v, (int)s.Result.BaseVerdict));

    /// <summary>The base case's verdict (its stages' worst), without the scenarios.</summary>
    public Verdict BaseVerdict { get; }

    /// <summary>The scenarios evaluated beside the base case, in request order (empty when the request named none).</summary>
    public IReadOnlyList<ScenarioOutcome> Scenarios { get; internal set; } = [];

    /// <summary>
    /// The scenario whose governing limit decides the answer (the worst verdict, then the smallest margin, the base case
    /// first on a tie); null when the base case decides.
    /// </summary>
    public ScenarioOutcome? GoverningScenario =>
        Scenarios
            .Where(s => s.Result.Governing?.Governing is not null)
            .Select(s => (Scenario: (ScenarioOutcome?)s, Stage: s.Result.Governing!))
            .Prepend((Scenario: null, Stage: Governing!))
            .Where(c => c.Stage?.Governing is not null)
            .OrderByDescending(c => (int)c.Stage.Verdict)
            .ThenBy(c => GoverningOrder(c.Stage.Governing!))
            .Select(c => c.Scenario)
            .FirstOrDefault();

    /// <summary>The gas model that decided: one model's name, or <c>mixed</c>.</summary>
    public string Method { get; }

    /// <summary>The asset the request named.</summary>
    public string? Asset => Input.Request.Asset;

    /// <summary>The site the request named.</summary>
    public string? Site => Input.Request.Site?.Id;

    /// <summary>The digest of the rule set in force (layers included).</summary>
    public string RuleDigest => Input.Rules.Digest;

    /// <summary>The rule layers in force.</summary>
    public LayerResolution Layers => Input.Layers;

    /// <summary>The stages' outcomes, in train order.</summary>
    public IReadOnlyList<StageOutcome> Stages { get; }

    /// <summary>The base case's stage whose governing limit decides it: the worst verdict, then the smallest margin; null when no stage has a governing limit.</summary>
    public StageOutcome? Governing { get; }

    /// <summary>The service classes in force on the first stage.</summary>
    public IReadOnlyList<string> ServiceClasses { get; }

    /// <summary>The cautions the answer carries (the standing ones first).</summary>
    public IReadOnlyList<string> Cautions { get; }

    /// <summary>The barometric pressure used for gauge pressures, when known.</summary>
    public Pressure? Barometer => Input.Barometer;

    /// <summary>The gas at the first stage's suction.</summary>
    public GasMixture Feed => Input.Feed;

    internal EvaluationInput Input { get; }

    /// <summary>The train's envelope (base case only), when a stage has a governing limit the pressures move.</summary>
    internal TrainEnvelopeResult? TrainEnvelope { get; set; }
}

/// <summary>One scenario's outcome: its name, what was changed, and its evaluation (same rule snapshot as the base case).</summary>
public sealed class ScenarioOutcome
{
    internal ScenarioOutcome(string name, IReadOnlyList<string> changes, EvaluationResult result)
    {
        Name = name;
        Changes = changes;
        Result = result;
    }

    /// <summary>The scenario's name as requested.</summary>
    public string Name { get; }

    /// <summary>What the scenario changed, in words (with the recycle's mixed suction temperature).</summary>
    public IReadOnlyList<string> Changes { get; }

    /// <summary>The scenario's evaluation: its stages, verdict and governing stage.</summary>
    public EvaluationResult Result { get; }
}

/// <summary>One stage's outcome, in SI: the states, the temperatures of the model that decided, the findings and the envelope.</summary>
public sealed class StageOutcome
{
    internal StageOutcome(BoundStage bound, TrainStageResult solved, StageFacts facts, Verdict verdict, IReadOnlyList<Finding> findings, RuleStageResult? ruled, SuctionPhase suctionPhase)
    {
        Bound = bound;
        Solved = solved;
        Facts = facts;
        Verdict = verdict;
        Findings = findings;
        Ruled = ruled;
        SuctionPhase = suctionPhase;
    }

    /// <summary>Zero-based stage index.</summary>
    public int Index => Bound.Index;

    /// <summary>The stage's verdict.</summary>
    public Verdict Verdict { get; }

    /// <summary>Suction pressure, absolute.</summary>
    public Pressure SuctionPressure => Solved.Stage.SuctionPressure;

    /// <summary>Discharge pressure, absolute.</summary>
    public Pressure DischargePressure => Solved.Stage.DischargePressure;

    /// <summary>Suction temperature.</summary>
    public Temperature SuctionTemperature => Solved.Stage.SuctionTemperature;

    /// <summary>Flange pressure ratio.</summary>
    public double PressureRatio => Solved.Stage.PressureRatio;

    /// <summary>Isentropic discharge temperature of the model that decided; null when the stage was not evaluated.</summary>
    public Temperature? Isentropic => NotEvaluated is null ? Facts.Isentropic : null;

    /// <summary>Estimated actual discharge temperature of the model (and calibration or oil balance) that decided; null when not evaluated.</summary>
    public Temperature? Estimated => NotEvaluated is null ? Facts.Estimated : null;

    /// <summary>The measured discharge temperature the request stated.</summary>
    public Temperature? Measured => Facts.MeasuredDischarge;

    /// <summary>
    /// The finding that decides the stage: a violation with no number where one fires (a prohibited combination, liquid
    /// at the suction, which is all a stage that was not evaluated can have), else the applicable violation limit with
    /// the smallest margin.
    /// </summary>
    public Finding? Governing => Ruled is { } ruled
        ? ruled.Governing
        : Findings.FirstOrDefault(f => f.Severity == Severity.Violation && f.Margin is null);

    /// <summary>The calibration refitted with the real-gas model that decided, where one did and the stage is calibrated.</summary>
    internal RealGasCalibration? RealGasCalibration { get; init; }

    /// <summary>Every finding of the stage, once.</summary>
    public IReadOnlyList<Finding> Findings { get; }

    /// <summary>The envelope before the governing limit (other stages held fixed).</summary>
    public EnvelopeEstimate? Envelope => Ruled?.Envelope;

    /// <summary>Rules that could not be checked, with what is missing.</summary>
    public IReadOnlyList<NotChecked> NotChecked => Ruled?.NotChecked ?? [];

    /// <summary>Why the stage was not evaluated (liquid or two-phase suction), or null.</summary>
    public string? NotEvaluated { get; internal init; }

    /// <summary>The gas model that decided the stage.</summary>
    public string Method => RealGas?.Method ?? GasModels.IdealGas;

    internal BoundStage Bound { get; }

    internal TrainStageResult Solved { get; }

    internal StageFacts Facts { get; }

    internal RuleStageResult? Ruled { get; }

    internal SuctionPhase SuctionPhase { get; }

    internal StagePhase? DischargePhase { get; init; }

    internal RealGasStage? RealGas { get; init; }

    internal FloodedStage? Flooded { get; init; }

    internal IReadOnlyList<LimitEnvelope>? ByLimit { get; init; }

    internal IReadOnlyList<CurvePoint>? Curve { get; init; }

    internal IReadOnlyDictionary<string, UncertaintyWidening> Widenings { get; init; } = new Dictionary<string, UncertaintyWidening>(StringComparer.Ordinal);
}

/// <summary>How far one violation-level temperature limit lets the stage's discharge pressure rise.</summary>
internal sealed record LimitEnvelope(Finding Finding, Pressure? MaxDischargePressure, EnvelopeBoundStatus Status);

/// <summary>One point of the discharge-temperature curve against discharge pressure.</summary>
internal sealed record CurvePoint(Pressure DischargePressure, Temperature Estimated, Temperature EstimatedUpperBound, Temperature Isentropic);
