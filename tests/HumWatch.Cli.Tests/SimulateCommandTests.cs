using System.Globalization;
using System.Text;
using HumWatch.Cli.Commands;
using HumWatch.Simulation;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>
/// `simulate` dates its recordings now (or --start) and never overwrites a file unasked. Start dates are read back from
/// the raw header: EDF puts the start date as dd.mm.yy at byte 168 and the start time as hh.mm.ss at byte 176, and
/// EDF+ begins the recording field at byte 88 with "Startdate dd-MMM-yyyy" (EDF and EDF+ specifications, from memory).
/// </summary>
public sealed class SimulateCommandTests : IDisposable
{
    private readonly TempFolder _folder = new();
    private readonly string _scenario;

    public SimulateCommandTests()
    {
        var scenario = new SimulationScenario
        {
            Name = "one room",
            Rooms = [new SimulatedRoom { Name = "oak-room", SampleRateHz = 128, Channels = SimulatedRoom.Montage(2) }],
        };
        _scenario = Path.Combine(_folder.Path, "scenario.json");
        File.WriteAllText(_scenario, scenario.ToJson());
    }

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void Without_start_the_recording_begins_at_the_clock_s_local_now_to_the_second()
    {
        // 05:06:07.890 UTC is 07:06:07.890 at UTC+2; the header keeps whole seconds.
        var clock = new FixedClock(new DateTimeOffset(2026, 3, 4, 5, 6, 7, 890, TimeSpan.Zero), TimeSpan.FromHours(2));
        var output = Path.Combine(_folder.Path, "out");

        var code = SimulateCommand.Run(_scenario, output, 2, bdf: false, startText: null, force: false, clock, TextWriter.Null, TextWriter.Null);

        Assert.Equal(0, code);
        var header = Header(Path.Combine(output, "oak-room.edf"));
        Assert.Equal(("04.03.26", "07.06.07"), (header.Date, header.Time));
        Assert.StartsWith("Startdate 04-MAR-2026 X X HumWatch-simulate", header.Recording, StringComparison.Ordinal);
    }

    [Fact]
    public async Task The_real_program_dates_a_recording_today_by_default()
    {
        var output = Path.Combine(_folder.Path, "today");
        var before = DateTime.Now;

        var (code, _, error) = await CliRunner.RunAsync("simulate", _scenario, "--out", output, "--seconds", "2");

        var after = DateTime.Now;
        Assert.True(code == 0, error);
        var header = Header(Path.Combine(output, "oak-room.edf"));
        var start = DateTime.ParseExact($"{header.Date} {header.Time}", "dd.MM.yy HH.mm.ss", CultureInfo.InvariantCulture);

        // Whole seconds: the start lies between the second the command began and the moment it ended.
        Assert.InRange(start, before.AddTicks(-(before.Ticks % TimeSpan.TicksPerSecond)), after);
    }

    [Fact]
    public async Task Start_sets_the_local_date_and_time_written_into_the_header()
    {
        var output = Path.Combine(_folder.Path, "start");

        var (code, _, error) = await CliRunner.RunAsync("simulate", _scenario, "--out", output, "--seconds", "2", "--start", "2026-12-01T08:30:15", "--bdf");

        Assert.True(code == 0, error);
        var header = Header(Path.Combine(output, "oak-room.bdf"));
        Assert.Equal(("01.12.26", "08.30.15"), (header.Date, header.Time));
        Assert.StartsWith("Startdate 01-DEC-2026 ", header.Recording, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("2026-12-01T08:30:00Z")]
    [InlineData("01.12.2026")]
    [InlineData("2090-01-01")]
    public void A_start_that_is_not_a_local_date_time_EDF_can_hold_is_refused(string start)
    {
        using var stderr = new StringWriter();
        var output = Path.Combine(_folder.Path, "refused");

        var code = SimulateCommand.Run(_scenario, output, 2, bdf: false, start, force: false, TimeProvider.System, TextWriter.Null, stderr);

        Assert.Equal(2, code);
        Assert.Contains("--start", stderr.ToString(), StringComparison.Ordinal);
        Assert.False(File.Exists(Path.Combine(output, "oak-room.edf")));
    }

    [Fact]
    public async Task An_existing_recording_is_not_overwritten_without_force_and_is_with_it()
    {
        var output = Path.Combine(_folder.Path, "twice");
        var path = Path.Combine(output, "oak-room.edf");
        Assert.Equal(0, (await CliRunner.RunAsync("simulate", _scenario, "--out", output, "--seconds", "2", "--start", "2026-01-02T03:04:05")).ExitCode);
        var first = await File.ReadAllBytesAsync(path);

        var refused = await CliRunner.RunAsync("simulate", _scenario, "--out", output, "--seconds", "2", "--start", "2026-06-07T08:09:10");

        Assert.Equal(2, refused.ExitCode);
        Assert.Contains($"humwatch simulate: {path} already exists; not overwritten (--force overwrites it).", refused.Error, StringComparison.Ordinal);
        Assert.Equal(first, await File.ReadAllBytesAsync(path));

        var forced = await CliRunner.RunAsync("simulate", _scenario, "--out", output, "--seconds", "2", "--start", "2026-06-07T08:09:10", "--force");

        Assert.True(forced.ExitCode == 0, forced.Error);
        Assert.Equal(("07.06.26", "08.09.10"), (Header(path).Date, Header(path).Time));
    }

    private static (string Recording, string Date, string Time) Header(string path)
    {
        var bytes = File.ReadAllBytes(path).AsSpan(0, 256);
        return (Encoding.ASCII.GetString(bytes.Slice(88, 80)).TrimEnd(), Encoding.ASCII.GetString(bytes.Slice(168, 8)), Encoding.ASCII.GetString(bytes.Slice(176, 8)));
    }

    /// <summary>A clock standing still at one instant, in a fixed-offset zone.</summary>
    private sealed class FixedClock(DateTimeOffset utcNow, TimeSpan offset) : TimeProvider
    {
        public override DateTimeOffset GetUtcNow() => utcNow;

        public override TimeZoneInfo LocalTimeZone { get; } = TimeZoneInfo.CreateCustomTimeZone("test", offset, "test", "test");
    }
}
