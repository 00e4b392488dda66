using System.Net;
using DischargeGuard.Api.Infrastructure.Security;

namespace DischargeGuard.Api.Tests;

/// <summary>The per-key token bucket (its own host: the buckets are its state).</summary>
public sealed class RateLimitTests
{
    [Fact]
    public async Task Gases_WhenOneKeyExceedsItsBurst_AnswersTooManyRequestsWithRetryAfterAndOtherKeysAreUnaffected()
    {
        await using var factory = new RateLimitedServiceFactory();
        using var technician = factory.ClientWith(factory.KeyFor(Roles.Technician));
        var gases = new Uri("/v1/gases", UriKind.Relative);
        for (var i = 0; i < RateLimitedServiceFactory.Burst; i++)
        {
            using var within = await technician.GetAsync(gases);
            Assert.Equal(HttpStatusCode.OK, within.StatusCode);
        }

        using var over = await technician.GetAsync(gases);

        var problem = await AssertEx.ProblemAsync(over, (HttpStatusCode)429, "rate-limited");
        var retryAfter = over.Headers.RetryAfter?.Delta;
        Assert.NotNull(retryAfter);
        Assert.InRange(retryAfter.Value.TotalSeconds, 1, 100);
        Assert.Contains("Retry-After", problem.At("detail").GetString(), StringComparison.Ordinal);
        using var planner = factory.ClientWith(factory.KeyFor(Roles.Planner));
        using var other = await planner.GetAsync(gases);
        Assert.Equal(HttpStatusCode.OK, other.StatusCode);
        using var client = factory.CreateClient();
        using var health = await client.GetAsync(new Uri("/health/live", UriKind.Relative));
        Assert.Equal(HttpStatusCode.OK, health.StatusCode);
    }

    [Fact]
    public async Task Rules_WhenWrongKeysExceedTheBurst_AreLimitedPerAddressBeforeAuthorization()
    {
        await using var factory = new RateLimitedServiceFactory();
        using var guesser = factory.ClientWith(KeyedServiceFactory.NewKey());
        var rules = new Uri("/v1/rules", UriKind.Relative);
        for (var i = 0; i < RateLimitedServiceFactory.Burst; i++)
        {
            using var refused = await guesser.GetAsync(rules);
            Assert.Equal(HttpStatusCode.Unauthorized, refused.StatusCode);
        }

        using var limited = await guesser.GetAsync(rules);

        await AssertEx.ProblemAsync(limited, (HttpStatusCode)429, "rate-limited");
        using var technician = factory.ClientWith(factory.KeyFor(Roles.Technician));
        using var allowed = await technician.GetAsync(rules);
        Assert.Equal(HttpStatusCode.OK, allowed.StatusCode);
    }
}
