using System.Net;
using System.Net.Sockets;
using System.Text;

namespace Driftline.Tests.Support;

/// <summary>
/// An HTTP receiver on 127.0.0.1 with a free port, answering each request with the status the
/// script gives for its index (0 for the first). The script may wait (to hold the sender up);
/// it is handed a token that is cancelled when the receiver is disposed, so nothing hangs.
/// </summary>
internal sealed class LoopbackReceiver : IAsyncDisposable
{
    private readonly HttpListener _listener;
    private readonly Func<int, CancellationToken, Task<int>> _script;
    private readonly CancellationTokenSource _stopping = new();
    private readonly List<ReceivedRequest> _requests = [];
    private readonly SemaphoreSlim _arrived = new(0);
    private readonly Task _loop;

    public LoopbackReceiver(Func<int, CancellationToken, Task<int>> script)
    {
        _script = script;
        (_listener, Url) = Listen();
        _loop = Task.Run(AcceptAsync);
    }

    /// <summary>A receiver that answers every request with <paramref name="status"/>.</summary>
    public LoopbackReceiver(int status = 200)
        : this((_, _) => Task.FromResult(status))
    {
    }

    public string Url { get; }

    public IReadOnlyList<ReceivedRequest> Requests
    {
        get
        {
            lock (_requests)
            {
                return [.. _requests];
            }
        }
    }

    /// <summary>A loopback address with nothing listening (a port taken and released at once).</summary>
    public static string ClosedUrl()
    {
        using var socket = new TcpListener(IPAddress.Loopback, 0);
        socket.Start();
        int port = ((IPEndPoint)socket.LocalEndpoint).Port;
        socket.Stop();
        return $"http://127.0.0.1:{port}/alerts";
    }

    /// <summary>Waits until <paramref name="count"/> requests in all have arrived, for at most 10 s.</summary>
    public async Task WaitForAsync(int count)
    {
        using var limit = new CancellationTokenSource(TimeSpan.FromSeconds(10));
        while (Requests.Count < count)
        {
            await _arrived.WaitAsync(limit.Token);
        }
    }

    public async ValueTask DisposeAsync()
    {
        await _stopping.CancelAsync();
        _listener.Stop();
        _listener.Close();
        try
        {
            await _loop;
        }
        catch (ObjectDisposedException)
        {
        }
        _stopping.Dispose();
    }

    private static (HttpListener Listener, string Url) Listen()
    {
        // The port is free when probed; another process may take it before HttpListener does, so try a few.
        for (int tries = 0; ; tries++)
        {
            using var probe = new TcpListener(IPAddress.Loopback, 0);
            probe.Start();
            int port = ((IPEndPoint)probe.LocalEndpoint).Port;
            probe.Stop();
            var listener = new HttpListener();
            listener.Prefixes.Add($"http://127.0.0.1:{port}/");
            try
            {
                listener.Start();
                return (listener, $"http://127.0.0.1:{port}/alerts");
            }
            catch (HttpListenerException) when (tries < 10)
            {
                listener.Close();
            }
        }
    }

    private async Task AcceptAsync()
    {
        while (!_stopping.IsCancellationRequested)
        {
            HttpListenerContext context;
            try
            {
                context = await _listener.GetContextAsync();
            }
            catch (Exception ex) when (ex is HttpListenerException or ObjectDisposedException or InvalidOperationException)
            {
                return;
            }
            _ = Task.Run(() => AnswerAsync(context));
        }
    }

    private async Task AnswerAsync(HttpListenerContext context)
    {
        try
        {
            string body;
            using (var reader = new StreamReader(context.Request.InputStream, Encoding.UTF8))
            {
                body = await reader.ReadToEndAsync();
            }
            int index;
            lock (_requests)
            {
                index = _requests.Count;
                _requests.Add(new ReceivedRequest(context.Request.HttpMethod, context.Request.ContentType, context.Request.Headers["Idempotency-Key"], body));
            }
            _arrived.Release();
            int status = await _script(index, _stopping.Token);
            context.Response.StatusCode = status;
            context.Response.Close();
        }
        catch (Exception ex) when (ex is OperationCanceledException or HttpListenerException or ObjectDisposedException or IOException)
        {
            // The receiver is shutting down or the sender gave up; either way nobody waits for this answer.
        }
    }
}
