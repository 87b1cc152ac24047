using System.Diagnostics.Metrics;
using Prometheus;

namespace Driftline.Cli;

/// <summary>
/// Carries one <see cref="Meter"/>'s observable instruments into a prometheus-net registry: at
/// each scrape the registry asks the listener to observe them, and each value is set on the
/// matching Prometheus counter or gauge, which prometheus-net then writes in the text format.
/// </summary>
/// <remarks>
/// Names follow the Prometheus conventions the endpoint has always served: dots become
/// underscores, a time in seconds ends in <c>_seconds</c>, a counter in <c>_total</c>
/// (common practice, from the Prometheus naming guide). Only instruments of the given meter
/// instance are taken, so two workers in one process (as in the tests) do not mix.
/// </remarks>
internal sealed class MeterScrape : IDisposable
{
    private readonly MeterListener _listener = new();
    private readonly Dictionary<Instrument, Action<double>> _sinks = [];
    private readonly Lock _gate = new();

    /// <summary>Publishes <paramref name="meter"/>'s observable instruments in <paramref name="registry"/>.</summary>
    public MeterScrape(Meter meter, CollectorRegistry registry)
    {
        ArgumentNullException.ThrowIfNull(meter);
        ArgumentNullException.ThrowIfNull(registry);
        var factory = Metrics.WithCustomRegistry(registry);
        _listener.InstrumentPublished = (instrument, listener) =>
        {
            if (!ReferenceEquals(instrument.Meter, meter))
            {
                return;
            }
            string name = PrometheusName(instrument);
            string help = instrument.Description ?? instrument.Name;
            Action<double> sink = instrument is ObservableCounter<long> or ObservableCounter<double>
                ? factory.CreateCounter(name, help).IncTo
                : factory.CreateGauge(name, help).Set;
            lock (_gate)
            {
                _sinks[instrument] = sink;
            }
            listener.EnableMeasurementEvents(instrument);
        };
        _listener.SetMeasurementEventCallback<long>((instrument, value, _, _) => Record(instrument, value));
        _listener.SetMeasurementEventCallback<int>((instrument, value, _, _) => Record(instrument, value));
        _listener.SetMeasurementEventCallback<double>((instrument, value, _, _) => Record(instrument, value));
        _listener.Start();
        registry.AddBeforeCollectCallback(_listener.RecordObservableInstruments);
    }

    /// <summary>The Prometheus name of <paramref name="instrument"/>.</summary>
    internal static string PrometheusName(Instrument instrument)
    {
        string name = instrument.Name.Replace('.', '_');
        if (instrument.Unit == "s")
        {
            name += "_seconds";
        }
        return instrument is ObservableCounter<long> or ObservableCounter<double> ? name + "_total" : name;
    }

    private void Record(Instrument instrument, double value)
    {
        Action<double>? sink;
        lock (_gate)
        {
            _sinks.TryGetValue(instrument, out sink);
        }
        sink?.Invoke(value);
    }

    /// <inheritdoc />
    public void Dispose() => _listener.Dispose();
}
