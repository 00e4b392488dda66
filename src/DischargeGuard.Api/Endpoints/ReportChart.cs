using System.Globalization;
using System.Text;
using System.Text.Json;
using static DischargeGuard.Api.Endpoints.EvaluationReport;

namespace DischargeGuard.Api.Endpoints;

/// <summary>
/// The envelope chart of one stage as inline SVG for the report: the stored curve when the record has one (the page asks
/// for it), else the points the answer itself gives (the operating point and, per limit, the highest discharge pressure
/// before it). Limit lines are labelled in words and the labels are placed so none covers another, the curve or the
/// operating point. The viewBox is phone-sized (360 wide), so 12 px text stays at least 11 px on a 390 px screen.
/// </summary>
internal static class ReportChart
{
    private const double Width = 360;
    private const double Height = 300;
    private const double Left = 46;
    private const double Right = 10;
    private const double Top = 12;
    private const double Bottom = 42;
    private const double FontPx = 12;

    // Average advance of a character at 12 px in a sans-serif face, used to size a label's box (a slight overestimate).
    private const double CharPx = 6.9;

    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;

    private sealed record Limit(string RuleId, string Words, double Value, string Unit, bool Governing, double? MaxPressure);

    public static string Draw(JsonElement stage)
    {
        if (!stage.TryGetProperty("dischargeTemperature", out var dt))
        {
            return string.Empty;
        }

        var index = stage.GetProperty("index").GetInt32();
        var estimated = dt.GetProperty("estimated");
        var tUnit = Text(estimated, "unit") ?? string.Empty;
        var pOp = stage.GetProperty("discharge").GetProperty("pressureAbsolute");
        var pUnit = Text(pOp, "unit") ?? string.Empty;
        var op = (P: pOp.GetProperty("value").GetDouble(), T: estimated.GetProperty("value").GetDouble());
        var curve = Array(stage, "curve").Select(c => (
            P: c.GetProperty("dischargePressure").GetProperty("value").GetDouble(),
            T: c.GetProperty("estimated").GetProperty("value").GetDouble(),
            Upper: c.GetProperty("estimatedUpperBound").GetProperty("value").GetDouble(),
            Isentropic: c.GetProperty("isentropic").GetProperty("value").GetDouble())).ToList();
        var limits = LimitsOf(stage, tUnit, pUnit);
        var points = limits.Where(l => l.MaxPressure is not null).Select(l => (P: l.MaxPressure!.Value, T: l.Value)).ToList();

        var xs = curve.Select(c => c.P).Append(op.P).Concat(points.Select(p => p.P)).ToList();
        var ys = curve.SelectMany(c => new[] { c.T, c.Upper, c.Isentropic }).Append(op.T).Concat(limits.Select(l => l.Value)).ToList();
        if (curve.Count == 0 && stage.TryGetProperty("suction", out var suction) && Text(suction.GetProperty("pressureAbsolute"), "unit") == pUnit)
        {
            xs.Add(suction.GetProperty("pressureAbsolute").GetProperty("value").GetDouble());
        }

        double xMin = xs.Min(), xMax = xs.Max(), yMin = ys.Min(), yMax = ys.Max();
        var xPad = (xMax - xMin) * 0.04 is > 0 and var xp ? xp : 1;
        var yPad = (yMax - yMin) * 0.08 is > 0 and var yp ? yp : 1;
        xMin -= xPad;
        xMax += xPad;
        yMin -= yPad;
        yMax += yPad * 2.5; // room above the highest limit for its label
        var plotW = Width - Left - Right;
        var plotH = Height - Top - Bottom;
        double X(double v) => Left + ((v - xMin) / (xMax - xMin) * plotW);
        double Y(double v) => Top + ((1 - ((v - yMin) / (yMax - yMin))) * plotH);

        var s = new StringBuilder(8 * 1024);
        var id = "report-chart-" + index.ToString(Invariant);
        var governing = limits.FirstOrDefault(l => l.Governing);
        var height = Height;
        s.Append("<figure class=\"chart\">\n<svg class=\"chart-svg\" viewBox=\"0 0 ").Append(F(Width)).Append(' ').Append(ViewBoxMark)
            .Append("\" role=\"img\" aria-labelledby=\"").Append(id).Append("-title ").Append(id).Append("-desc\" data-stage=\"").Append(index.ToString(Invariant)).Append("\">\n")
            .Append("<title id=\"").Append(id).Append("-title\">Stage ").Append((index + 1).ToString(Invariant)).Append(": discharge temperature against discharge pressure</title>\n")
            .Append("<desc id=\"").Append(id).Append("-desc\">").Append(E(
                $"Operating point {Num(op.P)} {pUnit} absolute, estimated {Num(op.T)} {tUnit}. Limits: "
                + (limits.Count == 0 ? "none with a temperature" : string.Join("; ", limits.Select(l => $"{l.Words} ({l.RuleId}) {Num(l.Value)} {l.Unit}{(l.Governing ? ", governing" : string.Empty)}{(l.MaxPressure is { } mp ? $", reached at {Num(mp)} {pUnit}" : string.Empty)}")))
                + (curve.Count == 0 ? ". The record has no curve; the points are the answer's own." : "."))).Append("</desc>\n");

        // Grid and axes.
        foreach (var t in Ticks(yMin, yMax, 5))
        {
            s.Append("<line class=\"grid\" x1=\"").Append(F(Left)).Append("\" x2=\"").Append(F(Left + plotW)).Append("\" y1=\"").Append(F(Y(t))).Append("\" y2=\"").Append(F(Y(t))).Append("\"/>")
                .Append("<text x=\"").Append(F(Left - 5)).Append("\" y=\"").Append(F(Y(t) + 4)).Append("\" text-anchor=\"end\">").Append(Num(t)).Append("</text>\n");
        }

        foreach (var p in Ticks(xMin, xMax, 4))
        {
            s.Append("<line class=\"grid\" x1=\"").Append(F(X(p))).Append("\" x2=\"").Append(F(X(p))).Append("\" y1=\"").Append(F(Top)).Append("\" y2=\"").Append(F(Top + plotH)).Append("\"/>")
                .Append("<text x=\"").Append(F(X(p))).Append("\" y=\"").Append(F(Top + plotH + 16)).Append("\" text-anchor=\"middle\">").Append(Num(p)).Append("</text>\n");
        }

        s.Append("<line class=\"axis\" x1=\"").Append(F(Left)).Append("\" x2=\"").Append(F(Left)).Append("\" y1=\"").Append(F(Top)).Append("\" y2=\"").Append(F(Top + plotH)).Append("\"/>")
            .Append("<line class=\"axis\" x1=\"").Append(F(Left)).Append("\" x2=\"").Append(F(Left + plotW)).Append("\" y1=\"").Append(F(Top + plotH)).Append("\" y2=\"").Append(F(Top + plotH)).Append("\"/>\n")
            .Append("<text class=\"axis-label\" x=\"").Append(F(Left + (plotW / 2))).Append("\" y=\"").Append(F(Height - 6)).Append("\" text-anchor=\"middle\">Discharge pressure, ").Append(E(pUnit)).Append(" absolute; temperature, ").Append(E(tUnit)).Append("</text>\n");

        var obstacles = new List<(double X, double Y)>();
        if (curve.Count >= 2)
        {
            var upper = curve.Select(c => $"{F(X(c.P))},{F(Y(c.Upper))}");
            var lower = Enumerable.Reverse(curve).Select(c => $"{F(X(c.P))},{F(Y(c.T))}");
            s.Append("<polygon class=\"band\" points=\"").Append(string.Join(' ', upper.Concat(lower))).Append("\"/>\n");
            s.Append("<path class=\"curve-isentropic\" d=\"").Append(PathOf(curve.Select(c => (X(c.P), Y(c.Isentropic))))).Append("\"/>\n");
            s.Append("<path class=\"curve-estimated\" d=\"").Append(PathOf(curve.Select(c => (X(c.P), Y(c.T))))).Append("\"/>\n");
            foreach (var (a, b) in curve.Zip(curve.Skip(1)))
            {
                // Sample each segment of both curves, so a label is kept off every part of them.
                for (var k = 0; k <= 8; k++)
                {
                    var f = k / 8.0;
                    obstacles.Add((X(a.P + ((b.P - a.P) * f)), Y(a.T + ((b.T - a.T) * f))));
                    obstacles.Add((X(a.P + ((b.P - a.P) * f)), Y(a.Isentropic + ((b.Isentropic - a.Isentropic) * f))));
                    obstacles.Add((X(a.P + ((b.P - a.P) * f)), Y(a.Upper + ((b.Upper - a.Upper) * f))));
                }
            }
        }

        obstacles.Add((X(op.P), Y(op.T)));
        var placed = new List<(double X0, double Y0, double X1, double Y1)>
        {
            (X(op.P) - 10, Y(op.T) - 10, X(op.P) + 10, Y(op.T) + 10),
        };
        foreach (var p in points)
        {
            placed.Add((X(p.P) - 8, Y(p.T) - 8, X(p.P) + 8, Y(p.T) + 8));
        }

        foreach (var l in limits.OrderByDescending(l => l.Value))
        {
            var y = Y(l.Value);
            string label = $"{(l.Governing ? "▶ " : string.Empty)}{l.Words} {Num(l.Value)} {l.Unit}";
            var w = label.Length * CharPx;
            var box = Place(y, w, plotW, plotH, placed, obstacles);
            if (box is null)
            {
                // No free place beside the line: a row of its own under the axis (the chart grows), covering nothing.
                box = (3, height + 2, 3 + w + (7 * CharPx), height + 2 + FontPx + 3);
                height += FontPx + 5;
                label = "Limit: " + label;
            }

            placed.Add(box.Value);
            s.Append("<g class=\"limit\" data-rule=\"").Append(E(l.RuleId)).Append("\"><line class=\"limit-line").Append(l.Governing ? " governing-line" : string.Empty)
                .Append("\" x1=\"").Append(F(Left)).Append("\" x2=\"").Append(F(Left + plotW)).Append("\" y1=\"").Append(F(y)).Append("\" y2=\"").Append(F(y)).Append("\"/>")
                .Append("<text class=\"limit-label\" x=\"").Append(F(box.Value.X0)).Append("\" y=\"").Append(F(box.Value.Y1 - 3)).Append("\">").Append(E(label)).Append("</text></g>\n");
        }

        foreach (var (l, p) in limits.Where(l => l.MaxPressure is not null).Select(l => (l, P: l.MaxPressure!.Value)))
        {
            double ex = X(p), ey = Y(l.Value);
            s.Append("<polygon class=\"envelope-point\" data-rule=\"").Append(E(l.RuleId)).Append("\" points=\"").Append(F(ex)).Append(',').Append(F(ey - 7)).Append(' ')
                .Append(F(ex + 7)).Append(',').Append(F(ey)).Append(' ').Append(F(ex)).Append(',').Append(F(ey + 7)).Append(' ').Append(F(ex - 7)).Append(',').Append(F(ey)).Append("\"/>\n");
        }

        s.Append("<circle class=\"operating-point\" cx=\"").Append(F(X(op.P))).Append("\" cy=\"").Append(F(Y(op.T))).Append("\" r=\"6\"/>\n</svg>\n");
        s.Replace(ViewBoxMark, F(height));
        s.Append("<ul class=\"chart-legend\"><li>Thick line: estimated discharge temperature; shaded: up to its upper bound; dashed: isentropic (η = 1)</li>")
            .Append("<li>Red lines: the limits in words (solid and ▶: the governing one)</li><li>Dot: operating point; diamonds: where each limit is reached</li></ul>\n");
        s.Append("<figcaption>Stage ").Append((index + 1).ToString(Invariant)).Append(": drawn from the stored answer")
            .Append(governing is null ? string.Empty : $"; the governing limit is {E(governing.Words)} ({E(governing.RuleId)})")
            .Append(curve.Count == 0 ? "; the record has no curve (the page asks for one), so only the answer's own points are drawn" : string.Empty).Append(".</figcaption>\n</figure>\n");
        return s.ToString();
    }

