using Confluent.Kafka;

namespace Driftline.Kafka.Worker;

/// <summary>
/// The outputs produced between two checkpoint cuts, counted until the broker has answered
/// for each of them. A checkpoint's offsets may be committed only once every output of the
/// records before its cut is acknowledged; waiting for this epoch says exactly that, while
/// outputs produced after the cut (the next epoch, with its own handler) keep flowing, so the
/// loop no longer stops for a producer flush.
/// </summary>
internal sealed class DeliveryEpoch
{
    private readonly TaskCompletionSource _acknowledged = new(TaskCreationOptions.RunContinuationsAsynchronously);
    private long _outstanding;
    private int _sealed;

    /// <summary>Creates an epoch whose failures are recorded in <paramref name="failure"/>.</summary>
    public DeliveryEpoch(DeliveryFailure failure)
    {
        Handler = report =>
        {
            if (report.Error.IsError)
            {
                failure.Record(report);
            }
            failure.Probe?.Delivered(report);
            // Interlocked.Decrement is a full fence, as is the Exchange in Seal: one of the two sees the other.
            if (Interlocked.Decrement(ref _outstanding) == 0 && Volatile.Read(ref _sealed) == 1)
            {
                _acknowledged.TrySetResult();
            }
        };
    }

    /// <summary>The delivery handler of this epoch's messages (one delegate, no closure per message).</summary>
    public Action<DeliveryReport<byte[]?, byte[]>> Handler { get; }

    /// <summary>Counts a message about to be produced with <see cref="Handler"/>.</summary>
    public void Sending() => Interlocked.Increment(ref _outstanding);

    /// <summary>Takes back <see cref="Sending"/> for a message the client refused (its handler never runs).</summary>
    public void NotSent()
    {
        if (Interlocked.Decrement(ref _outstanding) == 0 && Volatile.Read(ref _sealed) == 1)
        {
            _acknowledged.TrySetResult();
        }
    }

    /// <summary>Closes the epoch: no message is added after this (the engines are idle at a cut).</summary>
    public void Seal()
    {
        Interlocked.Exchange(ref _sealed, 1);
        if (Interlocked.Read(ref _outstanding) == 0)
        {
            _acknowledged.TrySetResult();
        }
    }

    /// <summary>
    /// Waits until the broker has answered for every message of the sealed epoch, calling
    /// <paramref name="throwIfFatal"/> every half second (a failed delivery or a fatal client
    /// error stops the wait); throws <see cref="KafkaWorkerException"/> after <paramref name="limit"/>.
    /// </summary>
    public void Wait(TimeSpan limit, Action throwIfFatal)
    {
        var clock = System.Diagnostics.Stopwatch.StartNew();
        while (!_acknowledged.Task.Wait(TimeSpan.FromMilliseconds(500)))
        {
            throwIfFatal();
            if (clock.Elapsed > limit)
            {
                throw new KafkaWorkerException($"the broker has not acknowledged the predictions within {limit.TotalSeconds:0} s; stopping without committing (a restart resumes from the last checkpoint)");
            }
        }
        throwIfFatal();
    }
}
