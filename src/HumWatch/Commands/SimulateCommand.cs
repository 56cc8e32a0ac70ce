using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using HumWatch.Formats;
using HumWatch.Simulation;

namespace HumWatch.Cli.Commands;

/// <summary>`humwatch simulate SCENARIO --out DIR [--seconds N] [--start LOCAL] [--bdf] [--force]`: writes each simulated room to a recording file.</summary>
internal static class SimulateCommand
{
    /// <summary>The date-time forms --start takes (ISO 8601, local time, no zone).</summary>
    private static readonly string[] StartFormats = ["yyyy-MM-dd'T'HH:mm:ss", "yyyy-MM-dd'T'HH:mm", "yyyy-MM-dd HH:mm:ss", "yyyy-MM-dd HH:mm", "yyyy-MM-dd"];

    public static Command Create()
    {
        var scenario = new Argument<string>("scenario") { Description = "Scenario file, e.g. demo-streams/cedar-room.json." };
        var output = new Option<string>("--out") { Description = "Folder for the recordings (one per room).", DefaultValueFactory = _ => "." };
        var seconds = new Option<double>("--seconds") { Description = "Length of each recording, s.", DefaultValueFactory = _ => 120 };
        var start = new Option<string?>("--start") { Description = "Local date-time of the first sample written into the file header, ISO 8601 without a zone, e.g. 2026-12-01T08:30:00 (default: now, to the second).", HelpName = "YYYY-MM-DDTHH:MM:SS" };
        var bdf = new Option<bool>("--bdf") { Description = "Write 24-bit BDF+ instead of 16-bit EDF+." };
        var force = new Option<bool>("--force") { Description = "Overwrite recordings that already exist." };
        var command = new Command("simulate", "Writes the rooms of a scenario as EDF+ (or BDF+) recordings, to try `check` or the inbox on known contamination.")
        {
            scenario,
            output,
            seconds,
            start,
            bdf,
            force,
        };
        command.SetAction(parse => Run(parse.GetValue(scenario)!, parse.GetValue(output)!, parse.GetValue(seconds), parse.GetValue(bdf), parse.GetValue(start), parse.GetValue(force), TimeProvider.System, Console.Out, Console.Error));
        return command;
    }

    /// <summary>Writes every room; returns the exit code.</summary>
    /// <param name="startText">--start as typed, or null for now (local time of <paramref name="clock"/>, whole seconds).</param>
    /// <param name="clock">The clock "now" is read from; tests pass a fixed one.</param>
    internal static int Run(string scenarioPath, string outputFolder, double seconds, bool bdf, string? startText, bool force, TimeProvider clock, TextWriter stdout, TextWriter stderr)
    {
        ArgumentNullException.ThrowIfNull(clock);
        if (!(seconds >= 1 && seconds <= 7 * 24 * 3600))
        {
            stderr.WriteLine($"humwatch simulate: --seconds must be between 1 and {7 * 24 * 3600} (got {seconds}).");
            return ExitCodes.BadInput;
        }

        if (StartLocal(startText, clock, stderr) is not { } startLocal)
        {
            return ExitCodes.BadInput;
        }

        SimulationScenario scenario;
        try
        {
            scenario = SimulationScenario.FromJson(File.ReadAllText(scenarioPath));
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or JsonException or ArgumentException)
        {
            stderr.WriteLine($"humwatch simulate: {scenarioPath}: {ex.Message}");
            return ExitCodes.BadInput;
        }

        var paths = Enumerable.Range(0, scenario.Rooms.Count)
            .Select(room => Path.Combine(outputFolder, SafeFileName(scenario.Rooms[room].Name) + (bdf ? ".bdf" : ".edf")))
            .ToList();
        if (paths.GroupBy(p => p, StringComparer.OrdinalIgnoreCase).FirstOrDefault(g => g.Count() > 1) is { } clash)
        {
            stderr.WriteLine($"humwatch simulate: {scenarioPath}: two rooms would both be written to {clash.Key}; give them different names.");
            return ExitCodes.BadInput;
        }

        // Checked for every room before any is written, so a refusal leaves the folder as it was.
        var existing = paths.Where(File.Exists).ToList();
        if (existing.Count > 0 && !force)
        {
            foreach (var path in existing)
            {
                stderr.WriteLine($"humwatch simulate: {path} already exists; not overwritten (--force overwrites it).");
            }

            return ExitCodes.BadInput;
        }

        try
        {
            Directory.CreateDirectory(outputFolder);
            for (var room = 0; room < scenario.Rooms.Count; room++)
            {
                WriteRoom(scenario.CreateRoom(room), paths[room], seconds, bdf, startLocal);
                stdout.WriteLine(paths[room]);
            }
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            stderr.WriteLine($"humwatch simulate: cannot write to {outputFolder}: {ex.Message}");
            return ExitCodes.BadInput;
        }
        catch (ArgumentException ex)
        {
            stderr.WriteLine($"humwatch simulate: {scenarioPath}: {ex.Message}");
            return ExitCodes.BadInput;
        }

        return ExitCodes.Ok;
    }

