namespace DischargeGuard.Cli.Tests;

public class ExitCodeTests
{
    // The documented order: 70 > 77 > 69 > 75 > 64 > 2 > 1 > 0.
    private static readonly int[] Precedence = [70, 77, 69, 75, 64, 2, 1, 0];

    [Fact]
    public void Constants_AreTheDocumentedSysexitsValues()
    {
        Assert.Equal(0, ExitCodes.Pass);
        Assert.Equal(1, ExitCodes.Review);
        Assert.Equal(2, ExitCodes.Fail);
        Assert.Equal(64, ExitCodes.InvalidInput);
        Assert.Equal(69, ExitCodes.ServiceUnavailable);
        Assert.Equal(70, ExitCodes.InternalError);
        Assert.Equal(75, ExitCodes.RateLimited);
        Assert.Equal(77, ExitCodes.KeyRefused);
    }

    [Fact]
    public void Worst_FollowsThePrecedenceForEveryPair()
    {
        for (var i = 0; i < Precedence.Length; i++)
        {
            for (var j = 0; j < Precedence.Length; j++)
            {
                var expected = Precedence[Math.Min(i, j)];
                Assert.Equal(expected, ExitCodes.Worst(Precedence[i], Precedence[j]));
            }
        }
    }

    [Fact]
    public void Worst_OverAnyOrder_IsTheHighestPrecedence()
    {
        var codes = new[] { 0, 2, 1, 64, 75, 0, 69, 1 };
        Assert.Equal(69, codes.Aggregate(ExitCodes.Pass, ExitCodes.Worst));
        Assert.Equal(69, codes.Reverse().Aggregate(ExitCodes.Pass, ExitCodes.Worst));
        Assert.Equal(77, codes.Append(77).Aggregate(ExitCodes.Pass, ExitCodes.Worst));
        Assert.Equal(70, codes.Append(77).Append(70).Aggregate(ExitCodes.Pass, ExitCodes.Worst));
    }

    [Theory]
    [InlineData("pass", 0)]
    [InlineData("review", 1)]
    [InlineData("fail", 2)]
    [InlineData("maybe", 70)]
    public void OfVerdict_MapsTheVerdictWords(string verdict, int code) => Assert.Equal(code, ExitCodes.OfVerdict(verdict));

    [Fact]
    public async Task Check_AcrossFiles_ExitsWithTheWorstCaseAndInvalidInputOutranksFail()
    {
        using var temp = new TempFolder();
        var audit = temp.File("audit.db");
        var pass = await Gate.RunAsync("check", "--local", "--audit-file", audit, Repo.Example("c-204b-design.json"));
        Assert.True(pass.ExitCode == 0, pass.ToString());
        var review = await Gate.RunAsync("check", "--local", "--audit-file", audit, Repo.Example("c-204b-design.json"), Repo.Example("c-204b-valve-plates.yaml"));
        Assert.True(review.ExitCode == 1, review.ToString());
        var fail = await Gate.RunAsync("check", "--local", "--audit-file", audit, Repo.Example("c-204b-valve-plates.yaml"), Repo.Example("c-204b-rerate.yaml"), Repo.Example("c-204b-design.json"));
        Assert.True(fail.ExitCode == 2, fail.ToString());

        var invalid = temp.Write("broken.yaml", "asset: C-204B\ngas: {preset: methane\n");
        var mixed = await Gate.RunAsync("check", "--local", "--audit-file", audit, Repo.Example("c-204b-rerate.yaml"), invalid);
        Assert.True(mixed.ExitCode == 64, mixed.ToString());

        // The valid file's cases were still evaluated and recorded: one bad file does not stop the others.
        Assert.Contains("Case 'recycle'", mixed.Stdout, StringComparison.Ordinal);
    }
}
