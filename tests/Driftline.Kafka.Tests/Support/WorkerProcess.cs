using System.Diagnostics;
using System.Text;

namespace Driftline.Kafka.Tests.Support;

/// <summary>The <c>driftline run</c> executable as a child process, for kill and signal tests.</summary>
internal sealed class WorkerProcess : IDisposable
{
    private readonly Process _process;
    private readonly StringBuilder _stderr = new();
    private readonly HashSet<int> _owned = [];
    private readonly List<(DateTime At, int Count)> _ownership = [];
    private readonly List<(DateTime At, string Line)> _timed = [];

    public WorkerProcess(string configPath, string bootstrap, IReadOnlyDictionary<string, string>? environment = null)
    {
        var start = new ProcessStartInfo(Path.Combine(AppContext.BaseDirectory, "driftline"))
        {
            RedirectStandardError = true,
            RedirectStandardOutput = true,
            UseShellExecute = false,
        };
        foreach (var (name, value) in environment ?? new Dictionary<string, string>())
        {
            start.Environment[name] = value;
        }
        foreach (var arg in new[] { "run", "--config", configPath, "--bootstrap", bootstrap })
        {
            start.ArgumentList.Add(arg);
        }
        _process = Process.Start(start) ?? throw new InvalidOperationException("could not start driftline");
        _process.ErrorDataReceived += (_, e) =>
        {
            lock (_stderr)
            {
                _stderr.AppendLine(e.Data);
                if (e.Data is not null)
                {
                    _timed.Add((DateTime.UtcNow, e.Data));
                }
                Track(e.Data);
            }
        };
        _process.OutputDataReceived += (_, _) => { };
        _process.BeginErrorReadLine();
        _process.BeginOutputReadLine();
    }

    public string Errors
    {
        get
        {
            lock (_stderr)
            {
                return _stderr.ToString();
            }
        }
    }

    public bool HasExited => _process.HasExited;

    /// <summary>Each line of standard error with the time this process read it (UTC), for timelines of a rebalance.</summary>
    public IReadOnlyList<(DateTime At, string Line)> TimedLines
    {
        get
        {
            lock (_stderr)
            {
                return [.. _timed];
            }
        }
    }

    /// <summary>Processor time the process has used so far (user and system).</summary>
    public TimeSpan ProcessorTime
    {
        get
        {
            _process.Refresh();
            return _process.TotalProcessorTime;
        }
    }

    /// <summary>The process id (each member's share of the group is told apart by it).</summary>
    public int Id => _process.Id;

    /// <summary>Partitions owned now, as the worker's log tells it.</summary>
    public IReadOnlyCollection<int> Owned
    {
        get
        {
            lock (_stderr)
            {
                return [.. _owned.Order()];
            }
        }
    }

    /// <summary>When the worker first owned a partition, or null.</summary>
    public DateTime? FirstOwned
    {
        get
        {
            lock (_stderr)
            {
                return _ownership.Where(o => o.Count > 0).Select(o => (DateTime?)o.At).FirstOrDefault();
            }
        }
    }

    /// <summary>When the worker logged that it joins the group (UTC), after the runtime started and the settings were read.</summary>
    public DateTime? JoinedAt { get; private set; }

    /// <summary>When the process started (UTC).</summary>
    public DateTime StartedAt { get; } = DateTime.UtcNow;

    /// <summary>Follows the worker's "Partition N assigned" and "Partitions [..] revoked/lost" log lines.</summary>
    private void Track(string? line)
    {
        if (line is null)
        {
            return;
        }
        var assigned = System.Text.RegularExpressions.Regex.Match(line, @"\bPartition (\d+) assigned");
        if (assigned.Success)
        {
            _owned.Add(int.Parse(assigned.Groups[1].Value, System.Globalization.CultureInfo.InvariantCulture));
        }
        var gone = System.Text.RegularExpressions.Regex.Match(line, @"\bPartitions \[([\d, ]*)\] (revoked|lost)");
        if (gone.Success)
        {
            foreach (var p in gone.Groups[1].Value.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries))
            {
                _owned.Remove(int.Parse(p, System.Globalization.CultureInfo.InvariantCulture));
            }
        }
        if (JoinedAt is null && line.Contains("Worker joining group", StringComparison.Ordinal))
        {
            JoinedAt = DateTime.UtcNow;
        }
        if (assigned.Success || gone.Success)
        {
            _ownership.Add((DateTime.UtcNow, _owned.Count));
        }
    }

    /// <summary>True once <see cref="Kill"/> was called.</summary>
    public bool Killed { get; private set; }

    /// <summary>When <see cref="Kill"/> was called (UTC), or null.</summary>
    public DateTime? KilledAt { get; private set; }

    /// <summary>SIGKILL: no chance to checkpoint or flush.</summary>
    public void Kill()
    {
        Killed = true;
        KilledAt = DateTime.UtcNow;
        _process.Kill();
        _process.WaitForExit(10_000);
    }

    /// <summary>True once <see cref="Terminate"/> was called: the member was asked to leave.</summary>
    public bool Terminated { get; private set; }

    /// <summary>SIGTERM, then the exit code.</summary>
    public int Terminate(TimeSpan limit)
    {
        Terminated = true;
        using (var kill = Process.Start("kill", ["-TERM", _process.Id.ToString(System.Globalization.CultureInfo.InvariantCulture)]))
        {
            kill.WaitForExit();
        }
        if (!_process.WaitForExit(limit))
        {
            _process.Kill();
            throw new TimeoutException("driftline did not stop on SIGTERM:\n" + Errors);
        }
        _process.WaitForExit();
        return _process.ExitCode;
    }

    public void Dispose()
    {
        if (!_process.HasExited)
        {
            _process.Kill();
        }
        _process.Dispose();
    }
}
