using System.Collections.Concurrent;
using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using DischargeGuard.Audit;
using DischargeGuard.Rules.Loading;
using DischargeGuard.Rules.Provider;
using Microsoft.Extensions.DependencyInjection;
using Xunit.Abstractions;

namespace DischargeGuard.Api.Tests;

/// <summary>
/// The rule directory changed again and again while clients evaluate: between the shipped set and the shipped set
/// plus a site layer (a new rule) and an asset layer (a tighter limit), and now and then a broken site file written in
/// pieces. Every answer is a 200 on one of the two whole sets, its findings are exactly that set's, its record names the
/// same digest, and while the broken file is on disk the last good set keeps answering.
/// </summary>
public sealed class RuleChangeUnderLoadTests(ITestOutputHelper output)
{
    private const string Site = "kestrel-ridge";
    private const string Asset = "K-101A";
    private const string SiteRule = "R-KR-RATIO";

    // The site layer with a misspelt key on line 6 ("titel"), cut into the pieces it is written in: mid-line, and
    // mid-word in the rule, so a reload can find it empty, half written or whole, and every one of those is broken.
    private static readonly string[] BrokenSitePieces =
    [
        "schemaVersion: 1\nlayer:\n  kind: site\n  id: kestrel-ridge\n  title: Kestrel Ridge\n  tit",
        "el: Kestrel Ridge compressor station\nrules:\n  - id: R-KR-RATIO\n    title: Kestrel Ridge booster stage ratio\n    quantity: pressu",
        "reRatio\n    limit: 2.0\n    severity: warning\n    basis: \"invented\"\n    message: \"Review the staging.\"\n",
    ];

    private static readonly TimeSpan ChangeTimeout = TimeSpan.FromSeconds(30);

