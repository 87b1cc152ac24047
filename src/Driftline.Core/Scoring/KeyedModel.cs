using Driftline.Core.Features;
using Driftline.Core.Learning;
using Driftline.Core.Metrics;
using Driftline.Core.Options;

namespace Driftline.Core.Scoring;

/// <summary>One key's model: its featurizer (with scaling statistics), learner and class-prior baseline.</summary>
internal sealed class KeyedModel
{
    /// <summary>Creates an untrained model for <paramref name="key"/>.</summary>
    public KeyedModel(string key, ModelOptions options)
    {
        Key = key;
        Featurizer = new Featurizer(options);
        Learner = OnlineLearner.Create(options);
        Prior = new PriorBaseline(options.ClassCount);
    }

    /// <summary>The key the model serves.</summary>
    public string Key { get; }

    /// <summary>Turns events into the model's feature vectors.</summary>
    public Featurizer Featurizer { get; }

    /// <summary>The online logistic model.</summary>
    public OnlineLearner Learner { get; }

    /// <summary>The Laplace-corrected class prior kept beside the model.</summary>
    public PriorBaseline Prior { get; set; }

    /// <summary>The live correction of this model's probabilities, when <c>Recalibration:Mode</c> is not Off; else null.</summary>
    public Recalibration.IRecalibration? Recalibration { get; set; }

    /// <summary>Events scored by this model.</summary>
    public long Scored { get; set; }
}
