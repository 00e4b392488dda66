using System.Globalization;
using System.Text;
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
        "stage_index", "stage_verdict", "suction_pressure_kPa_abs", "discharge_pressure_kPa_abs",
        "isentropic_discharge_temperature_degC", "estimated_discharge_temperature_degC", "measured_discharge_temperature_degC",
        "governing_rule", "governing_margin_K",
    ];

    // Rows are written to the response in pieces of about this many characters.
    private const int FlushCharacters = 32 * 1024;

    public static RouteHandlerBuilder MapExport(this RouteGroupBuilder group) =>
        group.MapGet("/export", ExportAsync)
            .WithName("ExportEvaluations")
            .WithSummary("Recorded evaluations as CSV, one row per stage, newest first; the same filters as the list. Streamed.")
            .WithDescription("Metric values from each record's per-stage SI summary; each column name carries its unit (degC, kPa_abs, K for differences). "
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

        var stages = StageRows(record);
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

    // The stage columns from the record's per-stage SI summary (never from the answer's JSON, whatever units it was
    // written in); a record stored before summaries existed gets its row without stage values.
    private static List<string?[]> StageRows(AuditRecord record) =>
        record.Stages.Select(s => new string?[]
        {
            s.Index.ToString(CultureInfo.InvariantCulture),
            s.Verdict,
            Number(s.SuctionPressurePascal / 1000),
            Number(s.DischargePressurePascal / 1000),
            Number(s.IsentropicKelvin - 273.15),
            Number(s.EstimatedKelvin - 273.15),
            Number(s.MeasuredKelvin - 273.15),
            s.GoverningRuleId,
            Number(s.MarginKelvin),
        }).ToList();

    private static string Number(double? value) =>
        value is { } v ? Math.Round(v, 3).ToString("0.###", CultureInfo.InvariantCulture) : string.Empty;

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
