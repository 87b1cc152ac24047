using System.Diagnostics.Metrics;
using Driftline.Kafka.Worker;
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
    private readonly Dictionary<Instrument, LabelledSeries> _labelled = [];
    private readonly Lock _gate = new();
    private readonly Lock _scrape = new(); // two scrapes at once must not clear each other's marks
    private readonly MetricFactory _factory;

    /// <summary>Publishes <paramref name="meter"/>'s observable instruments in <paramref name="registry"/>.</summary>
    public MeterScrape(Meter meter, CollectorRegistry registry)
    {
        ArgumentNullException.ThrowIfNull(meter);
        ArgumentNullException.ThrowIfNull(registry);
        _factory = Metrics.WithCustomRegistry(registry);
        _listener.InstrumentPublished = (instrument, listener) =>
        {
            if (!ReferenceEquals(instrument.Meter, meter))
            {
                return;
            }
            // An instrument observed with tags (one series per challenger) gets its labels at
            // its first measurement; the others are served from the start, zero until observed.
            if (!IsTagged(instrument))
            {
                string name = PrometheusName(instrument);
                string help = instrument.Description ?? instrument.Name;
                Action<double> sink = IsCounter(instrument) ? _factory.CreateCounter(name, help).IncTo : _factory.CreateGauge(name, help).Set;
                lock (_gate)
                {
                    _sinks[instrument] = sink;
                }
            }
            listener.EnableMeasurementEvents(instrument);
        };
        _listener.SetMeasurementEventCallback<long>((instrument, value, tags, _) => Record(instrument, value, tags));
        _listener.SetMeasurementEventCallback<int>((instrument, value, tags, _) => Record(instrument, value, tags));
        _listener.SetMeasurementEventCallback<double>((instrument, value, tags, _) => Record(instrument, value, tags));
        _listener.Start();
        registry.AddBeforeCollectCallback(Observe);
    }

    // A labelled series not observed in this scrape (a partition given up, a challenger
    // promoted) is removed, so /metrics never serves a frozen value for something gone.
    private void Observe()
    {
        lock (_scrape)
        {
            ObserveOnce();
        }
    }

    private void ObserveOnce()
    {
        lock (_gate)
        {
            foreach (var series in _labelled.Values)
            {
                series.Seen.Clear();
            }
        }
        _listener.RecordObservableInstruments();
        lock (_gate)
        {
            foreach (var series in _labelled.Values)
            {
                foreach (var gone in series.Served.Keys.Where(k => !series.Seen.Contains(k)).ToList())
                {
                    series.Remove(series.Served[gone]);
                    series.Served.Remove(gone);
                }
            }
        }
    }

    // Such an instrument says so with an instrument-level tag (WorkerMeter.LabelsTag).
    private static bool IsTagged(Instrument instrument) => instrument.Tags?.Any(t => t.Key == WorkerMeter.LabelsTag) == true;

    private static bool IsCounter(Instrument instrument) => instrument is ObservableCounter<long> or ObservableCounter<double>;

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

    private void Record(Instrument instrument, double value, ReadOnlySpan<KeyValuePair<string, object?>> tags)
    {
        if (tags.Length > 0)
        {
            var names = new string[tags.Length];
            var values = new string[tags.Length];
            for (int i = 0; i < tags.Length; i++)
            {
                names[i] = tags[i].Key;
                values[i] = Convert.ToString(tags[i].Value, System.Globalization.CultureInfo.InvariantCulture) ?? "";
            }
            lock (_gate)
            {
                if (!_labelled.TryGetValue(instrument, out var series))
                {
                    string name = PrometheusName(instrument);
                    string help = instrument.Description ?? instrument.Name;
                    if (IsCounter(instrument))
                    {
                        var counter = _factory.CreateCounter(name, help, names);
                        series = new LabelledSeries((v, l) => counter.WithLabels(l).IncTo(v), l => counter.RemoveLabelled(l));
                    }
                    else
                    {
                        var gauge = _factory.CreateGauge(name, help, names);
                        series = new LabelledSeries((v, l) => gauge.WithLabels(l).Set(v), l => gauge.RemoveLabelled(l));
                    }
                    _labelled[instrument] = series;
                }
                string key = string.Join('\u001f', values);
                series.Served[key] = values;
                series.Seen.Add(key);
                series.Set(value, values);
            }
            return;
        }
        Action<double>? sink;
        lock (_gate)
        {
            _sinks.TryGetValue(instrument, out sink);
        }
        sink?.Invoke(value);
    }

    /// <inheritdoc />
    public void Dispose() => _listener.Dispose();

    /// <summary>One labelled instrument's Prometheus series: every label set served, and those observed in the scrape under way.</summary>
    private sealed record LabelledSeries(Action<double, string[]> Set, Action<string[]> Remove)
    {
        public Dictionary<string, string[]> Served { get; } = [];

        public HashSet<string> Seen { get; } = [];
    }
}
