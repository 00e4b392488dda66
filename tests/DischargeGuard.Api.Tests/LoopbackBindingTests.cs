using DischargeGuard.Api.Infrastructure;
using DischargeGuard.Api.Infrastructure.Security;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.Extensions.DependencyInjection;

namespace DischargeGuard.Api.Tests;

/// <summary>With no API keys the service is anonymous, so it listens on loopback only.</summary>
public sealed class LoopbackBindingTests
{
    [Theory]
    [InlineData("http://0.0.0.0:5080", 0, "http://127.0.0.1:5080")]
    [InlineData("http://*:8080", 0, "http://127.0.0.1:8080")]
    [InlineData("http://+:80", 0, "http://127.0.0.1:80")]
    [InlineData("https://[::]:5443", 0, "https://127.0.0.1:5443")]
    [InlineData("http://10.20.0.5:5080", 0, "http://127.0.0.1:5080")]
    [InlineData("http://kestrel-ridge-gw01:5080", 0, "http://127.0.0.1:5080")]
    [InlineData("http://0.0.0.0", 0, "http://127.0.0.1")]
    [InlineData("http://localhost:5080", 0, "http://localhost:5080")]
    [InlineData("http://127.0.0.1:5080", 0, "http://127.0.0.1:5080")]
    [InlineData("http://127.0.0.2:5080", 0, "http://127.0.0.2:5080")]
    [InlineData("http://[::1]:5080", 0, "http://[::1]:5080")]
    [InlineData("http://unix:/run/dischargeguard.sock", 0, "http://unix:/run/dischargeguard.sock")]
    [InlineData("http://0.0.0.0:5080", 1, "http://0.0.0.0:5080")]
    [InlineData("https://*:5443", 3, "https://*:5443")]
    public void Effective_WhenGivenAConfiguredUrlAndKeyCount_MovesOnlyNonLoopbackUrlsAndOnlyWithoutKeys(string configured, int keyCount, string expected)
    {
        Assert.Equal([expected], LoopbackBinding.Effective([configured], keyCount));
    }

    [Fact]
    public void Effective_WhenSeveralUrlsAreConfiguredWithoutKeys_KeepsTheirOrderAndPorts()
    {
        var effective = LoopbackBinding.Effective(["http://0.0.0.0:5080", "http://localhost:5081", "https://*:5443"], 0);

        Assert.Equal(["http://127.0.0.1:5080", "http://localhost:5081", "https://127.0.0.1:5443"], effective);
    }

    [Theory]
    [InlineData("urls", 0, "http://127.0.0.1:")]
    [InlineData("Kestrel:Endpoints:Plant:Url", 0, "http://127.0.0.1:")]
    [InlineData("urls", 1, "http://0.0.0.0:")]
    public async Task Host_WhenConfiguredToListenOnEveryInterface_ListensOnLoopbackUnlessKeysAreConfigured(string setting, int keyCount, string expectedPrefix)
    {
        // A real Kestrel host (the test server binds nothing); the factory only lends its temp rules and audit file.
        await using var paths = new ServiceFactory();
        var args = new List<string>
        {
            $"--{setting}=http://0.0.0.0:0",
            $"--Audit:SqlitePath={paths.DatabasePath}",
            $"--DischargeGuard:RulesDirectory={paths.RulesDirectory}",
            "--DischargeGuard:RulesWatch=false",
            "--Serilog:MinimumLevel:Default=Warning",
        };
        if (keyCount > 0)
        {
            args.AddRange(["--Auth:Keys:0:id=tablet-07", $"--Auth:Keys:0:sha256={ApiKeyRegistry.HashOf(KeyedServiceFactory.NewKey())}", "--Auth:Keys:0:roles:0=technician"]);
        }

        var builder = WebApplication.CreateBuilder(new WebApplicationOptions { Args = [.. args], ContentRootPath = paths.ContentRoot, EnvironmentName = "Production" });
        builder.AddDischargeGuard();
        await using var app = builder.Build();
        app.UseDischargeGuard();

        await app.StartAsync();
        try
        {
            var addresses = app.Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()!.Addresses;
            Assert.NotEmpty(addresses);
            Assert.All(addresses, a => Assert.StartsWith(expectedPrefix, a, StringComparison.Ordinal));
            Assert.Equal(keyCount == 0, app.Services.GetRequiredService<BindingDecision>().Overridden);
        }
        finally
        {
            await app.StopAsync();
        }
    }
}
