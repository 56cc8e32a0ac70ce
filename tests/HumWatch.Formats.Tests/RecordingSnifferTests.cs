using HumWatch.Formats;

namespace HumWatch.Formats.Tests;

/// <summary>Which files a folder walk takes as recordings: EDF/BDF by content, CSV by name, numeric text tables by content.</summary>
public sealed class RecordingSnifferTests : IDisposable
{
    private readonly TempFolder _temp = new();

    public void Dispose() => _temp.Dispose();

    [Fact]
    public void EDF_and_BDF_are_taken_by_their_version_field_whatever_the_file_is_called()
    {
        // EDF (Kemp et al. 1992): the header starts with the version "0" and 7 spaces; BDF writes 0xFF then "BIOSEMI".
        Assert.True(RecordingSniffer.LooksLikeRecording(_temp.Write("session-a.dat", [.. "0       "u8, .. new byte[248]])));
        Assert.True(RecordingSniffer.LooksLikeRecording(_temp.Write("session-b", [0xFF, .. "BIOSEMI"u8, .. new byte[248]])));
        Assert.False(RecordingSniffer.LooksLikeRecording(_temp.Write("photo.jpg", [0xFF, 0xD8, 0xFF, 0xE0, 0, 16, 74, 70, 73, 70])));
    }

    [Fact]
    public void A_file_named_as_a_recording_is_taken_even_when_broken_so_its_report_says_what_is_wrong()
    {
        Assert.True(RecordingSniffer.LooksLikeRecording(_temp.WriteText("broken.edf", "not an edf header")));
        Assert.True(RecordingSniffer.LooksLikeRecording(_temp.WriteText("broken.BDF", "")));
        Assert.True(RecordingSniffer.LooksLikeRecording(_temp.WriteText("export.csv", "anything")));
    }

    [Theory]
    [InlineData("time\tFz\tCz\n0.000\t1.5\t-2.0\n0.004\t1.7\t-2.1\n", true)]
    [InlineData("0.000;1,5;-2,0\n0.004;1,7;-2,1\n", true)]                     // decimal commas in a ';' file
    [InlineData("onset\tduration\ttrial_type\n1.0\t0.5\tgo\n2.0\t0.5\tstop\n", false)] // a text column
    [InlineData("name\ttype\tunits\nFz\tEEG\tµV\n", false)]
    [InlineData("title\nsecond title\n0.0\t1.0\n0.1\t2.0\n", false)]            // two header lines
    [InlineData("time\tFz\n0.0\t1.0\n", false)]                                 // one data line is too little to tell
    [InlineData("time\tFz\tCz\n0.0\t1.0\t2.0\n0.1\t2.0\n", false)]              // ragged rows
    public void A_tsv_is_taken_when_its_first_lines_are_numeric_columns(string text, bool taken)
    {
        Assert.Equal(taken, RecordingSniffer.LooksLikeRecording(_temp.WriteText("table.tsv", text)));
    }

    [Theory]
    [InlineData("sub-01_task-rest_events.tsv")]
    [InlineData("sub-01_task-rest_channels.tsv")]
    [InlineData("sub-01_electrodes.tsv")]
    [InlineData("sub-01_scans.tsv")]
    [InlineData("participants.tsv")]
    public void A_BIDS_side_table_is_never_a_recording_even_when_every_column_is_numeric(string name)
    {
        // BIDS specification, "Tabular files" and the modality-agnostic files: tables beside the recordings.
        Assert.False(RecordingSniffer.LooksLikeRecording(_temp.WriteText(name, "onset\tduration\tvalue\n1.0\t0.5\t3\n2.0\t0.5\t4\n")));
    }
}
