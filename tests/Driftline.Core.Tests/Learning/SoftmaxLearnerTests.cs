using Driftline.Core.Features;
using Driftline.Core.Learning;
using Driftline.Core.Options;
using Xunit;

namespace Driftline.Core.Tests.Learning;

/// <summary>The softmax case of the online learner (issue 10).</summary>
public sealed class SoftmaxLearnerTests
{
    private static ModelOptions Options(LearnerKind learner) => new()
    {
        HashBits = 10,
        Classes = ["on-time", "late", "failed"],
        Learner = learner,
        HalfLifeLabels = 0,
    };

    [Fact]
    public void Update_FirstAdaGradStep_FollowsTheMultinomialGradient()
    {
        // ∂(−ln p_y)/∂w_k = (p_k − [y = k]) x (Bishop 2006, §4.3.4); AdaGrad's first step on a
        // coordinate is −α g / (β + |g|) (Duchi, Hazan & Singer 2011). Untrained: p_k = 1/3.
        var learner = OnlineLearner.Create(Options(LearnerKind.AdaGrad));
        var x = new SparseVector();
        x.Add(5, 2.0);
        Assert.Equal(3, learner.Outputs);
        Assert.True(learner.Update(x, 1));
        for (int k = 0; k < 3; k++)
        {
            double g = (1.0 / 3 - (k == 1 ? 1 : 0)) * 2.0;
            Assert.Equal(-0.1 * g / (1 + Math.Abs(g)), learner.Weight(5, k), 15);
        }
    }

    [Theory]
    [InlineData("AdaGrad")]
    [InlineData("Ftrl")]
    public void Score_AfterLearning_SumsToOneAndFavoursTheTaughtClass(string learnerName)
    {
        var learner = OnlineLearner.Create(Options(Enum.Parse<LearnerKind>(learnerName)));
        var x = new SparseVector();
        x.Add(1, 1.0);
        x.Add(9, 0.5);
        for (int i = 0; i < 200; i++)
        {
            learner.Update(x, 2);
        }
        Span<double> p = stackalloc double[3];
        learner.Score(x, p);
        Assert.Equal(1, p[0] + p[1] + p[2], 12);
        Assert.True(p[2] > 0.9, $"p = {p[2]}");
        // Exported and imported, the model scores the same.
        var copy = OnlineLearner.Create(Options(Enum.Parse<LearnerKind>(learnerName)));
        copy.Import(learner.Export());
        Span<double> q = stackalloc double[3];
        copy.Score(x, q);
        Assert.Equal(p.ToArray(), q.ToArray());
    }

    [Fact]
    public void Import_BinaryStateIntoSoftmaxModel_IsRefusedWithAReason()
    {
        var binary = OnlineLearner.Create(new ModelOptions { HashBits = 10 });
        var x = new SparseVector();
        x.Add(1, 1.0);
        binary.Update(x, 1);
        var softmax = OnlineLearner.Create(Options(LearnerKind.AdaGrad));
        var error = Assert.Throws<InvalidDataException>(() => softmax.Import(binary.Export()));
        Assert.Contains("number of classes", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Softmax_ExtremeMargins_KeepsEveryProbabilityPositive()
    {
        double[] m = [0, 900, -900];
        OnlineLearner.Softmax(m);
        Assert.All(m, p => Assert.True(p > 0));
        Assert.Equal(1, m.Sum(), 15);
    }
}
