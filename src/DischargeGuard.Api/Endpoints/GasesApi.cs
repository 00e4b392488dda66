using DischargeGuard.Api.Infrastructure.Security;
using DischargeGuard.Evaluation.Contract;
using DischargeGuard.Rules.Provider;
using DischargeGuard.Thermo;
using Microsoft.AspNetCore.Http.HttpResults;

namespace DischargeGuard.Api.Endpoints;

/// <summary>What gases the service knows.</summary>
public static class GasesApi
{
    /// <summary>Maps <c>/v1/gases</c>.</summary>
    public static RouteGroupBuilder MapGases(this IEndpointRouteBuilder routes)
    {
        var group = routes.MapGroup("/v1/gases").WithTags("Gases").RequireKey();
        group.MapGet("/", GetGases)
            .WithName("GetGases")
            .WithSummary("Supported species (with data range and source), presets, service classes and standard-volume references.");
        return group;
    }

    internal static Ok<GasesDocument> GetGases(IRuleSetProvider rules)
    {
        var catalog = GasCatalog.Default;
        return TypedResults.Ok(new GasesDocument(
            catalog.Species.Select(s => new SpeciesDto(s.Id, s.Name, s.Aliases, new QuantityDto(Math.Round(s.MolarMassKilogramsPerMole * 1000, 5), "g/mol"),
                new QuantityDto(s.MinimumKelvin, "K"), new QuantityDto(s.MaximumKelvin, "K"), s.Source)).ToArray(),
            catalog.Presets.Select(p => new PresetDto(p.Id, p.Name, p.MoleFractions, p.Source)).ToArray(),
            rules.Current.DefaultSet.ServiceClasses.Values.OrderBy(s => s.Id, StringComparer.Ordinal).Select(s => new ServiceClassDto(s.Id, s.Title, s.Detection.ToString())).ToArray(),
            StandardReference.All.Select(r => new StandardReferenceDto(r.Id, new QuantityDto(Math.Round(r.Temperature.DegreesCelsius, 3), "°C"), new QuantityDto(Math.Round(r.Pressure.Kilopascals, 4), "kPa"), r.Basis)).ToArray()));
    }
}

/// <summary>The gases document.</summary>
public sealed record GasesDocument(IReadOnlyList<SpeciesDto> Species, IReadOnlyList<PresetDto> Presets, IReadOnlyList<ServiceClassDto> ServiceClasses, IReadOnlyList<StandardReferenceDto> StandardReferences);

/// <summary>A species.</summary>
public sealed record SpeciesDto(string Id, string Name, IReadOnlyList<string> Aliases, QuantityDto MolarMass, QuantityDto MinimumTemperature, QuantityDto MaximumTemperature, string Source);

/// <summary>A preset.</summary>
public sealed record PresetDto(string Id, string Name, IReadOnlyDictionary<string, double> Composition, string Source);

/// <summary>Reference conditions of a standard volume flow.</summary>
public sealed record StandardReferenceDto(string Id, QuantityDto Temperature, QuantityDto Pressure, string Basis);
