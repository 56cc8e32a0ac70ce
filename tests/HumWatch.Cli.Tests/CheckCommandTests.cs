using System.Text.Json;
using HumWatch.Formats;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>`humwatch check` as a pipeline uses it: exit codes, JSON report, readable report, bad input.</summary>
public sealed class CheckCommandTests : IClassFixture<CheckCommandTests.Recordings>
{
    private readonly Recordings _files;

    public CheckCommandTests(Recordings files) => _files = files;

    [Fact]
    public async Task A_recording_with_strong_mains_fails_with_exit_code_1_and_a_JSON_report_in_the_documented_shape()
    {
        var (code, output, _) = await CliRunner.RunAsync("check", _files.Mains, "--json");

        Assert.Equal(1, code);
        using var json = JsonDocument.Parse(output);
        var report = json.RootElement;
        Assert.Equal(_files.Mains, report.GetProperty("file").GetString());
        Assert.Equal("fail", report.GetProperty("verdict").GetString());
        Assert.Equal(250, report.GetProperty("sampleRateHz").GetDouble());
        Assert.Equal(8, report.GetProperty("channelCount").GetInt32());
        Assert.Equal(60, report.GetProperty("durationSeconds").GetDouble(), 3);
        var mains = report.GetProperty("lines").EnumerateArray().Single(l => l.GetProperty("source").GetString() == "mains" && l.GetProperty("harmonic").GetInt32() == 1);
        foreach (var field in new[] { "frequencyHz", "source", "harmonic", "aliased", "alsoPossible", "amplitudeUvRms", "prominenceDb", "falseAlarmProbability", "channelShare", "worstChannels", "firstSeconds", "lastSeconds" })
        {
            Assert.True(mains.TryGetProperty(field, out _), $"line field {field} missing");
        }

        Assert.Equal(50, mains.GetProperty("frequencyHz").GetDouble(), 0.05);
        Assert.InRange(mains.GetProperty("amplitudeUvRms").GetDouble(), 9 * 0.9, 9 * 1.1); // simulated 9 µV RMS
        Assert.Equal(1.0, mains.GetProperty("channelShare").GetDouble(), 2);

        // A 9 µV line stands > 20 dB over the 50 Hz floor; Snedecor's F(5.8, ≈35) gives a bin ≈ 2e-20 at 20 dB
        // (scipy 1.10.1 stats.f.sf(101, 5.79, 35.1)), so even corrected for ≈ 500 bins × 8 channels it is far below 1e-5.
        Assert.InRange(mains.GetProperty("falseAlarmProbability").GetDouble(), 0, 1e-5);
        Assert.False(mains.GetProperty("aliased").GetBoolean());
        Assert.True(report.TryGetProperty("channelFaults", out _));
        Assert.NotNull(report.GetProperty("caution").GetString());
    }

    [Fact]
    public async Task A_quiet_recording_passes_with_exit_code_0()
    {
        var (code, output, error) = await CliRunner.RunAsync("check", _files.Quiet, "--json");

        Assert.True(code == 0, error + output);
        using var json = JsonDocument.Parse(output);
        Assert.Equal("pass", json.RootElement.GetProperty("verdict").GetString());
    }

    [Fact]
    public async Task Several_files_give_one_JSON_line_each_in_argument_order_and_the_worst_exit_code_wins()
    {
        var missing = Path.Combine(_files.Folder, "missing.edf");
        var (code, output, error) = await CliRunner.RunAsync("check", _files.Quiet, _files.Garbage, missing, _files.Mains, "--json");

        Assert.Equal(2, code);

        // JSON Lines (jsonlines.org): one complete JSON text per line, so a pipeline can read reports as they come.
        var verdicts = output.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(Verdict).ToList();
        Assert.Equal(["pass", "error", "error", "fail"], verdicts);

        // One clear line on stderr per unreadable file, naming it.
        var lines = error.Split('\n', StringSplitOptions.RemoveEmptyEntries).Where(l => l.StartsWith("humwatch check:", StringComparison.Ordinal)).ToList();
        Assert.Contains(lines, l => l.Contains(_files.Garbage, StringComparison.Ordinal));
        Assert.Contains(lines, l => l.Contains(missing, StringComparison.Ordinal));
    }

