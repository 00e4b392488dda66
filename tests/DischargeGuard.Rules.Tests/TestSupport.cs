using System.Globalization;
using DischargeGuard.Rules;
using DischargeGuard.Rules.Evaluation;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Model;
using DischargeGuard.Rules.Provider;
using UnitsNet;

namespace DischargeGuard.Rules.Tests;

internal static class Repo
{
    public static string Root => RepositoryRoot.Path;

    public static string RulesDirectory => Path.Combine(Root, "rules");

    private static readonly Lazy<RuleSetSnapshot> SnapshotLazy = new(() => FileRuleSetProvider.LoadDirectory(RulesDirectory, DateTimeOffset.UnixEpoch));

    /// <summary>The shipped rules/ directory, loaded once.</summary>
    public static RuleSetSnapshot Shipped => SnapshotLazy.Value;

    public static EffectiveRuleSet Defaults => Shipped.DefaultSet;
}

internal static class AssertEx
{
    /// <summary>Fails with expected, actual and difference when |expected − actual| > tolerance.</summary>
    public static void Close(double expected, double actual, double tolerance, string what = "value")
    {
        var diff = actual - expected;
        if (!(Math.Abs(diff) <= tolerance))
        {
            Assert.Fail(string.Create(CultureInfo.InvariantCulture, $"{what}: expected {expected:R}, actual {actual:R}, difference {diff:R} exceeds tolerance {tolerance:R}."));
        }
    }
}

internal static class Facts
{
    public static Temperature C(double celsius) => Temperature.FromDegreesCelsius(celsius);

    public static Temperature K(double kelvin) => Temperature.FromKelvins(kelvin);

    /// <summary>
    /// A quiet lubricated reciprocating stage far inside every default limit: suction 30 °C, ratio 3,
    /// isentropic 100 °C, estimated 110 °C, upper bound 115 °C. Each test moves one value to a boundary.
    /// </summary>
    public static StageFacts Quiet(string type = "recip-lubricated") => new()
    {
        StageIndex = 0,
        Position = StagePosition.Only,
        CompressorTypeId = type,
        SuctionTemperature = C(30),
        SuctionPressure = Pressure.FromBars(10),
        DischargePressure = Pressure.FromBars(30),
        Isentropic = C(100),
        Estimated = C(110),
        EstimatedUpperBound = C(115),
        SuctionPhase = StagePhase.Gas,
        DischargePhase = StagePhase.Gas,
    };

    public static Finding Find(this StageResult result, string ruleId) =>
        result.Findings.SingleOrDefault(f => f.RuleId == ruleId)
        ?? throw new Xunit.Sdk.XunitException($"No finding for {ruleId}. Findings: {string.Join(", ", result.Findings.Select(f => f.RuleId))}; not checked: {string.Join(", ", result.NotChecked.Select(n => n.RuleId))}.");

    public static RuleLayer Layer(string file, string yaml) => RuleFileParser.Parse(file, yaml);

    public static RuleLayer DefaultLayer => Repo.Shipped.Default;
}
