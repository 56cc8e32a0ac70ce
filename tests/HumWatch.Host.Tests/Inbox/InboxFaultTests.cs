using System.Security.Cryptography;
using HumWatch.Core.Reporting;
using HumWatch.Host.Configuration;
using HumWatch.Host.Inbox;
using HumWatch.Host.Store;
using HumWatch.Host.Tests.EndToEnd;
using HumWatch.Host.Tests.Store;
using Microsoft.Extensions.Options;
using Xunit;

namespace HumWatch.Host.Tests.Inbox;

/// <summary>
/// The inbox under resource faults: a file leaves the inbox only once the store has its alerts, rows and journal entry,
/// and a removed inbox folder is created again (or waited for) while the service goes on.
/// </summary>
public sealed class InboxFaultTests
{
    [Fact]
    public async Task A_file_whose_rows_and_journal_entry_the_store_refuses_stays_in_the_inbox_until_the_store_has_them()
    {
        using var rig = new StoreFaultRig();
        await rig.StartAsync();
        var logger = new RecordingLogger<InboxService>();
        var inbox = NewInbox(rig, logger);
        var dropped = Drop(rig, "bay-7", seconds: 90);
        var sha256 = Convert.ToHexStringLower(SHA256.HashData(File.ReadAllBytes(dropped)));
        var size = new FileInfo(dropped).Length;

        // The store turns read-only when the file's first minute is complete: the raise is stored, the rest is not.
        rig.BeforeRow = _ =>
        {
            rig.BeforeRow = null;
            rig.OnStoreConnection("PRAGMA query_only = 1");
        };

        Assert.Equal(0, inbox.ScanOnce());

        Assert.True(File.Exists(dropped));
        Assert.False(File.Exists(Path.Combine(rig.Temp.File("archive"), "bay-7", "bay-7.edf")));
        Assert.Equal(FileJournalState.Received, rig.Store.Files.Find(sha256, size)?.State);
        Assert.Equal(1, inbox.HeldCount);
        Assert.Equal("read-only", rig.Health.Fault.ToText());
        Assert.Single(logger.Entries, e => e.EventId.Id == 1346);
        Assert.Contains("alert/bay-7", rig.Publisher.Topics); // published while the store was refusing
        Assert.Contains("clear/bay-7", rig.Publisher.Topics);

        // While the fault lasts nothing new is taken, and that is said once.
        Assert.Equal(0, inbox.ScanOnce());
        Assert.Equal(0, inbox.ScanOnce());
        Assert.Single(logger.Entries, e => e.EventId.Id == 1347);

        rig.OnStoreConnection("PRAGMA query_only = 0");
        for (var s = 0; s <= StoreHealth.MaxRetryDelay.TotalSeconds && rig.Health.IsFaulted; s++)
        {
            rig.Time.Advance(TimeSpan.FromSeconds(1));
        }

        Assert.False(rig.Health.IsFaulted);
        Assert.Equal(FileJournalState.Archived, rig.Store.Files.Find(sha256, size)?.State);
        Assert.Equal(1, inbox.ScanOnce());

        Assert.False(File.Exists(dropped));
        Assert.True(File.Exists(Path.Combine(rig.Temp.File("archive"), "bay-7", "bay-7.edf")));
        Assert.Equal(0, inbox.HeldCount);
        Assert.Single(logger.Entries, e => e.EventId.Id == 4002);
        StoreFaultTests.AssertEverythingStoredOnce(rig, "bay-7");
    }

    [Fact]
    public async Task A_file_the_store_cannot_claim_stays_in_the_inbox_unchecked_and_is_taken_when_the_store_is_back()
    {
        using var rig = new StoreFaultRig();
        await rig.StartAsync();
        var logger = new RecordingLogger<InboxService>();
        var inbox = NewInbox(rig, logger);
        var dropped = Drop(rig, "bay-8", seconds: 30);
        rig.OnStoreConnection("PRAGMA query_only = 1");

        Assert.Equal(0, inbox.ScanOnce());

        Assert.True(File.Exists(dropped));
        Assert.Single(logger.Entries, e => e.EventId.Id == 1345);
        Assert.Empty(rig.Publisher.Published); // not checked: nothing could have recorded it
        Assert.Equal("read-only", rig.Health.Fault.ToText());

        rig.OnStoreConnection("PRAGMA query_only = 0");
        rig.Time.Advance(StoreHealth.FirstRetryDelay);
        Assert.False(rig.Health.IsFaulted);
        Assert.Equal(1, inbox.ScanOnce());
        Assert.False(File.Exists(dropped));
        Assert.Contains("alert/bay-8", rig.Publisher.Topics);
    }