    // A label sits just above (or below) its line at the left or the right of the plot, whichever first keeps it clear
    // of every label already placed, the curves and the points; failing that, the nearest free height.
    private static (double X0, double Y0, double X1, double Y1)? Place(double y, double w, double plotW, double plotH, List<(double X0, double Y0, double X1, double Y1)> placed, List<(double X, double Y)> obstacles)
    {
        var h = FontPx + 3;
        var candidates = new List<(double X0, double Y0)>();
        for (var step = 0; step < 12; step++)
        {
            var dy = step * h;
            foreach (var x0 in new[] { Left + 3, Left + plotW - w - 3 })
            {
                candidates.Add((x0, y - h - 1 - dy));
                candidates.Add((x0, y + 2 + dy));
            }
        }

        foreach (var (x0, y0) in candidates)
        {
            var box = (X0: Math.Max(Left + 1, x0), Y0: y0, X1: Math.Max(Left + 1, x0) + w, Y1: y0 + h);
            if (box.Y0 < Top || box.Y1 > Top + plotH)
            {
                continue;
            }

            if (placed.Any(p => p.X0 < box.X1 && box.X0 < p.X1 && p.Y0 < box.Y1 && box.Y0 < p.Y1))
            {
                continue;
            }

            if (obstacles.Any(o => o.X >= box.X0 - 2 && o.X <= box.X1 + 2 && o.Y >= box.Y0 - 2 && o.Y <= box.Y1 + 2))
            {
                continue;
            }

            return box;
        }

        return null;
    }

