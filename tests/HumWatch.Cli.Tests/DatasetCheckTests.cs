using System.Text.Json;
using HumWatch.Formats;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>`humwatch check DIR`: a folder walked for recordings, one table row per file, reports equal to single-file checks, resume.</summary>
public sealed class DatasetCheckTests : IClassFixture<DatasetCheckTests.BidsTree>
{
    private readonly BidsTree _tree;

    public DatasetCheckTests(BidsTree tree) => _tree = tree;

    [Fact]
    public async Task A_BIDS_shaped_tree_gives_one_row_per_recording_with_its_entities_and_the_worst_exit_code()
    {
        using var work = new TempFolder();
        var table = Path.Combine(work.Path, "audit.tsv");

        var (code, output, error) = await CliRunner.RunAsync("check", _tree.Root, "--table", table);

        // The broken recording makes the worst exit code 2 (unreadable input), as for a list of files.
        Assert.Equal(2, code);
        var rows = ReadTable(table);
        Assert.Equal(
            ["derivatives/extra/notes/session.bdf", "sub-01/eeg/sub-01_task-rest_eeg.edf", "sub-02/ses-pre/eeg/sub-02_ses-pre_task-oddball_acq-dense_run-02_eeg.edf", "sub-03/eeg/sub-03_task-rest_eeg.edf"],
            rows.Select(r => r["path"].Replace('\\', '/')));
        Assert.Equal(["pass", "fail", "pass", "error"], rows.Select(r => r["verdict"]));
        Assert.Equal(["0", "1", "0", "2"], rows.Select(r => r["exit_code"]));

        // BIDS entities from the file names (BIDS specification, "Common principles: filenames": key-value pairs).
        Assert.Equal(("01", "n/a", "rest", "n/a", "n/a"), Entities(rows[1]));
        Assert.Equal(("02", "pre", "oddball", "02", "dense"), Entities(rows[2]));
        Assert.Equal(("n/a", "n/a", "n/a", "n/a", "n/a"), Entities(rows[0]));

        // The 50 Hz tone simulated at 9 µV RMS on every channel: the row's strongest mains line and its share.
        var fail = rows[1];
        Assert.InRange(double.Parse(fail["mains_hz"], System.Globalization.CultureInfo.InvariantCulture), 49.9, 50.1);
        Assert.InRange(double.Parse(fail["mains_uv_rms"], System.Globalization.CultureInfo.InvariantCulture), 8, 10);
        Assert.Equal("1.00", fail["mains_channel_share"]);
        Assert.Equal("8", fail["channels"]);
        Assert.Equal("250", fail["sample_rate_hz"]);
        Assert.Equal("n/a", rows[2]["mains_hz"]);
        Assert.Contains("not an EDF/BDF file", rows[3]["error"], StringComparison.Ordinal);
        Assert.All(rows, r => Assert.Matches("^[0-9a-f]{16}$", r["xxh3"]));
        Assert.Equal(new FileInfo(_tree.Quiet).Length.ToString(System.Globalization.CultureInfo.InvariantCulture), rows[2]["size_bytes"]);

        // Side tables and the README are passed over quietly; the link out of the tree is named.
        Assert.Contains("passed over 3 file(s) that are not recordings", error, StringComparison.Ordinal);
        if (_tree.HasOutsideLink)
        {
            Assert.Contains("outside.edf: link out of the tree", error, StringComparison.Ordinal);
        }

        Assert.Contains("4 file(s) checked; exit code 2.", error, StringComparison.Ordinal);
        Assert.Contains("sub-01_task-rest_eeg.edf", output, StringComparison.Ordinal); // the readable reports still go to stdout
    }

    [Fact]
    public async Task Each_report_of_a_folder_check_equals_the_report_of_checking_that_file_alone()
    {
        var (_, together, _) = await CliRunner.RunAsync("check", _tree.Root, "--json");
        var lines = together.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(4, lines.Length);

        foreach (var line in lines)
        {
            string file;
            using (var document = JsonDocument.Parse(line))
            {
                file = document.RootElement.GetProperty("file").GetString()!;
            }

            // Alone, one file uses every core (split in time); in a folder, one core each: the reports must not differ.
            var (_, alone, _) = await CliRunner.RunAsync("check", file, "--json");
            Assert.Equal(alone.Trim(), line.Trim());
        }
    }

