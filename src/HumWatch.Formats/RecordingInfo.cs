using HumWatch.Core.Signals;

namespace HumWatch.Formats;

/// <summary>What a recording holds, from its header.</summary>
/// <param name="Path">The file as given to <see cref="RecordingReader.Open"/>.</param>
/// <param name="Format">"EDF", "EDF+C", "EDF+D", "BDF", "BDF+C", "BDF+D" or "CSV".</param>
/// <param name="StartLocal">Recording start as written in the file (local time, no zone), when known.</param>
/// <param name="DurationSeconds">Recorded time in seconds (number of data records × record duration; for EDF+D gaps are not counted).</param>
/// <param name="Groups">The analysed signals, grouped by sample rate (never empty).</param>
/// <param name="Skipped">Signals not analysed, each with the reason.</param>
/// <param name="Prefiltering">Distinct prefiltering texts of the analysed signals joined with "; " (e.g. "HP:0.1Hz LP:75Hz N:50Hz"), or null when none is given.</param>
public sealed record RecordingInfo(
    string Path,
    string Format,
    DateTime? StartLocal,
    double DurationSeconds,
    IReadOnlyList<SignalGroup> Groups,
    IReadOnlyList<SkippedSignal> Skipped,
    string? Prefiltering)
{
    /// <summary>Things the reader tolerated but a user should know (e.g. an assumed unit, bytes after the last record).</summary>
    public IReadOnlyList<string> Warnings { get; init; } = [];
}

/// <summary>Analysed signals that share one sample rate; each group is its own stream.</summary>
/// <param name="Index">Position in <see cref="RecordingInfo.Groups"/>; matches <see cref="GroupChunk.GroupIndex"/>.</param>
/// <param name="Layout">Rate and channels (labels, physical range in µV).</param>
/// <param name="SignalIndices">Zero-based signal (column) index in the file of each channel, in channel order.</param>
public sealed record SignalGroup(int Index, StreamLayout Layout, IReadOnlyList<int> SignalIndices);

/// <summary>A signal present in the file but not analysed.</summary>
/// <param name="SignalIndex">Zero-based signal (column) index in the file.</param>
/// <param name="Label">Label as written.</param>
/// <param name="Reason">Why it is not analysed, for people.</param>
public sealed record SkippedSignal(int SignalIndex, string Label, string Reason);

/// <summary>A timed note from the file (EDF+/BDF+ annotation).</summary>
/// <param name="OnsetSeconds">Seconds from the recording start (may be negative).</param>
/// <param name="DurationSeconds">Duration in seconds, when given.</param>
/// <param name="Text">Annotation text (UTF-8 decoded).</param>
public sealed record RecordingAnnotation(double OnsetSeconds, double? DurationSeconds, string Text);

/// <summary>A chunk of one signal group.</summary>
/// <param name="GroupIndex">Index into <see cref="RecordingInfo.Groups"/>.</param>
/// <param name="Chunk">Samples in µV; FirstSampleIndex counts from the recording start at the group's rate.</param>
public readonly record struct GroupChunk(int GroupIndex, SampleChunk Chunk);
