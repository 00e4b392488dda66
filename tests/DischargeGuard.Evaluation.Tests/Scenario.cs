using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Evaluation.Pipeline;

namespace DischargeGuard.Evaluation.Tests;

/// <summary>
/// The invented test scenario: site "kestrel-ridge" run by Harrow Basin Gas Co., machines K-101A (air) and K-102B
/// (process gas). None of it describes a real site or machine.
/// </summary>
internal static class Scenario
{
    public const string Site = "kestrel-ridge";

    public static readonly DateTimeOffset FixedTime = new(2025, 3, 14, 9, 30, 0, TimeSpan.Zero);

    public static QuantityInput Q(string text) => new(text);

    /// <summary>One air stage, 100 kPa(a) and 35 °C to 300 kPa(a), ηs 0.80, lubricated reciprocating with VDL oil.</summary>
    public static StageInput AirStage(string suction = "100 kPa(a)", string temperature = "35 °C", string discharge = "300 kPa(a)") => new()
    {
        Suction = new SuctionInput { Pressure = Q(suction), Temperature = Q(temperature) },
        Discharge = new DischargeInput { Pressure = Q(discharge) },
        Efficiency = new EfficiencyInput { Isentropic = 0.80 },
        Equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "mineral-vdl" },
    };

    public static EvaluationRequest AirRequest(params StageInput[] stages) => new()
    {
        Asset = "K-101A",
        Site = new SiteInput { Id = Site, BarometricPressure = Q("98.6 kPa") },
        Gas = new GasInput { Preset = "dry-air" },
        Stages = stages.Length == 0 ? [AirStage()] : stages,
    };

    /// <summary>
    /// One process-gas stage of K-102B (invented): the composition by mole, the method, suction and discharge, ηs 0.80,
    /// lubricated recip with PAO oil.
    /// </summary>
    public static EvaluationRequest ProcessGas(IReadOnlyDictionary<string, double> composition, string? method, string suction, string temperature, string discharge) => new()
    {
        Asset = "K-102B",
        Site = new SiteInput { Id = Site, BarometricPressure = Q("98.6 kPa") },
        Gas = new GasInput { Composition = composition },
        Method = method,
        Stages =
        [
            new StageInput
            {
                Suction = new SuctionInput { Pressure = Q(suction), Temperature = Q(temperature) },
                Discharge = new DischargeInput { Pressure = Q(discharge) },
                Efficiency = new EfficiencyInput { Isentropic = 0.80 },
                Equipment = new EquipmentInput { CompressorType = "recip-lubricated", Lubricant = "pao-dab" },
            },
        ],
    };

    /// <summary>The full answer: most tests here read what only it carries (each finding's basis, the per-limit envelope, the models side by side).</summary>
    public static EvaluationContext Context(bool curve = false, AnswerDetail detail = AnswerDetail.Full) => new(Guid.CreateVersion7(Scenario.FixedTime), FixedTime, curve) { Detail = detail };

    public static EvaluationOutcome Run(EvaluationRequest request, bool curve = false) =>
        new EvaluationPipeline().Evaluate(request, TestRules.Snapshot, Context(curve));

    /// <summary>Runs a request expected to succeed; fails with the problem's errors otherwise.</summary>
    public static EvaluationResponse Evaluate(EvaluationRequest request, bool curve = false)
    {
        var outcome = Run(request, curve);
        if (outcome.Problem is { } p)
        {
            Assert.Fail($"Expected a response, got {p.Kind} {p.Code}: " + string.Join("; ", p.Errors.Select(e => e.Key + " = " + string.Join(" | ", e.Value))));
        }

        return outcome.Response!;
    }

    /// <summary>Runs a request expected to be refused.</summary>
    public static RequestProblem Refuse(EvaluationRequest request)
    {
        var outcome = Run(request);
        Assert.True(outcome.Problem is not null, "Expected a refused request, got verdict " + outcome.Response?.Verdict);
        return outcome.Problem!;
    }
}
