using System.Globalization;

namespace Driftline.Cli;

/// <summary>
/// Progress of a long replay on standard error, never standard output (which may carry
/// data): on a terminal one bar redrawn in place, otherwise a plain line every
/// <see cref="LineEvery"/>, so logs and CI output stay readable. Short runs that finish
/// before the first line print nothing.
/// </summary>
/// <remarks>
/// Fed from the pipeline's scoring thread after each batch; it only formats and writes, so
/// it never slows scoring by more than a clock read per batch. Time left comes from input
/// bytes scored against the file's length, and is left out when the length is unknown (stdin).
/// </remarks>
internal sealed class ReplayProgress
{
    /// <summary>Interval between plain lines.</summary>
    public static readonly TimeSpan LineEvery = TimeSpan.FromSeconds(5);

    /// <summary>Interval between redraws of the bar.</summary>
    public static readonly TimeSpan RedrawEvery = TimeSpan.FromMilliseconds(200);

    private const int BarWidth = 24;
    private static readonly CultureInfo C = CultureInfo.InvariantCulture;

    private readonly TextWriter _error;
    private readonly bool _terminal;
    private readonly long? _totalBytes;
    private readonly TimeProvider _time;
    private readonly long _start;
    private TimeSpan _lastWrite;
    private bool _wrote;
    private int _lastWidth;

    /// <summary>Creates a reporter.</summary>
    /// <param name="error">Standard error.</param>
    /// <param name="terminal">True when <paramref name="error"/> is a terminal.</param>
    /// <param name="totalBytes">Input length, or null when unknown.</param>
    /// <param name="time">Clock (a fake one in tests).</param>
    public ReplayProgress(TextWriter error, bool terminal, long? totalBytes, TimeProvider? time = null)
    {
        _error = error;
        _terminal = terminal;
        _totalBytes = totalBytes is > 0 ? totalBytes : null;
        _time = time ?? TimeProvider.System;
        _start = _time.GetTimestamp();
    }

    /// <summary>Reports the state after a batch; writes only when it is time to.</summary>
    public void Report(long bytes, long events, long labels, long lateLabels, long alerts)
    {
        var elapsed = _time.GetElapsedTime(_start);
        if (elapsed - _lastWrite < (_terminal ? RedrawEvery : LineEvery))
        {
            return;
        }
        _lastWrite = elapsed;
        Write(Format(elapsed, bytes, events, labels, lateLabels, alerts), final: false);
    }

    /// <summary>Writes the final state, when anything was written before.</summary>
    public void Done(long bytes, long events, long labels, long lateLabels, long alerts)
    {
        if (!_wrote)
        {
            return;
        }
        Write(Format(_time.GetElapsedTime(_start), bytes, events, labels, lateLabels, alerts, done: true), final: true);
    }

    /// <summary>The progress text (without bar redraw control characters).</summary>
    public string Format(TimeSpan elapsed, long bytes, long events, long labels, long lateLabels, long alerts, bool done = false)
    {
        double seconds = Math.Max(elapsed.TotalSeconds, 1e-3);
        double fraction = _totalBytes is long total ? Math.Clamp((double)bytes / total, 0, 1) : double.NaN;
        string rate = (events / seconds).ToString("N0", C);
        string counts = $"{events.ToString("N0", C)} events, {rate}/s, {labels.ToString("N0", C)} labels ({lateLabels.ToString("N0", C)} late joined), {alerts.ToString("N0", C)} {(alerts == 1 ? "alert" : "alerts")}";
        string left = done ? $"done in {Duration(elapsed)}"
            : double.IsNaN(fraction) || fraction <= 0 ? $"{Duration(elapsed)} so far"
            : Left(TimeSpan.FromSeconds(seconds * (1 - fraction) / fraction));
        if (_terminal)
        {
            string bar = double.IsNaN(fraction) ? "" : Bar(done ? 1 : fraction) + " ";
            return $"{bar}{counts}, {left}";
        }
        string percent = double.IsNaN(fraction) ? "" : (100 * (done ? 1 : fraction)).ToString("0", C) + "%, ";
        return $"replay: {percent}{counts}, {left}";
    }

    private void Write(string text, bool final)
    {
        _wrote = true;
        if (_terminal)
        {
            // Pad over the previous, longer line; a newline only at the end keeps the bar on one line.
            _error.Write("\r" + text.PadRight(_lastWidth));
            _lastWidth = text.Length;
            if (final)
            {
                _error.WriteLine();
            }
        }
        else
        {
            _error.WriteLine(text);
        }
        _error.Flush();
    }

    private static string Bar(double fraction)
    {
        int filled = (int)Math.Round(fraction * BarWidth);
        return "[" + new string('#', filled) + new string('-', BarWidth - filled) + "] " + (100 * fraction).ToString("0", C).PadLeft(3) + "%";
    }

    private static string Left(TimeSpan t) => t < TimeSpan.FromSeconds(1) ? "under 1 s left" : $"about {Duration(t)} left";

    private static string Duration(TimeSpan t) => t.TotalHours >= 1
        ? $"{(int)t.TotalHours} h {t.Minutes:00} min"
        : t.TotalMinutes >= 1 ? $"{(int)t.TotalMinutes} min {t.Seconds:00} s" : $"{t.TotalSeconds.ToString("0", C)} s";
}