    [Fact]
    public void A_removed_inbox_folder_is_created_again_with_one_warning_and_its_files_are_taken()
    {
        using var rig = new StoreFaultRig();
        var logger = new RecordingLogger<InboxService>();
        var inbox = NewInbox(rig, logger);
        var folder = rig.Temp.File("inbox");
        Directory.CreateDirectory(folder);

        Directory.Delete(folder, recursive: true);
        Assert.Equal(0, inbox.ScanOnce());
        Assert.Equal(0, inbox.ScanOnce());

        Assert.True(Directory.Exists(folder));
        var warning = Assert.Single(logger.Entries, e => e.EventId.Id == 1348);
        Assert.Contains(folder, warning.Message, StringComparison.Ordinal);
        Assert.Equal(("ok", 1), (rig.Resources.InboxFolder.Snapshot().State, rig.Resources.InboxFolder.Snapshot().Recreated));

        ServiceEndToEndTests.WriteRecording(Path.Combine(folder, "bay-9.edf"), Rooms.Quiet("bay-9"), seconds: 20);
        Assert.Equal(1, inbox.ScanOnce());
    }

    [Fact]
    public void An_inbox_folder_that_cannot_be_created_is_waited_for_with_one_warning_and_used_once_it_can_be()
    {
        using var rig = new StoreFaultRig();
        var logger = new RecordingLogger<InboxService>();
        var parent = rig.Temp.File("drop");
        var folder = Path.Combine(parent, "inbox");
        var inbox = NewInbox(rig, logger, folder);

        // A file where the folder's parent should be: no one, root included, can make the folder below it.
        File.WriteAllText(parent, "in the way");
        Assert.Equal(0, inbox.ScanOnce());
        Assert.Equal(0, inbox.ScanOnce());

        Assert.Single(logger.Entries, e => e.EventId.Id == 1349);
        var missing = rig.Resources.InboxFolder.Snapshot();
        Assert.Equal("missing", missing.State);
        Assert.NotNull(missing.Since);

        File.Delete(parent);
        Assert.Equal(0, inbox.ScanOnce());

        Assert.True(Directory.Exists(folder));
        Assert.Single(logger.Entries, e => e.EventId.Id == 1350);
        Assert.DoesNotContain(logger.Entries, e => e.EventId.Id == 1348);
        Assert.Equal("ok", rig.Resources.InboxFolder.Snapshot().State);
        ServiceEndToEndTests.WriteRecording(Path.Combine(folder, "bay-10.edf"), Rooms.Quiet("bay-10"), seconds: 20);
        Assert.Equal(1, inbox.ScanOnce());
    }

    /// <summary>A recording of a room with a mains line from the start, dropped into the rig's inbox as "&lt;name&gt;.edf".</summary>
    private static string Drop(StoreFaultRig rig, string name, int seconds)
    {
        var path = Path.Combine(rig.Temp.File("inbox"), name + ".edf");
        Directory.CreateDirectory(Path.GetDirectoryName(path)!);
        ServiceEndToEndTests.WriteRecording(path, Rooms.WithMains(name, onSeconds: 0, offSeconds: null), seconds);
        return path;
    }

    private static InboxService NewInbox(StoreFaultRig rig, RecordingLogger<InboxService> logger, string? folder = null) => new(
        Options.Create(new InboxOptions
        {
            Folder = folder ?? rig.Temp.File("inbox"),
            ArchiveFolder = rig.Temp.File("archive"),
            RejectedFolder = rig.Temp.File("rejected"),
            StableSeconds = 0,
        }),
        Options.Create(new CheckLimits()),
        Options.Create(new SiteOptions { TimeZone = "UTC" }),
        rig.Store,
        rig.Factory,
        rig.Writer,
        logger,
        rig.Resources);
}