    // Stands in for the viewBox height until the labels below the axis, if any, are counted.
    private const string ViewBoxMark = "@@height@@";

    private static List<Limit> LimitsOf(JsonElement stage, string tUnit, string pUnit)
    {
        var governingRule = stage.TryGetProperty("governing", out var g) ? Text(g, "ruleId") : null;
        var titles = Array(stage, "findings").Where(f => Text(f, "ruleId") is not null)
            .GroupBy(f => Text(f, "ruleId")!, StringComparer.Ordinal).ToDictionary(x => x.Key, x => Text(x.First(), "title") ?? x.Key, StringComparer.Ordinal);
        var limits = new Dictionary<string, Limit>(StringComparer.Ordinal);
        void Add(string? ruleId, string? quantity, JsonElement limit, double? maxPressure)
        {
            if (ruleId is null || quantity is not ("estimated" or "isentropic" or "isentropicInternal") || limits.ContainsKey(ruleId)
                || limit.ValueKind != JsonValueKind.Object || Text(limit, "unit") != tUnit)
            {
                return;
            }

            var words = Short(titles.GetValueOrDefault(ruleId, ruleId)) + (quantity == "estimated" ? string.Empty : " (η = 1)");
            limits[ruleId] = new Limit(ruleId, words, limit.GetProperty("value").GetDouble(), tUnit, ruleId == governingRule, quantity == "estimated" ? maxPressure : null);
        }

        if (stage.TryGetProperty("envelope", out var envelope))
        {
            foreach (var e in Array(envelope, "byLimit"))
            {
                double? p = e.TryGetProperty("maxDischargePressure", out var mp) && Text(mp, "unit") == pUnit ? mp.GetProperty("value").GetDouble() : null;
                Add(Text(e, "ruleId"), Text(e, "quantity"), e.GetProperty("limit"), p);
            }
        }

        if (stage.TryGetProperty("governing", out var gov) && gov.TryGetProperty("limit", out var gl))
        {
            double? p = stage.TryGetProperty("envelope", out var env) && env.TryGetProperty("maxDischargePressure", out var mp) && Text(mp, "unit") == pUnit ? mp.GetProperty("value").GetDouble() : null;
            Add(Text(gov, "ruleId"), Text(gov, "quantity"), gl, p);
        }

        foreach (var f in Array(stage, "findings"))
        {
            if (f.TryGetProperty("limit", out var fl))
            {
                Add(Text(f, "ruleId"), Text(f, "quantity"), fl, null);
            }
        }

        return [.. limits.Values];
    }

