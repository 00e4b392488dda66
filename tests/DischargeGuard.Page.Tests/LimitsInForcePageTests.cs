namespace DischargeGuard.Page.Tests;

/// <summary>
/// The "Limits in force" section for the asset typed: the invented C-204B at marlow-fen shows its layer's 170 °C limit on
/// R-FIELD-HC with the layer's basis (never the default's 177 °C basis as the basis in force) and the chain of layers; a
/// near miss of the asset tag is refused with "did you mean".
/// </summary>
[Collection(BrowserGroup.Name)]
public sealed class LimitsInForcePageTests(BrowserFixture browser)
{
    [SkippableFact]
    public async Task Limits_in_force_show_the_asset_layers_limit_with_its_own_basis_and_the_chain()
    {
        browser.Require();
        await using var host = PageHost.StartOpen();
        await using var page = await PageSession.OpenAsync(browser.Browser, host.BaseAddress);
        await page.LoadAsync();
        await page.FillHeaderAsync("C-204B", "marlow-fen", "4", "preset:methane");
        await page.At("#limits summary").ClickAsync();

        var row = page.At("#limits-body tr[data-rule='R-FIELD-HC']");
        await row.WaitForAsync();
        Assert.Equal("asset:C-204B", await row.GetAttributeAsync("data-layer"));
        var text = await row.InnerTextAsync();
        // rules/assets/C-204B.yaml: 170 °C, band 15 K; rules/default.yaml: 177 °C, band 12 K.
        Assert.Contains("170 °C", text, StringComparison.Ordinal);
        Assert.Contains("cylinder manufacturer", await row.Locator(".limit-basis").First.InnerTextAsync(), StringComparison.Ordinal);
        Assert.DoesNotContain("177", await row.Locator("td").Nth(2).InnerTextAsync(), StringComparison.Ordinal);
        Assert.Equal(2, await row.Locator(".limit-chain li").CountAsync());
        // The default states 350 °F since the stated-limit change (177 °C before).
        Assert.Contains("tightened the limit from 350 °F to 170 °C", await row.Locator(".limit-chain li").Nth(1).InnerTextAsync(), StringComparison.Ordinal);
        Assert.Contains("default ← site:marlow-fen ← asset:C-204B", await page.At("#limits-body .layers-applied").InnerTextAsync(), StringComparison.Ordinal);
        await page.ScreenshotAsync("12-limits-in-force");
        await page.AssertCleanAsync();
    }

    [SkippableFact]
    public async Task Limits_in_force_refuse_a_near_miss_of_the_asset_tag_with_did_you_mean()
    {
        browser.Require();
        await using var host = PageHost.StartOpen();
        await using var page = await PageSession.OpenAsync(browser.Browser, host.BaseAddress);
        await page.LoadAsync();
        await page.FillHeaderAsync("c-204b", "marlow-fen", "4", "preset:methane");
        await page.At("#limits summary").ClickAsync();

        var status = page.At("#limits-status");
        await page.At("#limits-status:has-text('did you mean C-204B')").WaitForAsync();
        Assert.Contains("Limits not shown", await status.InnerTextAsync(), StringComparison.Ordinal);
        Assert.Equal(0, await page.At("#limits-body tr").CountAsync());
        await page.AssertCleanAsync();
    }
}
