using System.Net;
using HumWatch.Host.Configuration;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.AspNetCore.Http;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using OpenTelemetry.Metrics;

namespace HumWatch.Host.Web;

/// <summary>
/// Kestrel inside the service's own host: started after the sockets (so /readyz can see them), stopped first. It has
/// an application of its own (no configuration read, the service's loggers), and sends the rooms' changes to the
/// pages every <see cref="UpdateInterval"/>.
/// </summary>
internal sealed class WebServer : IHostedService, IAsyncDisposable
{
    /// <summary>How often changed rooms go out to the pages, at most: a page gets one update per interval whatever the number of rooms.</summary>
    public static readonly TimeSpan UpdateInterval = TimeSpan.FromMilliseconds(500);

    /// <summary>A comment line sent this often keeps an idle event stream from being closed by proxies.</summary>
    public static readonly TimeSpan KeepAliveInterval = TimeSpan.FromSeconds(15);

    private readonly BoundSettings _settings;
    private readonly RoomBoard _board;
    private readonly FleetRooms _fleet;
    private readonly LiveSpectra _spectra;
    private readonly EventClients _clients;
    private readonly Func<WebApi> _api;
    private readonly Func<HumWatchMetrics> _metrics;
    private readonly Store.HumWatchStore _store;
    private readonly ILoggerFactory _loggerFactory;
    private readonly ILogger _logger;
    private readonly TimeProvider _time;
    private readonly CancellationTokenSource _stopping = new();
    private WebApplication? _app;
    private HumWatchMetrics? _meter;
    private Task _updates = Task.CompletedTask;

    public WebServer(
        BoundSettings settings,
        RoomBoard board,
        FleetRooms fleet,
        LiveSpectra spectra,
        EventClients clients,
        Func<WebApi> api,
        Func<HumWatchMetrics> metrics,
        Store.HumWatchStore store,
        ILoggerFactory loggerFactory,
        TimeProvider time)
    {
        _settings = settings;
        _board = board;
        _fleet = fleet;
        _spectra = spectra;
        _clients = clients;
        _api = api;
        _metrics = metrics;
        _store = store;
        _loggerFactory = loggerFactory;
        _logger = loggerFactory.CreateLogger<WebServer>();
        _time = time;
    }

    /// <summary>The address the page is served on, with the port Kestrel picked for port 0; null before start.</summary>
    public string? Address { get; private set; }

