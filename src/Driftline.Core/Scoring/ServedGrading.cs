using Driftline.Core.Metrics;
using Driftline.Core.Snapshots;

namespace Driftline.Core.Scoring;

/// <summary>
/// With recalibration on, the measures of the probabilities served, beside the raw model's
/// (which the windows and alerts keep watching). Graded as the raw model is: binary on (p', y);
/// multiclass on the true class (p'_y, 1) for the log-loss, on the top label for the ECE, mean
/// confidence and accuracy, and on each class against the rest for the Brier score summed over
/// classes.
/// </summary>
internal sealed class ServedGrading
{
    private readonly BinEdges _edges;
    private readonly int _window;
    private readonly int _bins;
    private readonly bool _multiclass;
    // [0]: binary (p', y), multiclass the true class; multiclass then [1] the top label and
    // [2 + k] class k against the rest.
    private readonly CalibrationTotals[] _totals;
    private readonly CalibrationWindow[] _windows;

    /// <summary>Measures for a model with <paramref name="outputs"/> outputs (1 binary, else the class count).</summary>
    public ServedGrading(int outputs, int window, int bins)
    {
        _edges = new BinEdges(bins);
        _window = window;
        _bins = bins;
        _multiclass = outputs > 1;
        int count = _multiclass ? outputs + 2 : 1;
        _totals = Enumerable.Range(0, count).Select(_ => new CalibrationTotals(bins)).ToArray();
        _windows = Enumerable.Range(0, count).Select(_ => new CalibrationWindow(window, bins)).ToArray();
    }

    /// <summary>Grades one served prediction: its probabilities and the outcome (0/1, or the class index).</summary>
    public void Add(ReadOnlySpan<double> served, int y)
    {
        if (!_multiclass)
        {
            Add(0, served[0], y);
            return;
        }
        int top = 0;
        for (int k = 1; k < served.Length; k++)
        {
            if (served[k] > served[top])
            {
                top = k;
            }
        }
        Add(0, served[y], 1);
        Add(1, served[top], top == y ? 1 : 0);
        for (int k = 0; k < served.Length; k++)
        {
            Add(2 + k, served[k], k == y ? 1 : 0);
        }
    }

    /// <summary>
    /// The served stream's measures over the window or the whole run, as the engine's
    /// <see cref="ScoringEngine.Measures"/> gives the raw model's.
    /// </summary>
    public CalibrationSnapshot Measures(bool total)
    {
        var own = Of(0, total);
        if (!_multiclass || own.Count == 0)
        {
            return own;
        }
        double brier = 0;
        for (int c = 2; c < _totals.Length; c++)
        {
            brier += Of(c, total).Brier;
        }
        var top = Of(1, total);
        return new CalibrationSnapshot(own.Count, own.LogLoss, brier, top.Ece, top.MeanP, top.MeanY, top.CalibrationInTheLarge);
    }

    /// <summary>Writes the state into <paramref name="snapshot"/>.</summary>
    public void Export(EngineSnapshot snapshot)
    {
        snapshot.ServedTotals = _totals[0].ToState();
        snapshot.ServedWindow = _windows[0].ToArray();
        if (_multiclass)
        {
            snapshot.ServedClassTotals = _totals.Skip(1).Select(t => t.ToState()).ToList();
            snapshot.ServedClassWindows = _windows.Skip(1).Select(w => w.ToArray()).ToList();
        }
    }

    /// <summary>Continues from <paramref name="snapshot"/>; parts it lacks start empty.</summary>
    public void Import(EngineSnapshot snapshot)
    {
        if (snapshot.ServedTotals is { } totals)
        {
            _totals[0] = CalibrationTotals.Restore(totals);
        }
        if (snapshot.ServedWindow is { } window)
        {
            _windows[0] = CalibrationWindow.Restore(_window, _bins, window);
        }
        if (_multiclass && snapshot.ServedClassTotals is { } classTotals && snapshot.ServedClassWindows is { } classWindows
            && classTotals.Count == _totals.Length - 1 && classWindows.Count == _windows.Length - 1)
        {
            for (int c = 1; c < _totals.Length; c++)
            {
                _totals[c] = CalibrationTotals.Restore(classTotals[c - 1]);
                _windows[c] = CalibrationWindow.Restore(_window, _bins, classWindows[c - 1]);
            }
        }
    }

    private void Add(int channel, double p, int y)
    {
        var terms = GradedTerms.Of(p, y, _edges);
        _totals[channel].Add(terms);
        _windows[channel].Add(terms);
    }

    private CalibrationSnapshot Of(int channel, bool total) => total ? _totals[channel].Current : _windows[channel].Current;
}
