using Microsoft.AspNetCore.Authorization;

namespace DischargeGuard.Api.Infrastructure.Security;

/// <summary>The authorization policies of the endpoint groups (the table is in docs/security.md).</summary>
public static class Policies
{
    /// <summary><c>POST /v1/evaluations</c>: technician, gate.</summary>
    public const string Evaluate = "evaluate";

    /// <summary><c>GET /v1/evaluations/{id}</c>: planner, admin; a technician only for the records it made (checked in the endpoint).</summary>
    public const string ReadEvaluation = "read-evaluation";

    /// <summary><c>POST /v1/evaluations/batch</c>, <c>GET /v1/evaluations/export</c>, <c>POST /v1/evaluations/{id}/replay</c>: planner.</summary>
    public const string Plan = "plan";

    /// <summary><c>GET /v1/rules</c>, <c>GET /v1/gases</c>: any valid key.</summary>
    public const string ReadCatalogue = "read-catalogue";

    /// <summary><c>POST /v1/rules/check</c>, <c>POST /v1/rules/reload</c>, <c>POST /v1/admin/retention</c>: admin.</summary>
    public const string Admin = "admin";

    internal static readonly IReadOnlyDictionary<string, string[]> RolesOf = new Dictionary<string, string[]>(StringComparer.Ordinal)
    {
        [Evaluate] = [Roles.Technician, Roles.Gate],
        [ReadEvaluation] = [Roles.Technician, Roles.Planner, Roles.Admin],
        [Plan] = [Roles.Planner],
        [ReadCatalogue] = [.. Roles.All],
        [Admin] = [Roles.Admin],
    };

    internal static void Add(AuthorizationOptions options)
    {
        foreach (var (name, roles) in RolesOf)
        {
            options.AddPolicy(name, p => p.AddAuthenticationSchemes(AuthOptions.Scheme).AddRequirements(new KeyRoleRequirement(roles)));
        }
    }
}

/// <summary>Met by a key holding one of the roles, or by anyone when no keys are configured (loopback-only mode).</summary>
internal sealed class KeyRoleRequirement(IReadOnlyList<string> roles) : IAuthorizationRequirement
{
    public IReadOnlyList<string> Roles { get; } = roles;
}

internal sealed class KeyRoleHandler(ApiKeyRegistry keys) : AuthorizationHandler<KeyRoleRequirement>
{
    protected override Task HandleRequirementAsync(AuthorizationHandlerContext context, KeyRoleRequirement requirement)
    {
        if (keys.IsOpen || (context.User.Identity?.IsAuthenticated == true && requirement.Roles.Any(context.User.IsInRole)))
        {
            context.Succeed(requirement);
        }

        return Task.CompletedTask;
    }
}
