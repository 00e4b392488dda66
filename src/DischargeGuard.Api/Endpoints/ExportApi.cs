using System.Globalization;
using System.Text;
using System.Text.Json;
using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Audit;
using Microsoft.AspNetCore.Mvc;

namespace DischargeGuard.Api.Endpoints;

/// <summary>
/// <c>GET /v1/evaluations/export</c>: the recorded evaluations as CSV, one row per stage, streamed from the store as it
/// is read (never held whole). Values are metric whatever units the caller asked for; each header names its unit.
/// </summary>
internal static class ExportApi
{
    /// <summary>The columns, in order. Units are in the names: degC, kPa_abs (absolute), K (a difference), ratio.</summary>
    internal static readonly string[] Header =
    [
        "evaluation_id", "evaluated_at_utc", "asset", "site", "caller", "verdict", "rule_digest", "engine_version", "replay_of",
        "stage_index", "stage_verdict", "suction_pressure_kPa_abs", "suction_temperature_degC", "discharge_pressure_kPa_abs",
        "isentropic_discharge_temperature_degC", "estimated_discharge_temperature_degC", "estimated_upper_bound_degC",
        "measured_discharge_temperature_degC", "governing_rule", "governing_quantity", "governing_limit_degC", "governing_margin_K",
        "governing_limit_ratio", "governing_margin_ratio",
    ];

    // Rows are written to the response in pieces of about this many characters.
    private const int FlushCharacters = 32 * 1024;

    public static RouteHandlerBuilder MapExport(this RouteGroupBuilder group) =>
        group.MapGet("/export", ExportAsync)
            .WithName("ExportEvaluations")
            .WithSummary("Recorded evaluations as CSV, one row per stage, newest first; the same filters as the list. Streamed.")
            .WithDescription("Metric values; each column name carries its unit (degC, kPa_abs, K for differences, ratio). "
                + "Text cells that a spreadsheet would read as a formula (starting with = + - @, tab or carriage return) are prefixed with an apostrophe.")
            .Produces<string>(StatusCodes.Status200OK, "text/csv")
            .ProducesValidationProblem()
            .RequireRoles(Policies.Plan);

    internal static async Task<IResult> ExportAsync(
        [FromQuery] string? asset,
        [FromQuery] string? site,
        [FromQuery] string? verdict,
        [FromQuery] DateTimeOffset? from,
        [FromQuery] DateTimeOffset? to,
        HttpContext http,
        IAuditStore audit,
        ApiKeyRegistry keys,
        TimeProvider time)
    {
        var errors = EvaluationsApi.FilterErrors(verdict, from, to);
        if (errors.Count > 0)
        {
            return Problems.Validation(errors);
        }

        // A planner key bound to sites exports only their records.
        var query = keys.ScopeOf(http.User).Narrow(new AuditQuery { Asset = asset, SiteId = site, Verdict = verdict, From = from, To = to });
        var cancellationToken = http.RequestAborted;

        // Open the enumeration first: a store that cannot be read answers 503 before any row is sent.
        var records = audit.QueryAsync(query, cancellationToken).GetAsyncEnumerator(cancellationToken);
        await using (records.ConfigureAwait(false))
        {
            bool any;
            try
            {
                any = await records.MoveNextAsync().ConfigureAwait(false);
            }
            catch (AuditStoreUnavailableException)
            {
                return Problems.AsResult(Problems.AuditStoreUnavailable());
            }

            http.Response.StatusCode = StatusCodes.Status200OK;
            http.Response.ContentType = "text/csv; charset=utf-8";
            http.Response.Headers.ContentDisposition = string.Create(CultureInfo.InvariantCulture, $"attachment; filename=\"dischargeguard-evaluations-{time.GetUtcNow():yyyyMMdd'T'HHmmss'Z'}.csv\"");
            var writer = new StreamWriter(http.Response.Body, new UTF8Encoding(encoderShouldEmitUTF8Identifier: false), 16 * 1024);
            await using (writer.ConfigureAwait(false))
            {
                var row = new StringBuilder(FlushCharacters + 2048);
                AppendRow(row, Header, header: true);
                while (any)
                {
                    AppendRecord(row, records.Current);
                    if (row.Length >= FlushCharacters)
                    {
                        await writer.WriteAsync(row, cancellationToken).ConfigureAwait(false);
                        await writer.FlushAsync(cancellationToken).ConfigureAwait(false);
                        row.Clear();
                    }

                    // A store failure after the first row cannot change the status any more: the answer ends short.
                    any = await records.MoveNextAsync().ConfigureAwait(false);
                }

                await writer.WriteAsync(row, cancellationToken).ConfigureAwait(false);
                await writer.FlushAsync(cancellationToken).ConfigureAwait(false);
            }
        }

        return Results.Empty;
    }

