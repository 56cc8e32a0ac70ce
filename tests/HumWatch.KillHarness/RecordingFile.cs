using HumWatch.Formats;
using HumWatch.Simulation;

namespace HumWatch.KillHarness;

/// <summary>Writes a simulated room as an EDF+ file in 1 s records with the Formats writer.</summary>
internal static class RecordingFile
{
    public static void Write(RoomSimulator simulator, string path, int seconds, DateTime startLocal)
    {
        var perRecord = (int)Math.Round(simulator.Layout.SampleRateHz);
        var options = new EdfWriterOptions
        {
            Kind = EdfFileKind.EdfPlusC,
            RecordDurationSeconds = 1,
            Signals = [.. simulator.Layout.Channels.Select(c => EdfWriterSignal.Edf16(c.Label, perRecord))],
            StartLocal = startLocal,
            RecordingInfo = "X X HumWatch-kill-harness",
        };
        using var writer = new EdfWriter(path, options);
        for (var r = 0; r < seconds; r++)
        {
            writer.WriteRecord(simulator.Next(perRecord).SamplesUv);
        }
    }
}
