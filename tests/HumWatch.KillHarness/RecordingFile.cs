using HumWatch.Formats;
using HumWatch.Simulation;

namespace HumWatch.KillHarness;

/// <summary>Writes a simulated room as an EDF+ file in 1 s records with the Formats writer.</summary>
internal static class RecordingFile
{
    /// <summary>
    /// Writes the recording into <paramref name="inbox"/> under a .part name the inbox ignores and then renames it to
    /// <paramref name="name"/>, as a careful copier does.
    /// </summary>
    public static void Drop(RoomSimulator simulator, string inbox, string name, int seconds, DateTime startLocal)
    {
        var part = Path.Combine(inbox, name + ".part");
        Write(simulator, part, seconds, startLocal);
        File.Move(part, Path.Combine(inbox, name));
    }

    /// <summary>Copies a finished recording into <paramref name="inbox"/> the same careful way (.part, then renamed).</summary>
    public static void CopyInto(string path, string inbox)
    {
        var name = Path.GetFileName(path);
        var part = Path.Combine(inbox, name + ".part");
        File.Copy(path, part);
        File.Move(part, Path.Combine(inbox, name));
    }

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