    [Fact]
    public async Task The_readable_report_shows_the_line_its_explanation_and_the_safety_caution_once()
    {
        var (code, output, _) = await CliRunner.RunAsync("check", _files.Mains, _files.Mains);

        Assert.Equal(1, code);
        Assert.Contains("FAIL", output, StringComparison.Ordinal);
        Assert.Matches(@"\s(49\.9\d|50\.0\d)\s", output);
        Assert.Contains("mains", output, StringComparison.Ordinal);
        Assert.Equal(1, CountOf(output, "Caution:"));
    }

    [Fact]
    public async Task The_readable_report_names_the_strongest_channels_RMS_and_the_limit_a_fail_or_warn_crossed()
    {
        var (code, output, _) = await CliRunner.RunAsync("check", _files.Mains);

        Assert.Equal(1, code);
        Assert.Contains("max ch µV RMS", output, StringComparison.Ordinal);
        Assert.DoesNotContain("peak µV", output, StringComparison.Ordinal);

        // Simulated 9 µV RMS of mains against the default limits (warn 1, fail 5 µV RMS).
        Assert.Matches(@"result    FAIL — mains at (49\.9\d|50\.0\d) Hz: [89]\.\d\d µV RMS ≥ fail limit 5\.00 µV RMS \(Check:FailLineUvRms\)", output);

        var (warnCode, warned, _) = await CliRunner.RunAsync("check", _files.Mains, "--set", "Check:FailLineUvRms=50");
        Assert.Equal(0, warnCode);
        Assert.Matches(@"result    WARN — mains at (49\.9\d|50\.0\d) Hz: [89]\.\d\d µV RMS ≥ warn limit 1\.00 µV RMS \(Check:WarnLineUvRms\)", warned);
    }

    [Fact]
    public async Task The_JSON_report_writes_characters_as_themselves_and_carries_its_limits()
    {
        var (code, output, _) = await CliRunner.RunAsync("check", _files.Mains, "--json");

        Assert.Equal(1, code);
        Assert.Equal('{', output[0]);
        Assert.Equal(output.Length - 1, output.TrimEnd().Length); // one line: JSON Lines
        Assert.Contains("\"format\":\"EDF+C\"", output, StringComparison.Ordinal);
        Assert.Contains("µV RMS ≥ fail limit", output, StringComparison.Ordinal);
        Assert.DoesNotContain("\\u", output, StringComparison.Ordinal);
        using var json = JsonDocument.Parse(output);
        var limits = json.RootElement.GetProperty("limits");
        Assert.Equal(5, limits.GetProperty("failLineUvRms").GetDouble());
        Assert.Equal(1, limits.GetProperty("warnLineUvRms").GetDouble());
    }

