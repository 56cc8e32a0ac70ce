using System.Collections.Concurrent;
using System.Net;
using System.Net.Sockets;
using System.Threading.Channels;

namespace HumWatch.Host.Tests.Notify.Support;

/// <summary>One HTTP request as the receiver read it.</summary>
internal sealed record ReceivedRequest(string Method, string Path, string? ContentType, IReadOnlyDictionary<string, string> Headers, byte[] Body);

/// <summary>
/// A real HTTP server (System.Net.HttpListener) on 127.0.0.1 at a free port: records every request and answers with
/// the queued status codes, then <see cref="DefaultStatus"/>. While <see cref="Hold"/> is set, answers wait for
/// <see cref="Release"/>, so a test can keep a delivery in flight.
/// </summary>
internal sealed class LoopbackWebhookReceiver : IDisposable
{
    private readonly HttpListener _listener;
    private readonly Channel<ReceivedRequest> _received = Channel.CreateUnbounded<ReceivedRequest>();
    private readonly ConcurrentQueue<int> _statuses = new();
    private readonly TaskCompletionSource _released = new(TaskCreationOptions.RunContinuationsAsynchronously);
    private readonly Task _serving;
    private int _count;

    private LoopbackWebhookReceiver(HttpListener listener, int port)
    {
        _listener = listener;
        BaseUrl = $"http://127.0.0.1:{port}/";
        _serving = Task.Run(ServeAsync);
    }

    /// <summary>http://127.0.0.1:&lt;port&gt;/</summary>
    public string BaseUrl { get; }

    /// <summary>Status of every answer once the queued ones are used. The default is 200.</summary>
    public int DefaultStatus { get; set; } = 200;

    /// <summary>When true, each answer waits for <see cref="Release"/>.</summary>
    public bool Hold { get; set; }

    /// <summary>Requests received so far.</summary>
    public int Count => Volatile.Read(ref _count);

    public static LoopbackWebhookReceiver Start()
    {
        // HttpListener takes no port 0: ask the system for a free port, and try again if another process took it meanwhile.
        for (var attempt = 0; ; attempt++)
        {
            var port = FreePort();
            var listener = new HttpListener();
            listener.Prefixes.Add($"http://127.0.0.1:{port}/");
            try
            {
                listener.Start();
                return new LoopbackWebhookReceiver(listener, port);
            }
            catch (HttpListenerException) when (attempt < 10)
            {
                listener.Close();
            }
        }
    }

    /// <summary>Answers the next requests with these statuses, in order.</summary>
    public void Answer(params int[] statuses)
    {
        foreach (var status in statuses)
        {
            _statuses.Enqueue(status);
        }
    }

    public void Release() => _released.TrySetResult();

    /// <summary>The next request received, waiting at most 30 s.</summary>
    public async Task<ReceivedRequest> NextAsync()
    {
        using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(30));
        try
        {
            return await _received.Reader.ReadAsync(timeout.Token);
        }
        catch (OperationCanceledException)
        {
            throw new TimeoutException($"no request reached {BaseUrl} within 30 s ({Count} so far)");
        }
    }

    /// <summary>The requests received and not yet taken by <see cref="NextAsync"/>.</summary>
    public List<ReceivedRequest> Drain()
    {
        var list = new List<ReceivedRequest>();
        while (_received.Reader.TryRead(out var request))
        {
            list.Add(request);
        }

        return list;
    }

    public void Dispose()
    {
        Release();
        _listener.Close();
        try
        {
            _serving.Wait(TimeSpan.FromSeconds(10));
        }
        catch (AggregateException)
        {
            // The listener was closed under a pending request.
        }
    }

    private static int FreePort()
    {
        using var probe = new TcpListener(IPAddress.Loopback, 0);
        probe.Start();
        return ((IPEndPoint)probe.LocalEndpoint).Port;
    }

    private async Task ServeAsync()
    {
        while (_listener.IsListening)
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

            using var body = new MemoryStream();
            await context.Request.InputStream.CopyToAsync(body);
            var headers = context.Request.Headers.AllKeys.OfType<string>().ToDictionary(k => k, k => context.Request.Headers[k]!, StringComparer.OrdinalIgnoreCase);
            Interlocked.Increment(ref _count);
            _received.Writer.TryWrite(new ReceivedRequest(context.Request.HttpMethod, context.Request.Url!.PathAndQuery, context.Request.ContentType, headers, body.ToArray()));
            if (Hold)
            {
                await _released.Task;
            }

            context.Response.StatusCode = _statuses.TryDequeue(out var status) ? status : DefaultStatus;
            context.Response.Close();
        }
    }
}
