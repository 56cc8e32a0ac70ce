using Xunit;
using Xunit.Abstractions;

namespace HumWatch.KillHarness;

/// <summary>The harness's short form, run by `dotnet test HumWatch.sln`: the real program, 5 kills, about a minute.</summary>
public sealed class KillHarnessTests(ITestOutputHelper output)
{
    [Fact]
    public async Task Five_kills_lose_no_stored_alert_or_inbox_file_and_leave_an_intact_store()
    {
        var work = Path.Combine(Path.GetTempPath(), "humwatch-kill-" + Guid.NewGuid().ToString("N"));
        using var progress = new StringWriter();
        var report = await Harness.RunAsync(new KillOptions { Kills = 5, Seed = 5, Rooms = 2, WorkFolder = work }, progress, CancellationToken.None);
        output.WriteLine(progress.ToString());
        output.WriteLine(report.ToString());

        Assert.True(report.Passed, report.ToString());
        Directory.Delete(work, recursive: true);
    }
}
