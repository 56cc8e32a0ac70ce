namespace HumWatch.Formats;

/// <summary>
/// A recording whose data records have one fixed duration and no gaps (EDF, EDF+C, BDF, BDF+C), so any run of records
/// can be read on its own, e.g. by several readers of the same file at once, each on its own thread.
/// </summary>
public interface IRecordRangeReader
{
    /// <summary>False for a recording with gaps (EDF+D, BDF+D): its records must be read in order from the first.</summary>
    bool CanReadRanges { get; }

    /// <summary>Data records in the file.</summary>
    long RecordCount { get; }

    /// <summary>Duration of one data record, s.</summary>
    double RecordDurationSeconds { get; }

    /// <summary>Samples per data record of each signal group, in <see cref="RecordingInfo.Groups"/> order.</summary>
    IReadOnlyList<int> SamplesPerRecord { get; }

    /// <summary>
    /// Reads records <paramref name="firstRecord"/> … <paramref name="firstRecord"/> + <paramref name="recordCount"/> − 1 as
    /// <see cref="IRecordingReader.ReadChunks"/> does, with sample indices counted from the recording's start. Unlike
    /// ReadChunks, a chunk's buffer is reused: it is valid only until the next chunk is requested. Annotations are
    /// checked but not collected.
    /// </summary>
    /// <exception cref="InvalidOperationException"><see cref="CanReadRanges"/> is false.</exception>
    /// <exception cref="ArgumentOutOfRangeException">The range is empty or leaves the file.</exception>
    /// <exception cref="RecordingFormatException">The file turns out to be malformed inside the range.</exception>
    IEnumerable<GroupChunk> ReadRecordRange(long firstRecord, long recordCount, double chunkSeconds = 2.0);
}
