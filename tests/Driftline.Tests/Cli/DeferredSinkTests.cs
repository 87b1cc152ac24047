using Driftline.Cli;
using Serilog;
using Serilog.Core;
using Serilog.Events;
using Xunit;

namespace Driftline.Tests.Cli;

public sealed class DeferredSinkTests
{
    private sealed class Collecting : ILogEventSink
    {
        public List<string> Messages { get; } = [];

        public void Emit(LogEvent logEvent) => Messages.Add(logEvent.RenderMessage());
    }

    [Fact]
    public void Dispose_NothingLogged_NeverBuildsTheSink()
    {
        int built = 0;
        var deferred = new DeferredSink(() =>
        {
            built++;
            return new LoggerConfiguration().CreateLogger();
        });
        using (var logger = new LoggerConfiguration().WriteTo.Sink(deferred).CreateLogger())
        {
            logger.Debug("below the default minimum level, so never emitted");
        }

        Assert.Equal(0, built);
        Assert.False(deferred.IsCreated);
    }

    [Fact]
    public void Emit_SeveralEvents_BuildsOnceAndPassesEachThroughInOrder()
    {
        int built = 0;
        var collected = new Collecting();
        var deferred = new DeferredSink(() =>
        {
            built++;
            return new LoggerConfiguration().WriteTo.Sink(collected).CreateLogger();
        });
        using (var logger = new LoggerConfiguration().WriteTo.Sink(deferred).CreateLogger())
        {
            logger.Warning("Dead letter at line {Line}", 3);
            logger.Information("Input ended: {Events} events", 20);
        }

        Assert.Equal(1, built);
        Assert.Equal(["Dead letter at line 3", "Input ended: 20 events"], collected.Messages);
    }
}
