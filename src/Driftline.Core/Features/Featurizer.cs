using System.Runtime.CompilerServices;
using System.Text;
using Driftline.Core.Events;
using Driftline.Core.Options;

namespace Driftline.Core.Features;

/// <summary>
/// Turns an event's raw features into the sparse vector the model sees: a bias, each feature
/// hashed to a signed slot (Weinberger et al. 2009), numeric values scaled, and the declared
/// pairwise interactions. One featurizer per model, because it owns that model's running
/// scaling statistics.
/// </summary>
internal sealed class Featurizer
{
    private readonly int _mask;
    private readonly ScalingMode _scaling;
    private readonly Dictionary<ulong, double> _fixedScales = new();
    private readonly (ulong A, ulong B)[] _interactions;
    private double[] _scaled = new double[64];

    /// <summary>Creates a featurizer for a model configured by <paramref name="options"/>.</summary>
    public Featurizer(ModelOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _mask = (1 << options.HashBits) - 1;
        _scaling = options.Scaling;
        Scaler = new NumericScaler(options.StandardisedLimit);
        foreach (var (name, scale) in options.FixedScales)
        {
            _fixedScales[FeatureHash.Name(Encoding.UTF8.GetBytes(name))] = scale;
        }
        _interactions = options.Interactions
            .Select(s => s.Split('*', StringSplitOptions.TrimEntries))
            .Select(p => (FeatureHash.Name(Encoding.UTF8.GetBytes(p[0])), FeatureHash.Name(Encoding.UTF8.GetBytes(p[1]))))
            .ToArray();
    }

    /// <summary>The running statistics of numeric features (saved with the model).</summary>
    public NumericScaler Scaler { get; }

    /// <summary>
    /// Fills <paramref name="into"/> with the features of <paramref name="record"/>. Updates
    /// the running scaling statistics: scaling uses feature values only, never labels, so
    /// progressive validation stays honest.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Featurize(ParsedRecord record, SparseVector into)
    {
        into.Clear();
        into.Add(FeatureHash.Slot(FeatureHash.Bias, _mask), 1.0);

        var features = record.Features;
        if (_scaled.Length < features.Length)
        {
            _scaled = new double[Math.Max(features.Length, _scaled.Length * 2)];
        }
        for (int i = 0; i < features.Length; i++)
        {
            ref readonly var f = ref features[i];
            double v = Scale(f);
            _scaled[i] = v;
            if (v != 0)
            {
                into.Add(FeatureHash.Slot(f.Hash, _mask), FeatureHash.Sign(f.Hash) * v);
            }
        }

        foreach (var (a, b) in _interactions)
        {
            for (int i = 0; i < features.Length; i++)
            {
                if (features[i].NameHash != a || _scaled[i] == 0)
                {
                    continue;
                }
                for (int j = 0; j < features.Length; j++)
                {
                    if (features[j].NameHash != b || _scaled[j] == 0 || i == j)
                    {
                        continue;
                    }
                    ulong h = FeatureHash.Cross(features[i].Hash, features[j].Hash);
                    into.Add(FeatureHash.Slot(h, _mask), FeatureHash.Sign(h) * _scaled[i] * _scaled[j]);
                }
            }
        }
    }

    private double Scale(in RawFeature f)
    {
        if (f.Kind != RawFeatureKind.Numeric)
        {
            return f.Value;
        }
        if (_fixedScales.Count != 0 && _fixedScales.TryGetValue(f.NameHash, out double divisor))
        {
            return f.Value / divisor;
        }
        return _scaling == ScalingMode.Online ? Scaler.Standardise(f.NameHash, f.Value) : f.Value;
    }
}
