using System.Text;
using Driftline.Core.Events;
using Driftline.Core.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Scoring;

/// <summary>Feeds JSON lines to an engine the way the pipeline does.</summary>
internal static class EngineDriver
{
    public static List<StepOutcome> Feed(ScoringEngine engine, IEnumerable<string> lines)
    {
        var parser = new EventParser { SegmentFeature = engine.Options.Monitor.SegmentBy, Classes = engine.Options.Model.Classes };
        var record = new ParsedRecord();
        var outcomes = new List<StepOutcome>();
        foreach (var line in lines)
        {
            Assert.True(parser.TryParse(Encoding.UTF8.GetBytes(line), record, out var error), error);
            outcomes.Add(engine.Process(record));
        }
        return outcomes;
    }
}