    /// <summary>A rule title in a few words: up to its first comma ("Predicted discharge temperature, …" → "Predicted discharge temperature").</summary>
    internal static string Short(string title)
    {
        var cut = title.IndexOf(',', StringComparison.Ordinal);
        var words = cut > 0 ? title[..cut] : title;
        return words.Length > 38 ? words[..37].TrimEnd() + "…" : words;
    }

    private static string PathOf(IEnumerable<(double X, double Y)> points) =>
        string.Join(' ', points.Select((p, i) => (i == 0 ? "M" : "L") + F(p.X) + "," + F(p.Y)));

    private static IEnumerable<double> Ticks(double min, double max, int count)
    {
        var raw = (max - min) / count;
        var power = Math.Pow(10, Math.Floor(Math.Log10(raw)));
        var scaled = raw / power;
        var step = (scaled <= 1 ? 1 : scaled <= 2 ? 2 : scaled <= 5 ? 5 : 10) * power;
        for (var v = Math.Ceiling(min / step) * step; v <= max + (step * 1e-9); v += step)
        {
            yield return Math.Round(v, 10);
        }
    }

    private static string F(double v) => v.ToString("0.#", Invariant);

    private static string Num(double v) => Math.Abs(v) >= 100 ? v.ToString("0", Invariant) : Math.Abs(v) >= 10 ? v.ToString("0.#", Invariant) : v.ToString("0.##", Invariant);
}
