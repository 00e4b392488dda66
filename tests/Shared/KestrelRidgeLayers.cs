namespace DischargeGuard.Testing;

/// <summary>
/// Rule layers of the invented site kestrel-ridge (Harrow Basin Gas Co.) and its air booster K-101A, for the tests that
/// switch a rules directory between the shipped set and an extended one.
/// </summary>
internal static class KestrelRidgeLayers
{
    /// <summary>
    /// The site layer: a rule of its own (stage ratio above 2.0 is a warning), which the passing air stage (ratio 2.3)
    /// always triggers, so its presence shows in every answer.
    /// </summary>
    public const string Site = """
        schemaVersion: 1
        layer:
          kind: site
          id: kestrel-ridge
          title: Kestrel Ridge compressor station (Harrow Basin Gas Co.)
        rules:
          - id: R-KR-RATIO
            title: Kestrel Ridge booster stage ratio
            quantity: pressureRatio
            limit: 2.0
            severity: warning
            basis: "invented site practice for the tests"
            message: "The stage ratio is above the site's booster practice; review the staging."
        """;

    /// <summary>The asset layer of K-101A: the shipped 150 °C limit of R-API618-GEN tightened to 140 °C.</summary>
    public const string Asset = """
        schemaVersion: 1
        layer:
          kind: asset
          id: K-101A
          site: kestrel-ridge
          title: K-101A air booster
        overrides:
          - rule: R-API618-GEN
            limit: 140 °C
        """;
}
