using Driftline.Core.Options;
using Driftline.Kafka.Options;
using Driftline.Kafka.Worker;
using Serilog;

namespace Driftline.Kafka.Tests.Support;

/// <summary>Runs one in-process worker on its own thread until stopped.</summary>
internal sealed class WorkerHost : IDisposable
{
    private readonly CancellationTokenSource _stop = new();
    private readonly Thread _thread;

    static WorkerHost()
    {
        // DRIFTLINE_TEST_LOG=1 shows the workers' logs (assignments, checkpoints) when a test needs explaining.
        if (Environment.GetEnvironmentVariable("DRIFTLINE_TEST_LOG") == "1")
        {
            Serilog.Log.Logger = new Serilog.LoggerConfiguration().WriteTo.Console(standardErrorFromLevel: Serilog.Events.LogEventLevel.Verbose).CreateLogger();
        }
    }

    public WorkerHost(KafkaOptions options, DriftlineOptions? core = null, TimeSpan exitAfterBrokerDown = default, IReadOnlyList<ChallengerConfig>? challengers = null)
    {
        Options = options;
        Worker = new KafkaWorker(options, core ?? new DriftlineOptions()) { ExitAfterBrokerDown = exitAfterBrokerDown, Challengers = challengers ?? [] };
        _thread = new Thread(() =>
        {
            try
            {
                Worker.Run(_stop.Token);
            }
            catch (Exception ex)
            {
                Failure = ex;
            }
        }) { IsBackground = true, Name = "worker " + options.CheckpointDir };
        _thread.Start();
    }

    public KafkaOptions Options { get; }

    public KafkaWorker Worker { get; }

    public Exception? Failure { get; private set; }

    public static KafkaOptions OptionsFor(string bootstrap, string prefix, string checkpoints, string group = "g") => new()
    {
        Bootstrap = bootstrap,
        Group = prefix + "-" + group,
        EventsTopic = prefix + "-events",
        LabelsTopic = prefix + "-labels",
        PredictionsTopic = prefix + "-predictions",
        AlertsTopic = prefix + "-alerts",
        DeadLetterTopic = prefix + "-dead",
        CheckpointDir = checkpoints,
        CheckpointEveryLabels = 500,
        CheckpointEvery = TimeSpan.FromSeconds(2),
        // The mock answers an idle fetch only at fetch.wait.max.ms; keep that well under the label hold.
        LabelHold = TimeSpan.FromMilliseconds(500),
        Client = new() { ["group.protocol"] = "consumer", ["fetch.wait.max.ms"] = "50" },
    };

    /// <summary>Waits until <paramref name="condition"/> holds or the time is up; fails the test on a worker failure.</summary>
    public void WaitFor(Func<WorkerStats, bool> condition, TimeSpan limit)
    {
        var deadline = DateTime.UtcNow + limit;
        while (!condition(Worker.Stats))
        {
            if (Failure is not null)
            {
                throw new InvalidOperationException("worker failed", Failure);
            }
            if (DateTime.UtcNow > deadline)
            {
                throw new TimeoutException($"worker condition not met in {limit}: events in {Worker.Stats.EventsIn}, labels in {Worker.Stats.LabelsIn}, predictions {Worker.Stats.Predictions}, partitions {Worker.Stats.Partitions}");
            }
            Thread.Sleep(20);
        }
    }

    /// <summary>Waits until the worker has stopped with a failure, and returns it; fails the test when it keeps running.</summary>
    public Exception WaitForFailure(TimeSpan limit)
    {
        var deadline = DateTime.UtcNow + limit;
        while (Failure is null)
        {
            if (DateTime.UtcNow > deadline)
            {
                throw new TimeoutException($"the worker did not stop within {limit}");
            }
            Thread.Sleep(20);
        }
        return Failure;
    }

    /// <summary>Graceful stop: checkpoint, commit, leave.</summary>
    public void Stop()
    {
        _stop.Cancel();
        if (!_thread.Join(TimeSpan.FromSeconds(60)))
        {
            throw new TimeoutException("worker did not stop");
        }
        if (Failure is not null)
        {
            throw new InvalidOperationException("worker failed", Failure);
        }
    }

    public void Dispose()
    {
        _stop.Cancel();
        _thread.Join(TimeSpan.FromSeconds(60));
        _stop.Dispose();
    }
}
