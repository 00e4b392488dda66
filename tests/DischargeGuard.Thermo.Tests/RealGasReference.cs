using System.Globalization;

namespace DischargeGuard.Thermo.Tests;

/// <summary>
/// The real-gas reference rows copied into Data/realgas-checks.csv (rows of the shared reference file whose species the
/// project supports; each row's <c>source</c> column names the repository, commit and cell or array it came from):
/// GERG-2008 and AGA8-DETAIL verification tables (usnistgov/AGA8 TESTDATA/Tables.xls), the ISO 20765 and AGA 8 Part 2
/// Appendix B GERG-2008 values in the same workbook, the reference Helmholtz equations for CH4, N2, CO2 and H2 as output
/// by NIST REFPROP (ascend4/ascend4 FPROPS test files), and the Peng-Robinson worked examples (CalebBell/thermo).
/// </summary>
internal static class RealGasReference
{
    public static IReadOnlyList<Dictionary<string, string>> Rows { get; } = Csv.Read("realgas-checks.csv");

    private static readonly Dictionary<string, RealGasMixture> Mixtures = [];

    /// <summary>The row group used in the tables: source model and gas.</summary>
    public static string Group(Dictionary<string, string> row)
    {
        var id = row["case_id"];
        var parts = id.Split('-');
        return parts[0] switch
        {
            "AGA8" => $"{parts[2]} table, {parts[3]}",
            "AGA8P2" => $"GERG-2008 App. B, {parts[3]}",
            "ISO20765" => $"GERG-2008 ISO 20765, {parts[2]}",
            _ => $"{parts[0]} {parts[1]}",
        };
    }

    public static double T(Dictionary<string, string> row) => row.D("T_K");

    public static double P(Dictionary<string, string> row) => row.D("p_kPa") * 1000;

    public static bool Has(Dictionary<string, string> row, string column) => row[column].Length > 0;

    /// <summary>The mixture of a row's composition (cached per composition string).</summary>
    public static RealGasMixture Mixture(Dictionary<string, string> row)
    {
        var key = row["composition"];
        lock (Mixtures)
        {
            if (!Mixtures.TryGetValue(key, out var gas))
            {
                var fractions = key.Split(';').Select(part =>
                {
                    var kv = part.Split('=');
                    return new KeyValuePair<string, double>(kv[0], double.Parse(kv[1], CultureInfo.InvariantCulture));
                }).ToList();
                var sum = fractions.Sum(f => f.Value);
                fractions = fractions.Select(f => new KeyValuePair<string, double>(f.Key, f.Value / sum)).ToList();
                gas = RealGasMixture.Create(GasCatalog.Default.CreateMixture(fractions, CompositionBasis.Mole));
                Mixtures[key] = gas;
            }

            return gas;
        }
    }

    /// <summary>Pure-fluid rows: the gas region (gas, vapour or supercritical by the file's region rule).</summary>
    public static bool IsPureGasRegion(Dictionary<string, string> row)
    {
        var region = row["region"];
        return region.StartsWith("gas", StringComparison.Ordinal) || region.StartsWith("vapour (by us", StringComparison.Ordinal) || region.StartsWith("supercritical", StringComparison.Ordinal);
    }
}
