using System.Reflection;
using Confluent.Kafka;

namespace Driftline.Kafka.Tests.Support;

/// <summary>
/// A producer that passes every call to a real one, and runs <see cref="BeforeManifest"/>
/// once, just before the first checkpoint manifest (a JSON value, where chunks start with
/// <c>DLCK</c>) is produced: a test puts another writer's whole write there, so it lands
/// between this writer's chunks and its manifest, as two owners writing at once can.
/// </summary>
public class GatedProducer : DispatchProxy
{
    private IProducer<byte[]?, byte[]> _inner = null!;

    /// <summary>Runs once, before the first manifest goes out; null afterwards.</summary>
    public Action? BeforeManifest { get; set; }

    /// <summary>Wraps <paramref name="inner"/>.</summary>
    public static (IProducer<byte[]?, byte[]> Producer, GatedProducer Gate) Wrap(IProducer<byte[]?, byte[]> inner)
    {
        var producer = Create<IProducer<byte[]?, byte[]>, GatedProducer>();
        var gate = (GatedProducer)(object)producer;
        gate._inner = inner;
        return (producer, gate);
    }

    /// <inheritdoc/>
    protected override object? Invoke(MethodInfo? targetMethod, object?[]? args)
    {
        ArgumentNullException.ThrowIfNull(targetMethod);
        if (targetMethod.Name == nameof(IProducer<byte[]?, byte[]>.ProduceAsync) && args is [_, Message<byte[]?, byte[]> { Value: [(byte)'{', ..] }, ..]
            && BeforeManifest is { } before)
        {
            BeforeManifest = null;
            before();
        }
        try
        {
            return targetMethod.Invoke(_inner, args);
        }
        catch (TargetInvocationException ex) when (ex.InnerException is not null)
        {
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Throw(ex.InnerException);
            throw;
        }
    }
}
