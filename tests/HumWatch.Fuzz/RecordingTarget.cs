using System.Globalization;
using HumWatch.Formats;

namespace HumWatch.Fuzz;

/// <summary>
/// EDF/EDF+/BDF/BDF+ and CSV: the input becomes a file with the target's extension, opened with
/// <see cref="RecordingReader.Open"/> and read to the end with <see cref="IRecordingReader.ReadChunks"/>, as the inbox
/// and `check` do. A <see cref="RecordingFormatException"/> naming this file is the one accepted rejection.
/// </summary>
internal sealed class RecordingTarget(string name, string extension) : IFuzzTarget
{
    // 4 MiB covers the reader's fixed buffers (a 1 MiB file buffer, header arrays); 16 bytes per input byte covers
    // decoded samples (4-byte floats from 2- or 3-byte EDF/BDF samples and from CSV fields of at least 2 characters),
    // annotation texts and the strings of a CSV line.
    private const long FixedAllowanceBytes = 4L << 20;
    private const int AllowancePerInputByte = 16;

    private readonly string _path = Path.Combine(FuzzScratch.Folder, "input" + extension);

    public string Name { get; } = name;

    public string Execute(byte[] input)
    {
        File.WriteAllBytes(_path, input);
        var budget = AllocationBudget.Start(input.Length, FixedAllowanceBytes, AllowancePerInputByte);
        string outcome;
        try
        {
            outcome = ReadAll();
        }
        catch (RecordingFormatException ex)
        {
            if (ex.Path != _path || string.IsNullOrWhiteSpace(ex.Problem))
            {
                throw new FuzzCheckFailedException($"rejection does not name the file and a problem: '{ex.Message}'");
            }

            outcome = "rejected: " + ex.Problem;
        }

        budget.Check("reading the recording");
        return outcome;
    }

    private string ReadAll()
    {
        using var reader = RecordingReader.Open(_path);
        var info = reader.Info;
        if (info.Groups.Count == 0 || !double.IsFinite(info.DurationSeconds) || info.DurationSeconds < 0)
        {
            throw new FuzzCheckFailedException($"opened with {info.Groups.Count} groups and duration {info.DurationSeconds} s");
        }

        var nextIndex = new long[info.Groups.Count];
        long chunks = 0;
        foreach (var (group, chunk) in reader.ReadChunks(2.0))
        {
            if (group < 0 || group >= info.Groups.Count || !ReferenceEquals(chunk.Layout, info.Groups[group].Layout))
            {
                throw new FuzzCheckFailedException($"chunk of group {group} does not carry that group's layout");
            }

            var layout = chunk.Layout;
            if (!(layout.SampleRateHz > 0) || !double.IsFinite(layout.SampleRateHz))
            {
                throw new FuzzCheckFailedException($"group {group} has sample rate {layout.SampleRateHz} Hz");
            }

            // Samples follow each other or jump forward (a gap), never overlap, and their indices fit in 64 bits.
            if (chunk.SamplesPerChannel < 1 || chunk.FirstSampleIndex < nextIndex[group] || chunk.EndSampleIndex < chunk.FirstSampleIndex)
            {
                throw new FuzzCheckFailedException($"chunk {chunks} of group {group}: {chunk.SamplesPerChannel} samples from {chunk.FirstSampleIndex}, previous chunk ended at {nextIndex[group]}");
            }

            nextIndex[group] = chunk.FirstSampleIndex + chunk.SamplesPerChannel;
            chunks++;
        }

        return string.Create(CultureInfo.InvariantCulture, $"accepted {info.Format}: {info.Groups.Count} group(s), {chunks} chunk(s), {reader.Annotations.Count} annotation(s)");
    }
}

/// <summary>A folder of this process's own for the files the targets write.</summary>
internal static class FuzzScratch
{
    public static string Folder { get; } = Directory.CreateDirectory(Path.Combine(Path.GetTempPath(), "humwatch-fuzz-" + Environment.ProcessId.ToString(CultureInfo.InvariantCulture))).FullName;
}