    /// <summary>The header's start: --start parsed, or now to the second; null (with the reason on stderr) when --start is not a date-time EDF can hold.</summary>
    internal static DateTime? StartLocal(string? startText, TimeProvider clock, TextWriter stderr)
    {
        DateTime start;
        if (startText is null)
        {
            var now = clock.GetLocalNow().DateTime;
            start = new DateTime(now.Year, now.Month, now.Day, now.Hour, now.Minute, now.Second, DateTimeKind.Unspecified);
        }
        else if (!DateTime.TryParseExact(startText, StartFormats, CultureInfo.InvariantCulture, DateTimeStyles.None, out start))
        {
            stderr.WriteLine($"humwatch simulate: --start takes a local date-time as YYYY-MM-DDTHH:MM:SS (or YYYY-MM-DD), e.g. 2026-12-01T08:30:00, without a time zone (got '{startText}').");
            return null;
        }

        // EDF writes the start year with two digits, read as 1985–2084 (EDF+ specification's clipping date of 1985, from memory).
        if (start.Year is < 1985 or > 2084)
        {
            stderr.WriteLine($"humwatch simulate: --start must lie between 1985 and 2084, the years an EDF header can hold (got {start:yyyy-MM-dd}).");
            return null;
        }

        return start;
    }

    /// <summary>Writes <paramref name="seconds"/> of one room in 1 s data records.</summary>
    internal static void WriteRoom(RoomSimulator simulator, string path, double seconds, bool bdf, DateTime startLocal)
    {
        var rate = simulator.Layout.SampleRateHz;
        var perRecord = (int)Math.Round(rate);
        if (Math.Abs(perRecord - rate) > 1e-9)
        {
            throw new ArgumentOutOfRangeException(nameof(simulator), rate, "Recordings are written in 1 s records, so the room's rate must be a whole number of Hz.");
        }

        var signals = simulator.Layout.Channels
            .Select(c => bdf ? EdfWriterSignal.Bdf24(c.Label, perRecord, 100_000) : EdfWriterSignal.Edf16(c.Label, perRecord))
            .ToList();
        var options = new EdfWriterOptions
        {
            Kind = bdf ? EdfFileKind.BdfPlusC : EdfFileKind.EdfPlusC,
            RecordDurationSeconds = 1,
            Signals = signals,
            StartLocal = startLocal,

            // EDF+ recording field after the "Startdate dd-MMM-yyyy" the writer puts first: admincode, technician, equipment.
            RecordingInfo = "X X HumWatch-simulate",
        };
        using var writer = new EdfWriter(path, options);
        var records = (long)Math.Ceiling(seconds);
        for (var r = 0; r < records; r++)
        {
            var chunk = simulator.Next(perRecord);
            writer.WriteRecord(chunk.SamplesUv);
        }
    }

    private static string SafeFileName(string name)
    {
        var invalid = Path.GetInvalidFileNameChars();
        var safe = new string([.. name.Select(c => invalid.Contains(c) || c == '.' ? '_' : c)]);
        return safe.Length == 0 ? "room" : safe;
    }
}
