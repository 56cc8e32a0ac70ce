using HumWatch.Host.Composition;
using HumWatch.Host.Health;
using HumWatch.Host.Store;
using Microsoft.Extensions.Time.Testing;
using Serilog.Events;
using Serilog.Parsing;
using HumWatch.Host.Tests.EndToEnd;
using Xunit;

namespace HumWatch.Host.Tests.Composition;

public sealed class LogFolderGuardTests : IDisposable
{
    private readonly TempFolder _temp = new();

    public void Dispose() => _temp.Dispose();

    [Fact]
    public void A_log_folder_removed_while_running_is_created_again_and_later_lines_reach_the_new_files()
    {
        var folder = _temp.File("logs");
        using var files = new LogFiles(new LogOptions { Folder = folder });
        var (guard, resources, logger) = Guard(files);
        files.Emit(Line("before the removal"));
        Assert.Contains("before the removal", string.Join("\n", ServiceUnderTest.LogLines(folder)), StringComparison.Ordinal);

        Directory.Delete(folder, recursive: true);
        files.Emit(Line("into the removed file")); // the open file went with its folder: this line is lost
        guard.CheckOnce();
        guard.CheckOnce();
        files.Emit(Line("after the check"));

        Assert.True(Directory.Exists(folder));
        var text = string.Join("\n", ServiceUnderTest.LogLines(folder));
        Assert.Contains("after the check", text, StringComparison.Ordinal);
        Assert.DoesNotContain("before the removal", text, StringComparison.Ordinal);
        Assert.Single(logger.Entries, e => e.EventId.Id == 1351);
        Assert.Equal(("ok", 1), (resources.LogFolder.Snapshot().State, resources.LogFolder.Snapshot().Recreated));
    }

    [Fact]
    public void A_log_folder_that_cannot_be_created_is_reported_once_and_used_again_once_it_can_be()
    {
        var parent = _temp.File("var");
        var folder = Path.Combine(parent, "logs");
        using var files = new LogFiles(new LogOptions { Folder = folder });
        var (guard, resources, logger) = Guard(files);
        files.Emit(Line("first"));

        Directory.Delete(parent, recursive: true);
        File.WriteAllText(parent, "in the way"); // a file where the folder's parent should be: not even root can make the folder
        guard.CheckOnce();
        guard.CheckOnce();

        Assert.Single(logger.Entries, e => e.EventId.Id == 1352);
        Assert.Equal("missing", resources.LogFolder.Snapshot().State);

        File.Delete(parent);
        guard.CheckOnce();
        files.Emit(Line("back again"));

        Assert.Single(logger.Entries, e => e.EventId.Id == 1353);
        Assert.Contains("back again", string.Join("\n", ServiceUnderTest.LogLines(folder)), StringComparison.Ordinal);
        Assert.Equal("ok", resources.LogFolder.Snapshot().State);
    }

    private static (LogFolderGuard Guard, ResourceStatus Resources, RecordingLogger<LogFolderGuard> Logger) Guard(LogFiles files)
    {
        var time = new FakeTimeProvider();
        var resources = new ResourceStatus(new StoreHealth("unused.db", time, new RecordingLogger<StoreHealth>()));
        var logger = new RecordingLogger<LogFolderGuard>();
        return (new LogFolderGuard(files, resources, time, logger), resources, logger);
    }

    private static LogEvent Line(string text) =>
        new(DateTimeOffset.UtcNow, LogEventLevel.Information, null, new MessageTemplateParser().Parse(text), []);
}
