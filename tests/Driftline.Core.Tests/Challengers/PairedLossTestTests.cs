using Driftline.Core.Challengers;
using Xunit;

namespace Driftline.Core.Tests.Challengers;

/// <summary>
/// The challenger's sequential test. Its error promise is Ville's inequality (Ville 1939, "Étude
/// critique de la notion de collectif"): checked here by simulation under the null over many
/// seeds, with a binomial margin; its power on streams with a known mean difference.
/// </summary>
public sealed class PairedLossTestTests
{
    [Fact]
    public void Add_IdenticalLosses_NeverDeclares()
    {
        var test = new PairedLossTest(new ChallengerOptions());
        var rng = new Random(1);
        for (int i = 0; i < 100_000; i++)
        {
            double loss = -Math.Log(rng.NextDouble() * 0.98 + 0.01);
            Assert.False(test.Add(loss, loss));
        }
        Assert.Equal(0, test.LogWealth);
    }

    [Fact]
    public void Add_NoRealDifference_FalseDeclarationsWithinErrorRate()
    {
        // 400 streams of 5,000 labels whose differences have mean 0: the rate of streams with any
        // declaration must stay within α = 0.05 plus three binomial standard errors.
        const int streams = 400;
        const double alpha = 0.05;
        int declared = 0;
        for (int seed = 0; seed < streams; seed++)
        {
            var test = new PairedLossTest(new ChallengerOptions { ErrorRate = alpha });
            var rng = new Random(1_000 + seed);
            bool any = false;
            for (int i = 0; i < 5_000 && !any; i++)
            {
                double noise = (rng.NextDouble() - 0.5) * 0.4;
                any = test.Add(0.5 + noise, 0.5);
            }
            declared += any ? 1 : 0;
        }

        double bound = alpha + 3 * Math.Sqrt(alpha * (1 - alpha) / streams);
        Assert.True(declared / (double)streams <= bound, $"{declared} of {streams} null streams declared a winner");
    }

    [Fact]
    public void Add_ChallengerBetterBy002Nats_DeclaredWithin3000Labels()
    {
        var test = new PairedLossTest(new ChallengerOptions());
        var rng = new Random(7);
        int at = -1;
        for (int i = 0; i < 3_000 && at < 0; i++)
        {
            double noise = (rng.NextDouble() - 0.5) * 0.4;
            if (test.Add(0.52 + noise, 0.5))
            {
                at = i;
            }
        }

        Assert.InRange(at, 0, 2_999);
        Assert.Equal(1, test.Decisions);
        Assert.Equal(0, test.LogWealth);
    }

    [Fact]
    public void Add_WorseThenBetter_EarlierLossDoesNotBlockLaterDecision()
    {
        // 20,000 labels with the challenger worse, then better by 0.03 nats: the stake is zero
        // while it looks worse, so the evidence is not spent and the change is found promptly.
        var test = new PairedLossTest(new ChallengerOptions());
        var rng = new Random(8);
        for (int i = 0; i < 20_000; i++)
        {
            Assert.False(test.Add(0.5 + (rng.NextDouble() - 0.5) * 0.4, 0.53));
        }
        int at = -1;
        for (int i = 0; i < 4_000 && at < 0; i++)
        {
            if (test.Add(0.53 + (rng.NextDouble() - 0.5) * 0.4, 0.5))
            {
                at = i;
            }
        }

        Assert.InRange(at, 0, 3_999);
    }

    [Fact]
    public void ExportImport_ContinuesExactly()
    {
        var options = new ChallengerOptions();
        var first = new PairedLossTest(options);
        var rng = new Random(9);
        for (int i = 0; i < 700; i++)
        {
            first.Add(0.51 + (rng.NextDouble() - 0.5) * 0.4, 0.5);
        }
        var second = new PairedLossTest(options);
        second.Import(first.Export());
        for (int i = 0; i < 300; i++)
        {
            double champion = 0.51 + (rng.NextDouble() - 0.5) * 0.4;
            Assert.Equal(first.Add(champion, 0.5), second.Add(champion, 0.5));
        }

        Assert.Equal(first.Export(), second.Export());
        Assert.Throws<ArgumentException>(() => second.Import(new PairedLossState(double.NaN, 0, 0, 0, 0, 0)));
    }

    [Theory]
    [InlineData(0.0, 0.5, "Challengers:ErrorRate")]
    [InlineData(0.01, -1.0, "Challengers:LossClip")]
    public void Validate_BadValue_NamesOption(double rate, double clip, string option)
    {
        Assert.Contains(new ChallengerOptions { ErrorRate = rate, LossClip = clip }.Validate(), e => e.Option == option);
        Assert.Empty(new ChallengerOptions().Validate());
    }
}
