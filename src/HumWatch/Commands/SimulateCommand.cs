using System.CommandLine;
using System.Text.Json;
using HumWatch.Formats;
using HumWatch.Simulation;

namespace HumWatch.Cli.Commands;

/// <summary>`humwatch simulate SCENARIO --out DIR [--seconds N] [--bdf]`: writes each simulated room to a recording file.</summary>
internal static class SimulateCommand
{
    public static Command Create()
    {
        var scenario = new Argument<string>("scenario") { Description = "Scenario file, e.g. demo-streams/cedar-room.json." };
        var output = new Option<string>("--out") { Description = "Folder for the recordings (one per room).", DefaultValueFactory = _ => "." };
        var seconds = new Option<double>("--seconds") { Description = "Length of each recording, s.", DefaultValueFactory = _ => 120 };
        var bdf = new Option<bool>("--bdf") { Description = "Write 24-bit BDF+ instead of 16-bit EDF+." };
        var command = new Command("simulate", "Writes the rooms of a scenario as EDF+ (or BDF+) recordings, to try `check` on known contamination.")
        {
            scenario,
            output,
            seconds,
            bdf,
        };
        command.SetAction(parse => Run(parse.GetValue(scenario)!, parse.GetValue(output)!, parse.GetValue(seconds), parse.GetValue(bdf)));
        return command;
    }

    internal static int Run(string scenarioPath, string outputFolder, double seconds, bool bdf)
    {
        if (!(seconds >= 1 && seconds <= 7 * 24 * 3600))
        {
            Console.Error.WriteLine($"humwatch simulate: --seconds must be between 1 and {7 * 24 * 3600} (got {seconds}).");
            return ExitCodes.BadInput;
        }

        SimulationScenario scenario;
        try
        {
            scenario = SimulationScenario.FromJson(File.ReadAllText(scenarioPath));
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or JsonException)
        {
            Console.Error.WriteLine($"humwatch simulate: {scenarioPath}: {ex.Message}");
            return ExitCodes.BadInput;
        }

        Directory.CreateDirectory(outputFolder);
        for (var room = 0; room < scenario.Rooms.Count; room++)
        {
            var path = Path.Combine(outputFolder, SafeFileName(scenario.Rooms[room].Name) + (bdf ? ".bdf" : ".edf"));
            WriteRoom(scenario.CreateRoom(room), path, seconds, bdf);
            Console.Out.WriteLine(path);
        }

        return ExitCodes.Ok;
    }

    /// <summary>Writes <paramref name="seconds"/> of one room in 1 s data records.</summary>
    internal static void WriteRoom(RoomSimulator simulator, string path, double seconds, bool bdf)
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
            RecordingInfo = "Startdate X X X HumWatch-simulate",
        };
        using var writer = new EdfWriter(path, options);
        var records = (long)Math.Ceiling(seconds);
        for (var r = 0; r < records; r++)
        {
            var chunk = simulator.Next(perRecord);
            writer.WriteRecord(chunk.SamplesUv.AsSpan(0, perRecord * chunk.Layout.ChannelCount));
        }
    }

    private static string SafeFileName(string name)
    {
        var invalid = Path.GetInvalidFileNameChars();
        var safe = new string([.. name.Select(c => invalid.Contains(c) || c == '.' ? '_' : c)]);
        return safe.Length == 0 ? "room" : safe;
    }
}
