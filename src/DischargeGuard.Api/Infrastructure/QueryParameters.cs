using System.Globalization;
using System.Reflection;
using DischargeGuard.Audit;
using Microsoft.AspNetCore.Mvc;

namespace DischargeGuard.Api.Infrastructure;

/// <summary>
/// What each query parameter of the service accepts, in one place: its form from its type (ISO 8601 for times, integers,
/// <c>true|false</c>, UUIDs), the range of a bounded integer and the words of a closed vocabulary, matched by the
/// parameter's name like the body's vocabularies are matched by JSON name. The middleware checks every query parameter
/// of the matched endpoint against it before the endpoint runs, so a bad parameter is answered with its name and its
/// accepted form (all of them at once) instead of the framework's binding failure; the OpenAPI filter publishes the same
/// words and ranges.
/// </summary>
internal static class QueryParameters
{
    /// <summary>The closed vocabularies of query parameters, by parameter name.</summary>
    public static IReadOnlyDictionary<string, Vocabulary> Vocabularies { get; } = new Dictionary<string, Vocabulary>(StringComparer.Ordinal)
    {
        ["detail"] = OpenApiVocabularies.AnswerDetail,
        ["verdict"] = OpenApiVocabularies.Verdict,
    };

    /// <summary>The inclusive range of each bounded integer query parameter, by parameter name.</summary>
    public static IReadOnlyDictionary<string, (int Minimum, int Maximum)> Ranges { get; } = new Dictionary<string, (int, int)>(StringComparer.Ordinal)
    {
        ["limit"] = (1, AuditQuery.MaxPageSize),
    };

    /// <summary>The message for a word outside <paramref name="name"/>'s vocabulary.</summary>
    public static string NotInVocabulary(string name, string value) =>
        $"'{value}' is not accepted here. Accepted values: {string.Join(", ", Vocabularies[name].Values)}.";

    /// <summary>The message for an integer outside <paramref name="name"/>'s range.</summary>
    public static string OutOfRange(string name, string value)
    {
        var (min, max) = Ranges[name];
        return string.Create(CultureInfo.InvariantCulture, $"'{value}' is outside the range: give an integer from {min} to {max}.");
    }

    /// <summary>
    /// Every query parameter of the endpoint matched for <paramref name="http"/> that is present and not of its accepted
    /// form, keyed by its name; empty when all are acceptable (or the endpoint has none).
    /// </summary>
    public static Dictionary<string, string[]> ErrorsOf(HttpContext http)
    {
        var errors = new Dictionary<string, string[]>(StringComparer.Ordinal);
        if (http.GetEndpoint()?.Metadata.GetMetadata<MethodInfo>() is not { } handler)
        {
            return errors;
        }

        foreach (var (name, type) in QueryParametersOf(handler))
        {
            if (!http.Request.Query.TryGetValue(name, out var values))
            {
                continue;
            }

            // The framework reads a repeated parameter as its values joined by commas; an empty one as absent.
            var raw = values.ToString();
            if (raw.Length > 0 && Check(name, type, raw) is { } message)
            {
                errors[name] = [message];
            }
        }

        return errors;
    }

    // A handler's query parameters (name, type without Nullable), read by reflection once per handler.
    private static readonly System.Collections.Concurrent.ConcurrentDictionary<MethodInfo, (string Name, Type Type)[]> Handlers = new();

    private static (string Name, Type Type)[] QueryParametersOf(MethodInfo handler) =>
        Handlers.GetOrAdd(handler, static h => h.GetParameters()
            .Select(p => (Parameter: p, Query: p.GetCustomAttribute<FromQueryAttribute>()))
            .Where(p => p.Query is not null)
            .Select(p => (p.Query!.Name ?? p.Parameter.Name!, Nullable.GetUnderlyingType(p.Parameter.ParameterType) ?? p.Parameter.ParameterType))
            .ToArray());

    /// <summary>Why <paramref name="raw"/> is not acceptable for the parameter <paramref name="name"/> of type <paramref name="type"/>, or null.</summary>
    public static string? Check(string name, Type type, string raw)
    {
        // Parsed exactly as the framework binds them (invariant culture), so what passes here binds there.
        if (type == typeof(DateTimeOffset) || type == typeof(DateTime))
        {
            return DateTimeOffset.TryParse(raw, CultureInfo.InvariantCulture, DateTimeStyles.None, out _)
                ? null
                : $"'{raw}' is not a time: give an ISO 8601 date-time with its offset, such as 2025-03-01T06:00:00Z or 2025-03-01T07:00:00+01:00.";
        }

        if (type == typeof(int))
        {
            var bounded = Ranges.ContainsKey(name);
            if (!int.TryParse(raw, NumberStyles.Integer, CultureInfo.InvariantCulture, out var number))
            {
                return bounded
                    ? string.Create(CultureInfo.InvariantCulture, $"'{raw}' is not an integer: give an integer from {Ranges[name].Minimum} to {Ranges[name].Maximum}.")
                    : $"'{raw}' is not an integer: give a whole number (digits, optionally signed).";
            }

            return bounded && (number < Ranges[name].Minimum || number > Ranges[name].Maximum) ? OutOfRange(name, raw) : null;
        }

        if (type == typeof(bool))
        {
            return bool.TryParse(raw, out _) ? null : $"'{raw}' is not a boolean: give true or false.";
        }

        if (type == typeof(Guid))
        {
            return Guid.TryParse(raw, out _) ? null : $"'{raw}' is not a UUID: give one such as 0197a4e2-6c1d-7b3a-9f00-2d5e8c41a7b6.";
        }

        return type == typeof(string) && Vocabularies.TryGetValue(name, out var vocabulary) && !vocabulary.Values.Contains(raw, StringComparer.Ordinal)
            ? NotInVocabulary(name, raw)
            : null;
    }

    /// <summary>
    /// Answers 400 naming every query parameter of the matched endpoint that is not of its accepted form, before the
    /// endpoint binds them (and before its body is validated), so the caller sees each bad parameter with its form.
    /// </summary>
    public static IApplicationBuilder UseQueryParameterCheck(this IApplicationBuilder app) =>
        app.Use(async (http, next) =>
        {
            if (http.Request.QueryString.HasValue && ErrorsOf(http) is { Count: > 0 } errors)
            {
                http.Response.StatusCode = StatusCodes.Status400BadRequest;
                var problems = http.RequestServices.GetRequiredService<IProblemDetailsService>();
                await problems.WriteAsync(new ProblemDetailsContext { HttpContext = http, ProblemDetails = Problems.InvalidParameters(errors) }).ConfigureAwait(false);
                return;
            }

            await next(http).ConfigureAwait(false);
        });
}
