using System.Collections.Concurrent;
using System.Net;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using DischargeGuard.Audit;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// The service on PostgreSQL while the server crashes under load: every answer is a 200 that was recorded or a 503
/// with Retry-After, every stored record holds a complete request and response, and the same service recovers once
/// the server is back, without a restart.
/// </summary>
public sealed class PostgresOutageTests(PostgresServiceFactory factory) : IClassFixture<PostgresServiceFactory>
{
    [SkippableFact]
    public async Task Evaluate_WhenPostgresStopsMidLoad_Answers503sStoresOnlyCompleteRecordsAndRecoversWithoutRestart()
    {
        factory.Require();
        var server = factory.Postgres!;
        var answered = new ConcurrentBag<Guid>();
        var statuses = new ConcurrentBag<HttpStatusCode>();
        var retryAfterMissing = 0;
        using var stop = new CancellationTokenSource();
        using var client = factory.CreateClient();

        async Task LoadAsync()
        {
            while (!stop.IsCancellationRequested)
            {
                using var content = new StringContent(Requests.Minimal().ToJsonString(), Encoding.UTF8, "application/json");
                using var response = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content, CancellationToken.None);
                statuses.Add(response.StatusCode);
                if (response.StatusCode == HttpStatusCode.OK)
                {
                    answered.Add((await Json.ReadAsync(response)).At("id").GetGuid());
                }
                else if (response.StatusCode == HttpStatusCode.ServiceUnavailable && response.Headers.RetryAfter is null)
                {
                    Interlocked.Increment(ref retryAfterMissing);
                }
            }
        }

        var load = Enumerable.Range(0, 4).Select(_ => Task.Run(LoadAsync)).ToArray();
        await WaitUntilAsync(() => answered.Count >= 50, "50 evaluations before the crash");

        // A crash, not a clean shutdown: in-flight transactions are cut off.
        await server.StopAsync("immediate");
        await WaitUntilAsync(() => statuses.Count(s => s == HttpStatusCode.ServiceUnavailable) >= 20, "503s while the server is down");
        using (var ready = await client.GetAsync(new Uri("/health/ready", UriKind.Relative)))
        {
            Assert.Equal(HttpStatusCode.ServiceUnavailable, ready.StatusCode);
        }

        await server.StartAsync();
        var afterRestart = answered.Count;
        await WaitUntilAsync(() => answered.Count >= afterRestart + 50, "50 evaluations after the server is back");
        await stop.CancelAsync();
        await Task.WhenAll(load);

        Assert.All(statuses, s => Assert.True(s is HttpStatusCode.OK or HttpStatusCode.ServiceUnavailable, $"unexpected {(int)s}"));
        Assert.Equal(0, retryAfterMissing);

        // Every 200 the clients received is stored, and every stored record is whole: JSON bodies whose hashes match.
        var store = factory.Services.GetRequiredService<IAuditStore>();
        var stored = new Dictionary<Guid, AuditRecord>();
        await foreach (var record in store.QueryAsync(new AuditQuery(), CancellationToken.None))
        {
            stored[record.Id] = record;
        }

        Assert.All(answered, id => Assert.True(stored.ContainsKey(id), $"answered {id} but it is not stored"));
        foreach (var record in stored.Values)
        {
            Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(record.Request)), record.RequestSha256);
            Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(record.Response)), record.ResponseSha256);
            using var request = JsonDocument.Parse(record.Request);
            using var response = JsonDocument.Parse(record.Response);
            Assert.Equal(record.Id, response.RootElement.GetProperty("id").GetGuid());
        }

        using var readyAgain = await client.GetAsync(new Uri("/health/ready", UriKind.Relative));
        Assert.Equal(HttpStatusCode.OK, readyAgain.StatusCode);
    }

    private static async Task WaitUntilAsync(Func<bool> condition, string what)
    {
        var deadline = DateTime.UtcNow.AddSeconds(60);
        while (!condition())
        {
            Assert.True(DateTime.UtcNow < deadline, "timed out waiting for " + what);
            await Task.Delay(20);
        }
    }
}
