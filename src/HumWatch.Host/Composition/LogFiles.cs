using HumWatch.Host.Health;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Serilog;
using Serilog.Core;
using Serilog.Events;
using Serilog.Formatting.Compact;

namespace HumWatch.Host.Composition;

/// <summary>
/// The two daily log files (readable text and compact JSON events) as one sink that can be opened again. The file sink
/// keeps its file open: on Linux a removed folder takes the open file with it and every later line would vanish
/// unseen, so <see cref="LogFolderGuard"/> reopens the files once the folder is back.
/// </summary>
internal sealed class LogFiles : ILogEventSink, IDisposable
{
    private readonly LogOptions _options;
    private readonly Lock _gate = new();
    private Logger? _files;

    public LogFiles(LogOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        _files = Open();
    }

    /// <summary>The folder the files are written to, as an absolute path.</summary>
    public string Folder => Path.GetFullPath(_options.Folder);

    public void Emit(LogEvent logEvent)
    {
        lock (_gate)
        {
            _files?.Write(logEvent);
        }
    }

    /// <summary>Closes the files and opens them again (in the folder, which the caller has created).</summary>
    public void Reopen()
    {
        lock (_gate)
        {
            _files?.Dispose();
            _files = Open();
        }
    }

    public void Dispose()
    {
        lock (_gate)
        {
            _files?.Dispose();
            _files = null;
        }
    }

    private Logger Open() => new LoggerConfiguration()
        .MinimumLevel.Verbose()
        .WriteTo.File(Path.Combine(_options.Folder, "humwatch-.log"), restrictedToMinimumLevel: _options.FileLevel, rollingInterval: RollingInterval.Day, retainedFileCountLimit: _options.RetainedDays, formatProvider: System.Globalization.CultureInfo.InvariantCulture)
        .WriteTo.File(new CompactJsonFormatter(), Path.Combine(_options.Folder, "humwatch-.clef"), restrictedToMinimumLevel: _options.FileLevel, rollingInterval: RollingInterval.Day, retainedFileCountLimit: _options.RetainedDays)
        .CreateLogger();
}

/// <summary>
/// Looks every <see cref="CheckInterval"/> whether the log folder is still there; when it was removed, creates it again
/// and reopens the files, with a line on standard error and a warning in the new files. When it cannot be created, says
/// so once and tries again at every check.
/// </summary>
internal sealed class LogFolderGuard(LogFiles files, ResourceStatus resources, TimeProvider time, ILogger<LogFolderGuard> logger) : BackgroundService
{
    /// <summary>Time between looks at the folder: 2 s.</summary>
    public static readonly TimeSpan CheckInterval = TimeSpan.FromSeconds(2);

    /// <summary>Looks once; tests call it directly.</summary>
    internal void CheckOnce()
    {
        var folder = files.Folder;
        if (Directory.Exists(folder))
        {
            return;
        }

        try
        {
            Directory.CreateDirectory(folder);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            if (resources.LogFolder.Missing(time.GetUtcNow()))
            {
                // Standard error as well: whoever reads only the files cannot see this.
                Console.Error.WriteLine($"humwatch: the log folder {folder} is gone and cannot be created ({ex.Message}); logging to the console only");
                logger.LogFolderMissing(folder, ex.Message);
            }

            return;
        }

        files.Reopen();
        if (resources.LogFolder.Recreated())
        {
            logger.LogFolderBack(folder);
        }
        else
        {
            Console.Error.WriteLine($"humwatch: the log folder {folder} was removed while running; created it again");
            logger.LogFolderRecreated(folder, CheckInterval.TotalSeconds);
        }
    }

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        while (!stoppingToken.IsCancellationRequested)
        {
            try
            {
                await Task.Delay(CheckInterval, time, stoppingToken).ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                return;
            }

            CheckOnce();
        }
    }
}
