using HumWatch.Cli.Dataset;
using HumWatch.Core.Reporting;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>The figures the progress line shows: files done, bytes read (a file in flight by its share), worst verdict.</summary>
public sealed class DatasetProgressTests
{
    private static readonly DatasetFile[] Files =
    [
        new("/d/a.edf", "a.edf", "a.edf", 1_000),
        new("/d/b.edf", "b.edf", "b.edf", 3_000),
        new("/d/c.edf", "c.edf", "c.edf", 6_000),
    ];

    [Fact]
    public void Bytes_count_finished_files_whole_and_files_in_flight_by_the_share_read()
    {
        var progress = new DatasetProgress(Files);
        Assert.Equal(new DatasetProgressSnapshot(0, 3, 0, 10_000, null), progress.Snapshot());

        progress.FileStarted(0);
        progress.FileStarted(2);
        progress.For(0).Report(0.5);
        progress.For(2).Report(0.25);
        Assert.Equal(500 + 1_500, progress.Snapshot().DoneBytes);

        progress.FileDone(0, Verdict.Warn);
        progress.For(0).Report(0.9); // a late report of a finished file changes nothing
        Assert.Equal(new DatasetProgressSnapshot(1, 3, 1_000 + 1_500, 10_000, Verdict.Warn), progress.Snapshot());

        progress.FileDone(1, null); // skipped as already checked: counted, no verdict
        progress.FileDone(2, Verdict.Pass);
        var end = progress.Snapshot();
        Assert.Equal(new DatasetProgressSnapshot(3, 3, 10_000, 10_000, Verdict.Warn), end);
        Assert.Equal("3/3 files, worst so far: warn", end.Describe());
    }
}