    internal static void AppendRecord(StringBuilder sb, AuditRecord record)
    {
        var common = new[]
        {
            record.Id.ToString("D", CultureInfo.InvariantCulture),
            record.EvaluatedAt.UtcDateTime.ToString("yyyy'-'MM'-'dd'T'HH':'mm':'ss.fffffff'Z'", CultureInfo.InvariantCulture),
            record.Asset,
            record.SiteId ?? string.Empty,
            record.Caller,
            record.Verdict,
            record.RuleDigest,
            record.EngineVersion,
            record.ReplayOf?.ToString("D", CultureInfo.InvariantCulture) ?? string.Empty,
        };

        var stages = StageRows(record.Response);
        if (stages.Count == 0)
        {
            AppendRow(sb, [.. common, .. new string[Header.Length - common.Length]], header: false);
            return;
        }

        foreach (var stage in stages)
        {
            AppendRow(sb, [.. common, .. stage], header: false);
        }
    }

    // The stage columns from a stored response, converted to the export's metric units.
    private static List<string[]> StageRows(byte[] response)
    {
        var rows = new List<string[]>();
        try
        {
            using var doc = JsonDocument.Parse(response);
            if (!doc.RootElement.TryGetProperty("stages", out var stages) || stages.ValueKind != JsonValueKind.Array)
            {
                return rows;
            }

            foreach (var s in stages.EnumerateArray())
            {
                var governing = s.TryGetProperty("governing", out var g) ? g : default;
                var quantity = Text(governing, "quantity");
                var isRatio = quantity == "pressureRatio";
                rows.Add(
                [
                    s.TryGetProperty("index", out var ix) ? ix.GetRawText() : string.Empty,
                    Text(s, "verdict"),
                    Metric(Path(s, "suction", "pressureAbsolute")),
                    Metric(Path(s, "suction", "temperature")),
                    Metric(Path(s, "discharge", "pressureAbsolute")),
                    Metric(Path(s, "dischargeTemperature", "isentropic")),
                    Metric(Path(s, "dischargeTemperature", "estimated")),
                    Metric(Path(s, "dischargeTemperature", "estimatedUpperBound")),
                    Metric(Path(s, "measured", "dischargeTemperature")),
                    Text(governing, "ruleId"),
                    quantity,
                    isRatio ? string.Empty : Metric(Path(governing, "limit")),
                    isRatio ? string.Empty : Metric(Path(governing, "margin")),
                    isRatio ? Metric(Path(governing, "limit")) : string.Empty,
                    isRatio ? Metric(Path(governing, "margin")) : string.Empty,
                ]);
            }
        }
        catch (JsonException)
        {
            // Not a document this engine wrote: the record still gets its row, without stage values.
        }

        return rows;
    }

    private static JsonElement Path(JsonElement e, params string[] names)
    {
        foreach (var name in names)
        {
            if (e.ValueKind != JsonValueKind.Object || !e.TryGetProperty(name, out e))
            {
                return default;
            }
        }

        return e;
    }

    private static string Text(JsonElement e, string name) =>
        e.ValueKind == JsonValueKind.Object && e.TryGetProperty(name, out var v) && v.ValueKind == JsonValueKind.String ? v.GetString()! : string.Empty;

    // {"value", "unit"} in the answer's units → the export's: °C, kPa (absolute), K, or a plain ratio.
    private static string Metric(JsonElement q)
    {
        if (q.ValueKind != JsonValueKind.Object || !q.TryGetProperty("value", out var v) || !v.TryGetDouble(out var value))
        {
            return string.Empty;
        }

        var metric = Text(q, "unit") switch
        {
            "°F" => (value - 32) / 1.8,
            "Δ°F" => value / 1.8,
            "psia" => value * 6.894757293168361,
            _ => value, // °C, K, kPa, and "1" for ratios
        };
        return Math.Round(metric, 3).ToString("0.###", CultureInfo.InvariantCulture);
    }

    internal static void AppendRow(StringBuilder sb, IReadOnlyList<string?> cells, bool header)
    {
        for (var i = 0; i < cells.Count; i++)
        {
            if (i > 0)
            {
                sb.Append(',');
            }

            var cell = cells[i] ?? string.Empty;
            AppendCell(sb, header || IsNumber(cell) ? cell : Neutralise(cell));
        }

        sb.Append("\r\n");
    }

    /// <summary>
    /// A text cell a spreadsheet would run as a formula (= + - @, or a leading tab or carriage return) gets a leading
    /// apostrophe, so it is shown as text. Numbers this export wrote itself are left alone.
    /// </summary>
    internal static string Neutralise(string cell) =>
        cell.Length > 0 && cell[0] is '=' or '+' or '-' or '@' or '\t' or '\r' ? "'" + cell : cell;

    private static bool IsNumber(string cell) =>
        cell.Length > 0 && double.TryParse(cell, NumberStyles.AllowLeadingSign | NumberStyles.AllowDecimalPoint, CultureInfo.InvariantCulture, out _);

    // RFC 4180: quote a cell holding a comma, a quote or a line break, doubling its quotes.
    private static void AppendCell(StringBuilder sb, string cell)
    {
        if (cell.AsSpan().IndexOfAny(",\"\r\n") < 0)
        {
            sb.Append(cell);
            return;
        }

        sb.Append('"').Append(cell.Replace("\"", "\"\"", StringComparison.Ordinal)).Append('"');
    }
}
