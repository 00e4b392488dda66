using System.Buffers;
using System.Text;
using System.Text.Json;

namespace DischargeGuard.Audit;

/// <summary>
/// The stored form of a record's stage summaries: one compact JSON array in the <c>stages</c> column (null when there are
/// none), so both databases keep it in the row the hash chain covers and their JSON functions can still query it.
/// Numbers are written in the shortest form that reads back to the same double.
/// </summary>
internal static class AuditStageCodec
{
    private static readonly JsonWriterOptions WriterOptions = new() { Indented = false, SkipValidation = false };

    /// <summary>The column text, or null for no stages.</summary>
    public static string? Encode(IReadOnlyList<AuditStageSummary> stages)
    {
        if (stages.Count == 0)
        {
            return null;
        }

        var buffer = new ArrayBufferWriter<byte>(256 * stages.Count);
        using (var w = new Utf8JsonWriter(buffer, WriterOptions))
        {
            w.WriteStartArray();
            foreach (var s in stages)
            {
                w.WriteStartObject();
                w.WriteNumber("index", s.Index);
                w.WriteString("verdict", s.Verdict);
                if (s.GoverningRuleId is not null)
                {
                    w.WriteString("governingRuleId", s.GoverningRuleId);
                }

                Number(w, "marginKelvin", s.MarginKelvin);
                Number(w, "isentropicKelvin", s.IsentropicKelvin);
                Number(w, "estimatedKelvin", s.EstimatedKelvin);
                w.WriteNumber("suctionPressurePascal", s.SuctionPressurePascal);
                w.WriteNumber("dischargePressurePascal", s.DischargePressurePascal);
                Number(w, "measuredKelvin", s.MeasuredKelvin);
                w.WriteEndObject();
            }

            w.WriteEndArray();
        }

        return Encoding.UTF8.GetString(buffer.WrittenSpan);

        static void Number(Utf8JsonWriter w, string name, double? value)
        {
            if (value is { } v)
            {
                w.WriteNumber(name, v);
            }
        }
    }

    /// <summary>Reads the column text back; null or empty is no stages.</summary>
    /// <exception cref="AuditStoreUnavailableException">The text is not a stage array this store wrote (a damaged row).</exception>
    public static IReadOnlyList<AuditStageSummary> Decode(string? text, Guid recordId)
    {
        if (string.IsNullOrEmpty(text))
        {
            return [];
        }

        try
        {
            using var document = JsonDocument.Parse(text);
            var stages = new List<AuditStageSummary>(document.RootElement.GetArrayLength());
            foreach (var e in document.RootElement.EnumerateArray())
            {
                int? index = null;
                string? verdict = null, rule = null;
                double? margin = null, isentropic = null, estimated = null, suction = null, discharge = null, measured = null;
                foreach (var p in e.EnumerateObject())
                {
                    switch (p.Name)
                    {
                        case "index": index = p.Value.GetInt32(); break;
                        case "verdict": verdict = p.Value.GetString(); break;
                        case "governingRuleId": rule = p.Value.GetString(); break;
                        case "marginKelvin": margin = p.Value.GetDouble(); break;
                        case "isentropicKelvin": isentropic = p.Value.GetDouble(); break;
                        case "estimatedKelvin": estimated = p.Value.GetDouble(); break;
                        case "suctionPressurePascal": suction = p.Value.GetDouble(); break;
                        case "dischargePressurePascal": discharge = p.Value.GetDouble(); break;
                        case "measuredKelvin": measured = p.Value.GetDouble(); break;
                        default: throw new FormatException($"unknown member '{p.Name}'");
                    }
                }

                if (index is null || verdict is null || suction is null || discharge is null)
                {
                    throw new FormatException("a stage lacks index, verdict or a pressure");
                }

                stages.Add(new AuditStageSummary(index.Value, verdict, rule, margin, isentropic, estimated, suction.Value, discharge.Value, measured));
            }

            return stages;
        }
        catch (Exception e) when (e is JsonException or FormatException or InvalidOperationException)
        {
            throw new AuditStoreUnavailableException($"The stored stage summaries of record {recordId} cannot be read ({e.Message}).", e);
        }
    }

    /// <summary>Checks what <see cref="AuditStore"/> accepts on append.</summary>
    /// <exception cref="ArgumentException">A stage is out of range or out of order (named by its position).</exception>
    public static void Validate(AuditRecord record)
    {
        var stages = record.Stages;
        if (stages is null)
        {
            throw new ArgumentException("Stages must not be null (leave it empty when there are none).", nameof(record));
        }

        if (stages.Count > AuditStageSummary.MaxStages)
        {
            throw new ArgumentException($"A record stores at most {AuditStageSummary.MaxStages} stage summaries.", nameof(record));
        }

        var previous = -1;
        for (var i = 0; i < stages.Count; i++)
        {
            var s = stages[i] ?? throw new ArgumentException($"Stages[{i}] is null.", nameof(record));
            var at = $"Stages[{i}]";
            if (s.Index <= previous)
            {
                throw new ArgumentException($"{at}: stage indexes must be 0 or more and strictly increasing.", nameof(record));
            }

            previous = s.Index;
            if (!AuditVerdict.IsKnown(s.Verdict))
            {
                throw new ArgumentException($"{at}: the verdict must be pass, review or fail.", nameof(record));
            }

            if (s.GoverningRuleId is not null && (string.IsNullOrWhiteSpace(s.GoverningRuleId) || s.GoverningRuleId.Length > 256))
            {
                throw new ArgumentException($"{at}: the governing rule id must be non-blank text of at most 256 characters.", nameof(record));
            }

            // Absolute temperatures and pressures are positive; the margin is a difference and only needs to be finite.
            Positive(s.SuctionPressurePascal, "SuctionPressurePascal");
            Positive(s.DischargePressurePascal, "DischargePressurePascal");
            Positive(s.IsentropicKelvin, "IsentropicKelvin");
            Positive(s.EstimatedKelvin, "EstimatedKelvin");
            Positive(s.MeasuredKelvin, "MeasuredKelvin");
            if (s.MarginKelvin is { } m && !double.IsFinite(m))
            {
                throw new ArgumentException($"{at}: MarginKelvin must be finite.", nameof(record));
            }

            void Positive(double? value, string name)
            {
                if (value is { } v && !(double.IsFinite(v) && v > 0))
                {
                    throw new ArgumentException($"{at}: {name} must be a finite value above zero (absolute).", nameof(record));
                }
            }
        }
    }
}
