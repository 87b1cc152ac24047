using Driftline.Core.Options;
using Driftline.Kafka.Options;
using Driftline.Kafka.Worker;

namespace Driftline.Kafka.Tests.Support;

/// <summary>Runs one in-process worker on its own thread until stopped.</summary>
internal sealed class WorkerHost : IDisposable
{
    private readonly CancellationTokenSource _stop = new();
    private readonly Thread _thread;

    public WorkerHost(KafkaOptions options, DriftlineOptions? core = null)
    {
        Options = options;
        Worker = new KafkaWorker(options, core ?? new DriftlineOptions());
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
        LabelHold = TimeSpan.FromMilliseconds(200),
        Client = new() { ["group.protocol"] = "consumer" },
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