    [Theory]
    [InlineData("--mains", "55")]
    [InlineData("--no-such-option", "1")]
    public async Task Bad_arguments_exit_with_code_2(string option, string value)
    {
        var (code, _, error) = await CliRunner.RunAsync("check", _files.Quiet, option, value);

        Assert.Equal(2, code);
        Assert.Contains("humwatch", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_configuration_value_out_of_range_exits_with_code_2_naming_the_key()
    {
        var config = Path.Combine(_files.Folder, "bad.json");
        await File.WriteAllTextAsync(config, """{ "Analysis": { "Lines": { "MinProminenceDb": 1 } } }""");

        var (code, _, error) = await CliRunner.RunAsync("check", _files.Quiet, "--config", config);

        Assert.Equal(2, code);
        Assert.Contains("Analysis:Lines:MinProminenceDb", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task The_60_Hz_profile_names_a_60_Hz_line_on_every_channel_the_grid_fundamental_with_no_display_alternative()
    {
        var profile = Path.Combine(AppContext.BaseDirectory, "config", "site-60hz.json");

        var (code, output, error) = await CliRunner.RunAsync("check", _files.Mains60, "--json", "--config", profile);

        Assert.True(code == 1, error);
        using var json = JsonDocument.Parse(output);
        var line = json.RootElement.GetProperty("lines").EnumerateArray().First(l => Math.Abs(l.GetProperty("frequencyHz").GetDouble() - 60) < 0.3);
        Assert.Equal("mains", line.GetProperty("source").GetString());

        // The grid's fundamental on every channel: a 60 Hz display reaching every electrode alike does not fit as well.
        Assert.DoesNotContain(line.GetProperty("alsoPossible").EnumerateArray(), a => a.GetString()!.Contains("display", StringComparison.Ordinal));
        Assert.Equal("grid-fundamental", line.GetProperty("evidence").GetProperty("basis").GetString());
    }

    [Fact]
    public async Task A_run_with_an_invalid_setting_stops_at_start_with_code_2_naming_the_key()
    {
        var (code, _, error) = await CliRunner.RunAsync("run", "--set", "Alerts:RaiseAfterFrames=0", "--set", "Site:TimeZone=Mars/Olympus");

        Assert.Equal(2, code);
        Assert.Contains("Alerts:RaiseAfterFrames", error, StringComparison.Ordinal);
        Assert.Contains("Site:TimeZone", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Check_reads_the_working_directory_settings_then_HUMWATCH_variables_then_set_like_run()
    {
        // The simulated mains line is 9 µV RMS (see Recordings): it passes under limits of 20/50 µV and fails under 2/4 µV.
        using var work = new TempFolder();
        await File.WriteAllTextAsync(Path.Combine(work.Path, "appsettings.json"), """{ "Check": { "WarnLineUvRms": 20, "FailLineUvRms": 50 } }""");
        var strict = new Dictionary<string, string> { ["HUMWATCH_Check__WarnLineUvRms"] = "2", ["HUMWATCH_Check__FailLineUvRms"] = "4" };

        var fromFile = await CliRunner.RunInAsync(work.Path, new Dictionary<string, string>(), "check", _files.Mains, "--json");
        var fromEnvironment = await CliRunner.RunInAsync(work.Path, strict, "check", _files.Mains, "--json");
        var fromSet = await CliRunner.RunInAsync(work.Path, strict, "check", _files.Mains, "--json", "--set", "Check:WarnLineUvRms=20", "--set", "Check:FailLineUvRms=50");

        Assert.Equal((0, "pass"), (fromFile.ExitCode, Verdict(fromFile.Output)));
        Assert.Equal((1, "fail"), (fromEnvironment.ExitCode, Verdict(fromEnvironment.Output)));
        Assert.Equal((0, "pass"), (fromSet.ExitCode, Verdict(fromSet.Output)));
    }

    [Fact]
    public async Task A_malformed_set_on_check_exits_with_code_2()
    {
        var (code, _, error) = await CliRunner.RunAsync("check", _files.Quiet, "--set", "Check:WarnLineUvRms");

        Assert.Equal(2, code);
        Assert.Contains("--set takes KEY=VALUE", error, StringComparison.Ordinal);
    }

    private static string? Verdict(string json)
    {
        using var document = JsonDocument.Parse(json);
        return document.RootElement.GetProperty("verdict").GetString();
    }

    private static int CountOf(string text, string what)
    {
        var count = 0;
        for (var i = text.IndexOf(what, StringComparison.Ordinal); i >= 0; i = text.IndexOf(what, i + 1, StringComparison.Ordinal))
        {
            count++;
        }

        return count;
    }

    /// <summary>Recordings made once for the class: simulated rooms written as EDF+ with the project's writer.</summary>
    public sealed class Recordings : IDisposable
    {
        private readonly TempFolder _temp = new();

        public Recordings()
        {
            Mains = Write("mains.edf", Room(50, 9));
            Mains60 = Write("mains60.edf", Room(60, 9));
            Quiet = Write("quiet.edf", Room(50, 0));
            Garbage = Path.Combine(Folder, "garbage.edf");
            File.WriteAllBytes(Garbage, [.. Enumerable.Range(0, 5000).Select(i => (byte)(i * 31))]);
        }

        public string Folder => _temp.Path;

        public string Mains { get; }

        public string Mains60 { get; }

        public string Quiet { get; }

        public string Garbage { get; }

        public void Dispose() => _temp.Dispose();

        private static SimulatedRoom Room(double mainsHz, double amplitudeUvRms) => new()
        {
            Name = "cli-room",
            SampleRateHz = 250,
            Channels = SimulatedRoom.Montage(8),
            Tones = amplitudeUvRms > 0 ? [new SimulatedTone { Name = "mains", FrequencyHz = mainsHz, AmplitudeUvRms = amplitudeUvRms, WanderHz = 0.02 }] : [],
        };

        private string Write(string name, SimulatedRoom room)
        {
            var path = Path.Combine(Folder, name);
            var simulator = new RoomSimulator(room, seed: 3);
            var options = new EdfWriterOptions { Signals = [.. simulator.Layout.Channels.Select(c => EdfWriterSignal.Edf16(c.Label, 250))] };
            using var writer = new EdfWriter(path, options);
            for (var second = 0; second < 60; second++)
            {
                var chunk = simulator.Next(250);
                writer.WriteRecord(chunk.SamplesUv.Slice(0, 250 * 8));
            }

            return path;
        }
    }
}
