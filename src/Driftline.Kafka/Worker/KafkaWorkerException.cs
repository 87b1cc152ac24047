namespace Driftline.Kafka.Worker;

/// <summary>
/// The worker cannot go on (a fatal client error, a lost prediction, an unreadable
/// checkpoint, topics that are not co-partitioned). The message is the one sentence the
/// operator sees; nothing was committed past what is safely done.
/// </summary>
internal sealed class KafkaWorkerException : Exception
{
    /// <summary>Creates the exception with the operator's message.</summary>
    public KafkaWorkerException(string message) : base(message)
    {
    }

    /// <summary>Creates the exception with the operator's message and its cause.</summary>
    public KafkaWorkerException(string message, Exception inner) : base(message, inner)
    {
    }

    /// <summary>True when the worker stopped because no broker was reachable for <c>Worker:ExitAfterBrokerDown</c> (its own exit code).</summary>
    public bool BrokerDown { get; init; }

    /// <summary>Creates the exception with a generic message.</summary>
    public KafkaWorkerException() : base("the Kafka worker stopped on a fatal error")
    {
    }
}
