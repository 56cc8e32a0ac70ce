using HumWatch.Cli.Dataset;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>BIDS entities read off recording names (BIDS specification, "Common principles: filenames" and the entity table).</summary>
public sealed class BidsEntitiesTests
{
    [Theory]
    [InlineData("sub-01_task-rest_eeg.edf", "01", null, "rest", null, null)]
    [InlineData("sub-control03_ses-post_task-nback_acq-dense_run-2_eeg.bdf", "control03", "post", "nback", "2", "dense")]
    [InlineData("sub-7_ses-1_task-sleep_run-01_ieeg.edf", "7", "1", "sleep", "01", null)]
    public void The_entities_of_a_BIDS_recording_name_are_read_in_their_columns(string name, string sub, string? ses, string? task, string? run, string? acq)
    {
        var entities = BidsEntities.Parse(Path.Combine("sub-x", "eeg", name));
        Assert.Equal(new BidsEntities(sub, ses, task, run, acq), entities);
    }

    [Theory]
    [InlineData("recording.edf")]                       // no subject
    [InlineData("sub-01_task-rest_events.tsv")]         // a side table, not an EEG recording
    [InlineData("sub-01_task-rest_run-A_eeg.edf")]      // run is an index: digits only
    [InlineData("sub-01_task-rest_task-nap_eeg.edf")]   // an entity may appear once
    [InlineData("sub-0_1_task-rest_eeg.edf")]           // labels are alphanumeric
    public void A_name_outside_BIDS_naming_has_no_entities(string name)
    {
        Assert.Null(BidsEntities.Parse(name));
    }

    [Fact]
    public void A_cell_never_carries_a_tab_or_a_line_end()
    {
        Assert.Equal("a b c d", CheckTable.Cell("a\tb\nc\rd"));
        Assert.Equal("plain", CheckTable.Cell("plain"));
    }
}
