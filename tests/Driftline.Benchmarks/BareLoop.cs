using Driftline.Core.Events;
using Driftline.Core.Features;
using Driftline.Core.Learning;
using Driftline.Core.Options;

namespace Driftline.Benchmarks;

/// <summary>
/// The baseline: read the file, parse each line and update the model for each inline label,
/// on one thread, with nothing else — no pending labels, windows, alerts or outputs. The
/// replay pipeline does all of that on top; its speed is reported as a ratio to this loop.
/// </summary>
internal static class BareLoop
{
    /// <summary>Runs the loop over <paramref name="path"/>; returns the number of events scored.</summary>
    public static long Run(string path)
    {
        var options = new ModelOptions();
        var parser = new EventParser();
        var record = new ParsedRecord();
        var featurizer = new Featurizer(options);
        var learner = OnlineLearner.Create(options);
        var x = new SparseVector();
        long events = 0;
        double sink = 0;
        using var file = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, 1 << 16, FileOptions.SequentialScan);
        var buffer = new byte[1 << 20];
        int filled = 0;
        while (true)
        {
            int read = file.Read(buffer, filled, buffer.Length - filled);
            filled += read;
            var span = buffer.AsSpan(0, filled);
            int consumed = 0;
            while (true)
            {
                int nl = span[consumed..].IndexOf((byte)'\n');
                if (nl < 0)
                {
                    break;
                }
                if (parser.TryParse(span.Slice(consumed, nl), record, out _) && record.Kind == RecordKind.Event)
                {
                    featurizer.Featurize(record, x);
                    double p = learner.Predict(x);
                    sink += p;
                    if (record.HasLabel)
                    {
                        learner.Update(x, record.Label, p);
                    }
                    events++;
                }
                consumed += nl + 1;
            }
            span[consumed..].CopyTo(buffer);
            filled -= consumed;
            if (read == 0)
            {
                break;
            }
        }
        GC.KeepAlive(sink);
        return events;
    }
}
