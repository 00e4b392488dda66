using System.Globalization;

namespace DischargeGuard.Thermo.Tests;

/// <summary>Reads the CSV check files copied into Data/ (quoted fields with commas supported).</summary>
internal static class Csv
{
    public static IReadOnlyList<Dictionary<string, string>> Read(string fileName)
    {
        var path = Path.Combine(AppContext.BaseDirectory, "Data", fileName);
        var lines = File.ReadAllLines(path);
        var header = Split(lines[0]);
        var rows = new List<Dictionary<string, string>>();
        foreach (var line in lines.Skip(1).Where(l => l.Length > 0))
        {
            var cells = Split(line);
            var row = new Dictionary<string, string>(StringComparer.Ordinal);
            for (var i = 0; i < header.Count; i++)
            {
                row[header[i]] = i < cells.Count ? cells[i] : string.Empty;
            }

            rows.Add(row);
        }

        return rows;
    }

    public static double D(this Dictionary<string, string> row, string column) =>
        double.Parse(row[column], NumberStyles.Float, CultureInfo.InvariantCulture);

    private static List<string> Split(string line)
    {
        var cells = new List<string>();
        var sb = new System.Text.StringBuilder();
        var quoted = false;
        for (var i = 0; i < line.Length; i++)
        {
            var c = line[i];
            if (quoted)
            {
                if (c == '"' && i + 1 < line.Length && line[i + 1] == '"')
                {
                    sb.Append('"');
                    i++;
                }
                else if (c == '"')
                {
                    quoted = false;
                }
                else
                {
                    sb.Append(c);
                }
            }
            else if (c == '"')
            {
                quoted = true;
            }
            else if (c == ',')
            {
                cells.Add(sb.ToString());
                sb.Clear();
            }
            else
            {
                sb.Append(c);
            }
        }

        cells.Add(sb.ToString());
        return cells;
    }
}

/// <summary>
/// NASA Glenn 9-coefficient polynomials (McBride, Zehe &amp; Gordon, NASA TP-2002-211556), evaluated independently of
/// the project's 7-coefficient code, for cross-checks.
/// </summary>
internal sealed class Nasa9
{
    private readonly List<(double Lo, double Hi, double[] A, double B1, double B2)> _ranges = [];

    public Nasa9(Dictionary<string, string> row)
    {
        var n = int.Parse(row["n_ranges"], CultureInfo.InvariantCulture);
        for (var r = 1; r <= n; r++)
        {
            var a = Enumerable.Range(1, 7).Select(i => row.D($"r{r}_a{i}")).ToArray();
            _ranges.Add((row.D($"r{r}_t_low_K"), row.D($"r{r}_t_high_K"), a, row.D($"r{r}_b1"), row.D($"r{r}_b2")));
        }
    }

    public Nasa9(double lo, double mid, double hi, double[] low, double b1Low, double b2Low, double[] high, double b1High, double b2High)
    {
        _ranges.Add((lo, mid, low, b1Low, b2Low));
        _ranges.Add((mid, hi, high, b1High, b2High));
    }

    public double TLow => _ranges[0].Lo;

    public static IReadOnlyDictionary<string, Nasa9> All { get; } =
        Csv.Read("nasa9.csv").Where(r => r["species"] != "Air").ToDictionary(r => r["species"], r => new Nasa9(r));

    public double CpOverR(double t)
    {
        var (_, _, a, _, _) = Range(t);
        return (a[0] / (t * t)) + (a[1] / t) + a[2] + (a[3] * t) + (a[4] * t * t) + (a[5] * t * t * t) + (a[6] * t * t * t * t);
    }

    public double HOverR(double t)
    {
        var (_, _, a, b1, _) = Range(t);
        var hOverRt = (-a[0] / (t * t)) + (a[1] * Math.Log(t) / t) + a[2] + (a[3] * t / 2) + (a[4] * t * t / 3) + (a[5] * t * t * t / 4) + (a[6] * t * t * t * t / 5) + (b1 / t);
        return hOverRt * t;
    }

    public double SOverR(double t)
    {
        var (_, _, a, _, b2) = Range(t);
        return (-a[0] / (2 * t * t)) - (a[1] / t) + (a[2] * Math.Log(t)) + (a[3] * t) + (a[4] * t * t / 2) + (a[5] * t * t * t / 3) + (a[6] * t * t * t * t / 4) + b2;
    }

    private (double Lo, double Hi, double[] A, double B1, double B2) Range(double t) =>
        _ranges.First(r => t <= r.Hi);
}