    public async Task StartAsync(CancellationToken cancellationToken)
    {
        var options = _settings.Web;
        if (!WebOptions.TryParseEndpoint(options.Endpoint, out var host, out var port))
        {
            throw new StartFailureException($"Web:Endpoint '{options.Endpoint}' is not an http://host:port address.");
        }

        SeedFromStore();

        var builder = WebApplication.CreateEmptyBuilder(new WebApplicationOptions { ApplicationName = "HumWatch", ContentRootPath = AppContext.BaseDirectory });
        builder.WebHost.UseKestrelCore().ConfigureKestrel(kestrel =>
        {
            kestrel.AddServerHeader = false;
            kestrel.Limits.MaxRequestBodySize = 0;
            kestrel.Limits.MaxRequestHeadersTotalSize = 32 * 1024;
            if (host == "*")
            {
                kestrel.ListenAnyIP(port);
            }
            else
            {
                kestrel.Listen(host == "localhost" ? IPAddress.Loopback : IPAddress.Parse(host.Trim('[', ']')), port);
            }
        });
        builder.Services.AddRouting();
        // The service's loggers, less the inner host's own report of a failed start: the caller reports that in one line.
        builder.Services.AddSingleton<ILoggerFactory>(new LoggerFactory(
            [new ForwardingLoggerProvider(_loggerFactory)],
            new LoggerFilterOptions { Rules = { new LoggerFilterRule(null, "Microsoft.Extensions.Hosting", LogLevel.None, null) } }));
        builder.Services.AddSingleton(typeof(ILogger<>), typeof(Logger<>));
        _meter = _metrics();
        builder.Services.AddOpenTelemetry().WithMetrics(metrics => metrics
            .AddMeter(HumWatchMetrics.MeterName)
            .AddPrometheusExporter(o => o.ScrapeResponseCacheDurationMilliseconds = 0));

        var app = builder.Build();
        var access = new Access(options, _logger);
        app.Use(async (context, next) =>
        {
            var headers = context.Response.Headers;
            headers.ContentSecurityPolicy = PageFiles.ContentSecurityPolicy;
            headers.XContentTypeOptions = "nosniff";
            headers["Referrer-Policy"] = "no-referrer";
            if (!HttpMethods.IsGet(context.Request.Method) && !HttpMethods.IsHead(context.Request.Method))
            {
                // Read-only: nothing here changes the service.
                context.Response.StatusCode = StatusCodes.Status405MethodNotAllowed;
                headers.Allow = "GET, HEAD";
                return;
            }

            try
            {
                await access.Handle(context, next);
            }
            catch (Exception ex) when (ex is not OperationCanceledException && !context.Response.HasStarted)
            {
                _logger.RequestFailed(ex, context.Request.Method, context.Request.Path);
                context.Response.StatusCode = StatusCodes.Status500InternalServerError;
            }
        });
        new PageFiles(_settings.Site.Name, Core.Reporting.SafetyNotice.Text).Map(app);
        var api = _api();
        api.Map(app);
        app.MapGet("/api/v1/events", context => Events(context, api));
        app.MapPrometheusScrapingEndpoint("/metrics");

        try
        {
            await app.StartAsync(cancellationToken).ConfigureAwait(false);
        }
        catch (Exception ex) when (ex is IOException or System.Net.Sockets.SocketException or InvalidOperationException)
        {
            await app.DisposeAsync().ConfigureAwait(false);
            throw StartFailureException.ForSocket("Web:Endpoint", options.Endpoint, "listen on", ex);
        }

        _app = app;
        var bound = app.Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()?.Addresses.FirstOrDefault() ?? options.Endpoint;
        Address = bound.Replace("://[::]:", "://*:", StringComparison.Ordinal).TrimEnd('/') + "/";
        if (WebOptions.IsLoopback(host))
        {
            _logger.Listening(Address);
        }
        else
        {
            _logger.ListeningOffHost(Address, options.AccessToken.Length > 0 ? "access token (Web:AccessToken)" : "user and password (Web:User)");
        }

        _updates = Task.Run(() => SendUpdatesAsync(api, _stopping.Token), CancellationToken.None);
    }

    public async Task StopAsync(CancellationToken cancellationToken)
    {
        await _stopping.CancelAsync().ConfigureAwait(false);
        _clients.CompleteAll();
        await _updates.ConfigureAwait(false);
        if (_app is not null)
        {
            await _app.StopAsync(cancellationToken).ConfigureAwait(false);
            _logger.Stopped(_clients.Served, _clients.FramesSent);
        }
    }

    public async ValueTask DisposeAsync()
    {
        if (_app is not null)
        {
            await _app.DisposeAsync().ConfigureAwait(false);
            _app = null;
        }

        _meter?.Dispose();
        _stopping.Dispose();
    }