    [Fact]
    public async Task A_resumed_audit_skips_files_already_in_the_table_and_checks_new_and_changed_ones()
    {
        using var work = new TempFolder();
        var root = Path.Combine(work.Path, "dataset");
        BidsTree.CopyFolder(_tree.Root, root);
        var table = Path.Combine(work.Path, "audit.tsv");
        var (firstCode, _, _) = await CliRunner.RunAsync("check", root, "--table", table);
        Assert.Equal(2, firstCode);

        // An interrupted run's last row, cut off mid-line, is dropped and its file checked again.
        File.AppendAllText(table, "sub-0");

        // A new session arrives and one recording is replaced by a quieter one (new content, new time).
        var added = Path.Combine(root, "sub-04", "eeg", "sub-04_task-rest_eeg.edf");
        Directory.CreateDirectory(Path.GetDirectoryName(added)!);
        File.Copy(_tree.Quiet, added);
        var changed = Path.Combine(root, "sub-01", "eeg", "sub-01_task-rest_eeg.edf");
        File.Copy(_tree.Quiet, changed, overwrite: true);
        File.SetLastWriteTimeUtc(changed, DateTime.UtcNow.AddMinutes(1));

        var (code, _, error) = await CliRunner.RunAsync("check", root, "--table", table, "--skip-checked", table);

        // The broken file's row is kept, so its exit code 2 still counts.
        Assert.Equal(2, code);
        Assert.Contains("2 file(s) checked, 3 skipped as already in", error, StringComparison.Ordinal);
        var rows = ReadTable(table);
        Assert.Equal(6, rows.Count); // 4 rows of the first run, then the changed file and the new one
        Assert.Equal(1, File.ReadLines(table).Count(l => l.StartsWith("path\t", StringComparison.Ordinal)));
        Assert.Equal(["sub-01/eeg/sub-01_task-rest_eeg.edf", "sub-04/eeg/sub-04_task-rest_eeg.edf"], rows.Skip(4).Select(r => r["path"].Replace('\\', '/')));
        Assert.Equal(["pass", "pass"], rows.Skip(4).Select(r => r["verdict"]));
        Assert.DoesNotContain(File.ReadLines(table), l => l == "sub-0");

        // Nothing left to do: every file has a row.
        var (againCode, _, again) = await CliRunner.RunAsync("check", root, "--table", table, "--skip-checked", table);
        Assert.Equal(2, againCode);
        Assert.Contains("0 file(s) checked, 5 skipped", again, StringComparison.Ordinal);
        Assert.Equal(6, ReadTable(table).Count);
    }

    [Fact]
    public async Task A_table_to_stdout_is_the_only_thing_on_stdout_and_a_folder_without_recordings_is_exit_code_2()
    {
        var (code, output, _) = await CliRunner.RunAsync("check", _tree.Root, "--table", "-");
        Assert.Equal(2, code);
        var lines = output.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.StartsWith("path\tverdict\texit_code\t", lines[0], StringComparison.Ordinal);
        Assert.Equal(5, lines.Length);

        using var empty = new TempFolder();
        File.WriteAllText(Path.Combine(empty.Path, "participants.tsv"), "participant_id\tage\nsub-01\t34\n");
        var (emptyCode, _, error) = await CliRunner.RunAsync("check", empty.Path);
        Assert.Equal(2, emptyCode);
        Assert.Contains("no recording found in", error, StringComparison.Ordinal);
    }

    private static (string, string, string, string, string) Entities(Dictionary<string, string> row) =>
        (row["sub"], row["ses"], row["task"], row["run"], row["acq"]);

    private static List<Dictionary<string, string>> ReadTable(string path)
    {
        var lines = File.ReadAllLines(path);
        var header = lines[0].Split('\t');
        return [.. lines.Skip(1).Select(l =>
        {
            var cells = l.Split('\t');
            Assert.Equal(header.Length, cells.Length);
            return header.Zip(cells).ToDictionary(p => p.First, p => p.Second, StringComparer.Ordinal);
        })];
    }