    [Fact]
    public async Task Rules_WhenDirectoryChangesUnderLoad_EveryAnswerIsOneWholeSetAndABrokenFileNeverBecomesActive()
    {
        await using var factory = new UnlimitedServiceFactory(watchRules: true);
        var sitePath = Path.Combine(factory.RulesDirectory, "sites", Site + ".yaml");
        var assetPath = Path.Combine(factory.RulesDirectory, "assets", Asset + ".yaml");
        var (shipped, extended) = WholeSetDigests(factory.RulesDirectory);
        AssertEveryStateOfTheBrokenFileIsRefused(factory.RulesDirectory);

        using var client = factory.CreateClient();
        var (_, initial) = await factory.GetJsonAsync($"/v1/rules?site={Site}&asset={Asset}");
        Assert.Equal(shipped, initial.At("digest").GetString());

        var clock = Stopwatch.StartNew();
        var answers = new ConcurrentQueue<Answer>();
        var unexpected = new ConcurrentQueue<string>();
        using var stop = new CancellationTokenSource();
        var clients = StartClients(client, clock, answers, unexpected, stop.Token);

        // The plan: alternate the two sets, with a broken file written over whichever is in force now and then.
        var periods = new List<Period>();
        var extendedOnDisk = false;
        for (var step = 0; step < 16; step++)
        {
            TimeSpan from;
            string inForce;
            if (step % 4 == 3)
            {
                // No whole set is on disk from the first byte on, so the last good one is in force from the start.
                from = clock.Elapsed;
                inForce = extendedOnDisk ? extended : shipped;
                await WriteInPiecesAsync(sitePath, BrokenSitePieces);
                var refused = await PollAsync(factory, b => b.At("lastReloadErrors").GetArrayLength() > 0, "the broken site file to be refused");
                Assert.Equal(inForce, refused.At("digest").GetString());
                Assert.All(refused.At("lastReloadErrors").EnumerateArray(), e => Assert.Equal($"sites/{Site}.yaml", e.At("file").GetString()));
            }
            else
            {
                extendedOnDisk = !extendedOnDisk;
                inForce = extendedOnDisk ? extended : shipped;
                SwitchSet(sitePath, assetPath, extendedOnDisk);
                await PollAsync(factory, b => b.At("digest").GetString() == inForce && b.At("lastReloadErrors").GetArrayLength() == 0, "the switched set to become active");
                from = clock.Elapsed;
            }

            // Let the set in force answer a few evaluations sent after it was in force before the next change.
            await WaitUntilAsync(() => answers.Count(a => a.Sent >= from) >= 8 || !unexpected.IsEmpty, "evaluations between changes");
            periods.Add(new Period(from, clock.Elapsed, inForce, Broken: step % 4 == 3));
        }

        await stop.CancelAsync();
        await Task.WhenAll(clients);
        Assert.True(unexpected.IsEmpty, string.Join(" | ", unexpected));

        AssertEachAnswerIsOnAWholeSet(answers, shipped, extended);
        Assert.Contains(answers, a => a.Digest == shipped);
        Assert.Contains(answers, a => a.Digest == extended);

        // An evaluation made wholly while a set was in force (after it showed as active, before the next change began)
        // is on that set; during a broken file, that is the last good one.
        foreach (var period in periods)
        {
            var inside = answers.Where(a => a.Sent >= period.From && a.Received <= period.Until).ToList();
            Assert.True(inside.Count > 0, $"no evaluation was made wholly inside {period}");
            Assert.All(inside, a => Assert.True(a.Digest == period.Digest, $"{a.Id} answered on {a.Digest} inside {period}"));
        }

        var records = await AssertEveryRecordIsItsAnswerAsync(factory, answers);
        output.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"{periods.Count} changes ({periods.Count(p => p.Broken)} broken files) in {clock.Elapsed.TotalSeconds:0.0} s; {answers.Count} evaluations answered 200 "
            + $"({answers.Count(a => a.Digest == shipped)} on the shipped set, {answers.Count(a => a.Digest == extended)} on the extended set), {records} records"));
    }

    [Fact]
    public async Task Rules_WhenMountedDirectoryIsSwappedWhileReloadsAreRequested_EveryAnswerIsOneWholeSet()
    {
        // The rules as a mounted volume presents them (default.yaml, sites and assets each through ..data, swapped
        // atomically by rename(2)), so every state on disk is one whole set: v1 the shipped files, v2 with the site and
        // asset layers and a lower default limit elsewhere in default.yaml. Reloads are requested back to back while the
        // mount swaps every 10 ms; an answer on any other digest was made on files of two versions.
        await using var factory = new UnlimitedServiceFactory(watchRules: false);
        var mount = factory.RulesDirectory;
        var v1 = Path.Combine(mount, "..v1");
        var v2 = Path.Combine(mount, "..v2");
        Directory.CreateDirectory(v1);
        foreach (var entry in new[] { "default.yaml", "sites", "assets" })
        {
            Directory.Move(Path.Combine(mount, entry), Path.Combine(v1, entry));
        }

        CopyDirectory(v1, v2);
        var defaults = Path.Combine(v2, "default.yaml");
        var deposit = File.ReadAllText(defaults).Replace("limit: 150 °C\n    severity: warning", "limit: 149 °C\n    severity: warning", StringComparison.Ordinal); // R-DEPOSIT
        Assert.NotEqual(File.ReadAllText(defaults), deposit);
        File.WriteAllText(defaults, deposit);
        SwitchSet(Path.Combine(v2, "sites", Site + ".yaml"), Path.Combine(v2, "assets", Asset + ".yaml"), extended: true);
        var shipped = FileRuleSetProvider.LoadDirectory(v1, DateTimeOffset.UnixEpoch).Resolve(Site, Asset).Digest;
        var extended = FileRuleSetProvider.LoadDirectory(v2, DateTimeOffset.UnixEpoch).Resolve(Site, Asset).Digest;
        Assert.NotEqual(shipped, extended);
        MountedRules.Link(mount, "..v1", layers: true);

        using var client = factory.CreateClient();
        var (_, initial) = await factory.GetJsonAsync($"/v1/rules?site={Site}&asset={Asset}");
        Assert.Equal(shipped, initial.At("digest").GetString());

        var clock = Stopwatch.StartNew();
        var answers = new ConcurrentQueue<Answer>();
        var unexpected = new ConcurrentQueue<string>();
        using var stop = new CancellationTokenSource();
        var clients = StartClients(client, clock, answers, unexpected, stop.Token);
        var swapper = MountedRules.StartSwapping(mount, "..v1", "..v2", TimeSpan.FromMilliseconds(10), stop.Token);

        var reloaded = 0;
        var refused = 0;
        try
        {
                        while (reloaded < 150 && unexpected.IsEmpty)
            {
                Assert.True(clock.Elapsed < ChangeTimeout, $"only {reloaded} reloads succeeded in {ChangeTimeout.TotalSeconds} s ({refused} refused)");
                using var response = await client.PostWithoutBodyAsync("/v1/rules/reload");
                if (response.StatusCode == HttpStatusCode.OK)
                {
                    reloaded++;
                }
                else
                {
                    // A reload that finds the directory still changing is refused and the last good set stays; nothing else.
                    await AssertEx.ProblemAsync(response, HttpStatusCode.UnprocessableEntity, "rules-invalid");
                    refused++;
                }
            }
        }
        finally
        {
            await stop.CancelAsync();
            await swapper;
            await Task.WhenAll(clients);
        }

        Assert.True(unexpected.IsEmpty, string.Join(" | ", unexpected));
        AssertEachAnswerIsOnAWholeSet(answers, shipped, extended);
        Assert.Contains(answers, a => a.Digest == shipped);
        Assert.Contains(answers, a => a.Digest == extended);
        var records = await AssertEveryRecordIsItsAnswerAsync(factory, answers);
        output.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"{swapper.Swaps} mount swaps, {reloaded} reloads ({refused} refused) in {clock.Elapsed.TotalSeconds:0.0} s; {answers.Count} evaluations answered 200 "
            + $"({answers.Count(a => a.Digest == shipped)} on v1, {answers.Count(a => a.Digest == extended)} on v2), {records} records"));
    }

    /// <summary>Each answer names one of the two whole sets and has exactly that set's findings and layers.</summary>
    private static void AssertEachAnswerIsOnAWholeSet(IEnumerable<Answer> answers, string shipped, string extended)
    {
        foreach (var answer in answers)
        {
            Assert.True(answer.Digest == shipped || answer.Digest == extended, $"{answer.Id} names rule digest {answer.Digest}, neither whole set");
            var isExtended = answer.Digest == extended;
            Assert.Equal(isExtended, answer.HasSiteRule);
            Assert.Equal(isExtended ? 140 : 150, answer.GeneralLimit);
            Assert.Equal(isExtended ? $"asset:{Asset}" : "default", answer.GeneralLayer);
            string[] layers = isExtended ? ["default", $"site:{Site}", $"asset:{Asset}"] : ["default"];
            Assert.Equal(layers, answer.Layers);
        }
    }

    /// <summary>The store holds exactly the answered evaluations, each naming its answer's digest and holding its bytes; returns the count.</summary>
    private static async Task<int> AssertEveryRecordIsItsAnswerAsync(UnlimitedServiceFactory factory, IReadOnlyCollection<Answer> answers)
    {
        var store = factory.Services.GetRequiredService<IAuditStore>();
        var stored = new Dictionary<Guid, AuditRecord>();
        await foreach (var record in store.QueryAsync(new AuditQuery(), CancellationToken.None))
        {
            stored[record.Id] = record;
        }

        Assert.Equal(answers.Count, stored.Count);
        foreach (var answer in answers)
        {
            Assert.True(stored.TryGetValue(answer.Id, out var record), $"{answer.Id} was answered but not stored");
            Assert.Equal(answer.Digest, record.RuleDigest);
            Assert.Equal(answer.Response, Encoding.UTF8.GetString(record.Response));
        }

        return stored.Count;
    }

    /// <summary>The two whole sets' digests for the request's site and asset, from the loader on copies of the directory.</summary>
    private static (string Shipped, string Extended) WholeSetDigests(string rulesDirectory)
    {
        using var copy = new TempFolder("dischargeguard-rulesets-");
        CopyDirectory(rulesDirectory, copy.Path);
        var shipped = FileRuleSetProvider.LoadDirectory(copy.Path, DateTimeOffset.UnixEpoch).Resolve(Site, Asset).Digest;
        SwitchSet(Path.Combine(copy.Path, "sites", Site + ".yaml"), Path.Combine(copy.Path, "assets", Asset + ".yaml"), extended: true);
        var extended = FileRuleSetProvider.LoadDirectory(copy.Path, DateTimeOffset.UnixEpoch).Resolve(Site, Asset).Digest;
        Assert.NotEqual(shipped, extended);
        return (shipped, extended);
    }

    /// <summary>Every state a reader can find the broken file in (empty, each piece written so far) fails to load, over either set.</summary>
    private static void AssertEveryStateOfTheBrokenFileIsRefused(string rulesDirectory)
    {
        using var copy = new TempFolder("dischargeguard-rulesets-");
        CopyDirectory(rulesDirectory, copy.Path);
        var sitePath = Path.Combine(copy.Path, "sites", Site + ".yaml");
        foreach (var extended in new[] { false, true })
        {
            SwitchSet(sitePath, Path.Combine(copy.Path, "assets", Asset + ".yaml"), extended);
            for (var pieces = 0; pieces <= BrokenSitePieces.Length; pieces++)
            {
                File.WriteAllText(sitePath, string.Concat(BrokenSitePieces.Take(pieces)));
                Assert.Throws<RuleFileException>(() => FileRuleSetProvider.LoadDirectory(copy.Path, DateTimeOffset.UnixEpoch));
            }
        }
    }

    // Both layers written (each File.WriteAllText opens, truncates and writes: not atomic) or both removed.
    private static void SwitchSet(string sitePath, string assetPath, bool extended)
    {
        if (extended)
        {
            File.WriteAllText(sitePath, KestrelRidgeLayers.Site);
            File.WriteAllText(assetPath, KestrelRidgeLayers.Asset);
        }
        else
        {
            File.Delete(sitePath);
            File.Delete(assetPath);
        }
    }

    private static async Task WriteInPiecesAsync(string path, string[] pieces)
    {
        await using var stream = new FileStream(path, FileMode.Create, FileAccess.Write, FileShare.ReadWrite);
        foreach (var piece in pieces)
        {
            await stream.WriteAsync(Encoding.UTF8.GetBytes(piece));
            await stream.FlushAsync();
            await Task.Delay(150);
        }
    }

    // Three clients posting single evaluations one at a time and one posting batches of ten, until stopped.
    private static Task[] StartClients(HttpClient client, Stopwatch clock, ConcurrentQueue<Answer> answers, ConcurrentQueue<string> unexpected, CancellationToken stop) =>
        Enumerable.Range(0, 3).Select(_ => Task.Run(() => SinglesAsync(client, clock, answers, unexpected, stop), CancellationToken.None))
            .Append(Task.Run(() => BatchesAsync(client, clock, answers, unexpected, stop), CancellationToken.None))
            .ToArray();

    private static async Task SinglesAsync(HttpClient client, Stopwatch clock, ConcurrentQueue<Answer> answers, ConcurrentQueue<string> unexpected, CancellationToken stop)
    {
        while (!stop.IsCancellationRequested)
        {
            var sent = clock.Elapsed;
            using var content = new StringContent(Requests.PassingStage().ToJsonString(), Encoding.UTF8, "application/json");
            using var response = await client.PostAsync(new Uri("/v1/evaluations", UriKind.Relative), content, CancellationToken.None);
            var text = await response.Content.ReadAsStringAsync(CancellationToken.None);
            if (response.StatusCode != HttpStatusCode.OK)
            {
                unexpected.Enqueue($"single: {(int)response.StatusCode} {text}");
                return;
            }

            answers.Enqueue(Answer.Of(text, sent, clock.Elapsed));
        }
    }

    private static async Task BatchesAsync(HttpClient client, Stopwatch clock, ConcurrentQueue<Answer> answers, ConcurrentQueue<string> unexpected, CancellationToken stop)
    {
        var body = new JsonObject { ["evaluations"] = new JsonArray(Enumerable.Range(0, 10).Select(_ => (JsonNode)Requests.PassingStage()).ToArray()) }.ToJsonString();
        while (!stop.IsCancellationRequested)
        {
            var sent = clock.Elapsed;
            using var content = new StringContent(body, Encoding.UTF8, "application/json");
            using var response = await client.PostAsync(new Uri("/v1/evaluations/batch", UriKind.Relative), content, CancellationToken.None);
            var text = await response.Content.ReadAsStringAsync(CancellationToken.None);
            if (response.StatusCode != HttpStatusCode.OK)
            {
                unexpected.Enqueue($"batch: {(int)response.StatusCode} {text}");
                return;
            }

            var received = clock.Elapsed;
            using var parsed = JsonDocument.Parse(text);
            var digests = new HashSet<string>(StringComparer.Ordinal);
            foreach (var result in parsed.RootElement.GetProperty("results").EnumerateArray())
            {
                if (result.GetProperty("status").GetInt32() != 200)
                {
                    unexpected.Enqueue($"batch item: {result}");
                    return;
                }

                var answer = Answer.Of(result.GetProperty("evaluation").GetRawText(), sent, received);
                digests.Add(answer.Digest);
                answers.Enqueue(answer);
            }

            // One batch, one rule set.
            if (digests.Count != 1)
            {
                unexpected.Enqueue($"one batch answered on {digests.Count} rule sets: {string.Join(", ", digests)}");
                return;
            }
        }
    }

    private static async Task<JsonElement> PollAsync(UnlimitedServiceFactory factory, Func<JsonElement, bool> done, string what)
    {
        var deadline = DateTime.UtcNow + ChangeTimeout;
        JsonElement last;
        do
        {
            (_, last) = await factory.GetJsonAsync($"/v1/rules?site={Site}&asset={Asset}");
            if (done(last))
            {
                return last;
            }

            await Task.Delay(50);
        }
        while (DateTime.UtcNow < deadline);

        Assert.Fail($"timed out after {ChangeTimeout.TotalSeconds} s waiting for {what}; last /v1/rules: {last}");
        return last;
    }

    private static async Task WaitUntilAsync(Func<bool> condition, string what)
    {
        var deadline = DateTime.UtcNow + ChangeTimeout;
        while (!condition())
        {
            Assert.True(DateTime.UtcNow < deadline, "timed out waiting for " + what);
            await Task.Delay(20);
        }
    }

    private static void CopyDirectory(string from, string to)
    {
        foreach (var file in Directory.EnumerateFiles(from, "*", SearchOption.AllDirectories))
        {
            var target = Path.Combine(to, Path.GetRelativePath(from, file));
            Directory.CreateDirectory(Path.GetDirectoryName(target)!);
            File.Copy(file, target);
        }
    }

    /// <summary>A set in force from <paramref name="From"/> (when it showed as active) until <paramref name="Until"/> (when the next change began).</summary>
    private sealed record Period(TimeSpan From, TimeSpan Until, string Digest, bool Broken)
    {
        public override string ToString() => string.Create(CultureInfo.InvariantCulture,
            $"{(Broken ? "broken file over " : string.Empty)}{Digest[..12]} from {From.TotalSeconds:0.000} s to {Until.TotalSeconds:0.000} s");
    }

    /// <summary>One answered evaluation: what the rule-set checks need from it, and when it was sent and received.</summary>
    private sealed record Answer(Guid Id, string Digest, IReadOnlyList<string> Layers, bool HasSiteRule, double GeneralLimit, string GeneralLayer, string Response, TimeSpan Sent, TimeSpan Received)
    {
        public static Answer Of(string response, TimeSpan sent, TimeSpan received)
        {
            using var doc = JsonDocument.Parse(response);
            var root = doc.RootElement;
            var findings = root.At("stages[0].findings").EnumerateArray().ToList();
            var general = findings.Single(f => f.At("ruleId").GetString() == "R-API618-GEN");
            return new Answer(
                root.At("id").GetGuid(),
                root.At("ruleSet.digest").GetString()!,
                root.At("ruleSet.layers").EnumerateArray().Select(l => l.At("name").GetString()!).ToArray(),
                findings.Any(f => f.At("ruleId").GetString() == SiteRule),
                AssertEx.Quantity(general.At("limit"), "°C"),
                general.Has("layer") ? general.At("layer").GetString()! : "default", // the compact answer names only a layer other than the default
                response,
                sent,
                received);
        }
    }
}

/// <summary>A host that lets one caller send as fast as it can, watching its rules (as <see cref="ServiceFactory.WatchingRules"/>) or not.</summary>
internal sealed class UnlimitedServiceFactory(bool watchRules) : ServiceFactory(new Dictionary<string, string?>
{
    ["DischargeGuard:RulesWatch"] = watchRules ? "true" : "false",
    ["RateLimits:PermitsPerSecond"] = "100000",
    ["RateLimits:Burst"] = "100000",
});