    /// <summary>One page's event stream: a snapshot of every room, then alerts, clears, summaries and room changes as they come.</summary>
    private async Task Events(HttpContext context, WebApi api)
    {
        using var client = _clients.TryAdd();
        if (client is null)
        {
            context.Response.StatusCode = StatusCodes.Status503ServiceUnavailable;
            await WebApi.Json(context, new ErrorView($"too many pages are connected (Web:MaxEventClients = {_settings.Web.MaxEventClients})"), WebJsonContext.Output.ErrorView);
            return;
        }

        context.Response.ContentType = "text/event-stream";
        context.Response.Headers.CacheControl = "no-store";
        context.Response.Headers["X-Accel-Buffering"] = "no";
        using var done = CancellationTokenSource.CreateLinkedTokenSource(context.RequestAborted, _stopping.Token);
        var body = context.Response.Body;
        try
        {
            await body.WriteAsync("retry: 3000\n\n"u8.ToArray(), done.Token);
            await Send(body, EventClients.Frame("rooms", api.RoomsJson(full: true, _board.Snapshot(), [])), done.Token);
            var reader = client.Queue.Reader;
            while (!done.IsCancellationRequested)
            {
                using var wait = CancellationTokenSource.CreateLinkedTokenSource(done.Token);
                wait.CancelAfter(KeepAliveInterval);
                bool more;
                try
                {
                    more = await reader.WaitToReadAsync(wait.Token);
                }
                catch (OperationCanceledException) when (!done.IsCancellationRequested)
                {
                    await body.WriteAsync(": still here\n\n"u8.ToArray(), done.Token);
                    await body.FlushAsync(done.Token);
                    continue;
                }

                if (!more)
                {
                    return;
                }

                while (reader.TryRead(out var frame))
                {
                    await body.WriteAsync(frame, done.Token);
                    _clients.CountSent(frame.Length);
                }

                await body.FlushAsync(done.Token);
            }
        }
        catch (OperationCanceledException)
        {
            // The page went away, or the service is stopping.
        }
        catch (IOException)
        {
            // The connection broke.
        }
    }

    private async Task Send(Stream body, byte[] frame, CancellationToken token)
    {
        await body.WriteAsync(frame, token);
        await body.FlushAsync(token);
        _clients.CountSent(frame.Length);
    }

    private async Task SendUpdatesAsync(WebApi api, CancellationToken token)
    {
        var sincePrune = TimeSpan.Zero;
        var sinceFleet = TimeSpan.Zero;
        var fleetInterval = TimeSpan.FromSeconds(_settings.Instance.HeartbeatSeconds);
        while (!token.IsCancellationRequested)
        {
            try
            {
                await Task.Delay(UpdateInterval, _time, token).ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                return;
            }

            try
            {
                if (_board.TakeChanges() is { } changes)
                {
                    var rooms = changes.Where(c => c.Json is not null).Select(c => c.Json!);
                    var removed = changes.Where(c => c.Json is null).Select(c => c.Stream);
                    _clients.Broadcast(EventClients.Frame("rooms", api.RoomsJson(full: false, rooms, removed)));
                }

                // The other instances' rooms as the store has them, once per heartbeat (their owners write once per beat).
                sinceFleet += UpdateInterval;
                if (sinceFleet >= fleetInterval)
                {
                    sinceFleet = TimeSpan.Zero;
                    RefreshFleet();
                }

                sincePrune += UpdateInterval;
                if (sincePrune >= TimeSpan.FromMinutes(10))
                {
                    sincePrune = TimeSpan.Zero;
                    _spectra.Prune(RoomBoard.ForgetAfter);
                }
            }
            catch (Exception ex) when (ex is not OutOfMemoryException)
            {
                _logger.UpdateFailed(ex);
            }
        }
    }

    private void RefreshFleet()
    {
        if (_fleet.Refresh())
        {
            _board.SetRemote(_fleet.Remote);
        }
    }

    /// <summary>
    /// Rooms with data in the last day appear at once: this instance's (and those no instance is recorded for) as
    /// silent until their data comes again, the other instances' as the store has them.
    /// </summary>
    private void SeedFromStore()
    {
        try
        {
            RefreshFleet();
            var now = _time.GetUtcNow();
            var streams = _store.Activity.StreamsBetween(now - RoomBoard.ForgetAfter, now)
                .Where(s => _fleet.OwnerOf(s) is not { } owner || owner == _fleet.Self);
            _board.Seed([.. streams.Select(s => (s, _store.Activity.LastMonitoredUtc(s)))]);
        }
        catch (Exception ex) when (ex is not OutOfMemoryException)
        {
            _logger.SeedFailed(ex);
        }
    }
}

/// <summary>Hands the inner application's loggers to the service's own logger factory.</summary>
internal sealed class ForwardingLoggerProvider(ILoggerFactory target) : ILoggerProvider
{
    public ILogger CreateLogger(string categoryName) => target.CreateLogger(categoryName);

    public void Dispose()
    {
        // The service owns the target factory.
    }
}