    /// <summary>
    /// A small dataset laid out as BIDS lays out EEG (`sub-*/[ses-*/]eeg/*_eeg.edf`), with a side table, a README, a
    /// broken recording, a nested folder holding a BDF-content file under another name, and a link out of the tree.
    /// </summary>
    public sealed class BidsTree : IDisposable
    {
        private readonly TempFolder _temp = new();
        private readonly TempFolder _outside = new();

        public BidsTree()
        {
            Root = Path.Combine(_temp.Path, "study");
            Write(Path.Combine(Root, "sub-01", "eeg", "sub-01_task-rest_eeg.edf"), mainsUvRms: 9);
            Quiet = Write(Path.Combine(Root, "sub-02", "ses-pre", "eeg", "sub-02_ses-pre_task-oddball_acq-dense_run-02_eeg.edf"), mainsUvRms: 0);
            Write(Path.Combine(Root, "derivatives", "extra", "notes", "session.bdf"), mainsUvRms: 0);
            var broken = Path.Combine(Root, "sub-03", "eeg", "sub-03_task-rest_eeg.edf");
            Directory.CreateDirectory(Path.GetDirectoryName(broken)!);
            File.WriteAllBytes(broken, [.. Enumerable.Range(0, 4000).Select(i => (byte)(i * 37))]);
            File.WriteAllText(Path.Combine(Root, "sub-01", "eeg", "sub-01_task-rest_events.tsv"), "onset\tduration\tvalue\n1.0\t0.5\t3\n2.0\t0.5\t4\n");
            File.WriteAllText(Path.Combine(Root, "participants.tsv"), "participant_id\tage\nsub-01\t34\n");
            File.WriteAllText(Path.Combine(Root, "README"), "An invented study for the dataset check tests.\n");

            var outsideFile = Write(Path.Combine(_outside.Path, "elsewhere.edf"), mainsUvRms: 9);
            try
            {
                File.CreateSymbolicLink(Path.Combine(Root, "outside.edf"), outsideFile);
                HasOutsideLink = true;
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                HasOutsideLink = false; // no right to make links here (Windows without developer mode)
            }
        }

        public string Root { get; }

        public string Quiet { get; }

        public bool HasOutsideLink { get; }

        public void Dispose()
        {
            _temp.Dispose();
            _outside.Dispose();
        }

        public static void CopyFolder(string from, string to)
        {
            foreach (var file in Directory.EnumerateFiles(from, "*", new EnumerationOptions { RecurseSubdirectories = true, AttributesToSkip = FileAttributes.ReparsePoint }))
            {
                var target = Path.Combine(to, Path.GetRelativePath(from, file));
                Directory.CreateDirectory(Path.GetDirectoryName(target)!);
                File.Copy(file, target);
            }
        }

        private static string Write(string path, double mainsUvRms)
        {
            Directory.CreateDirectory(Path.GetDirectoryName(path)!);
            var room = new SimulatedRoom
            {
                Name = "dataset-room",
                SampleRateHz = 250,
                Channels = SimulatedRoom.Montage(8),
                Tones = mainsUvRms > 0 ? [new SimulatedTone { Name = "mains", FrequencyHz = 50, AmplitudeUvRms = mainsUvRms, WanderHz = 0.02 }] : [],
            };
            var simulator = new RoomSimulator(room, seed: 5);
            var bdf = path.EndsWith(".bdf", StringComparison.Ordinal);
            var options = new EdfWriterOptions
            {
                Kind = bdf ? EdfFileKind.BdfPlusC : EdfFileKind.EdfPlusC,
                Signals = [.. simulator.Layout.Channels.Select(c => bdf ? EdfWriterSignal.Bdf24(c.Label, 250) : EdfWriterSignal.Edf16(c.Label, 250))],
            };
            using var writer = new EdfWriter(path, options);
            for (var second = 0; second < 40; second++)
            {
                writer.WriteRecord(simulator.Next(250).SamplesUv.Slice(0, 250 * 8));
            }

            return path;
        }
    }
}
