using System.Diagnostics;
using System.Text;

namespace Driftline.Kafka.Tests.Support;

/// <summary>The <c>driftline run</c> executable as a child process, for kill and signal tests.</summary>
internal sealed class WorkerProcess : IDisposable
{
    private readonly Process _process;
    private readonly StringBuilder _stderr = new();

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

    /// <summary>SIGKILL: no chance to checkpoint or flush.</summary>
    public void Kill()
    {
        _process.Kill();
        _process.WaitForExit(10_000);
    }

    /// <summary>SIGTERM, then the exit code.</summary>
    public int Terminate(TimeSpan limit)
    {
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
