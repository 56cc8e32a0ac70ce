namespace HumWatch.Formats;

/// <summary>An open recording: header information up front, samples streamed in chunks.</summary>
public interface IRecordingReader : IDisposable
{
    /// <summary>Header information, known as soon as the file is open.</summary>
    RecordingInfo Info { get; }

    /// <summary>
    /// Streams the file once from the start, yielding chunks of about <paramref name="chunkSeconds"/> per signal group
    /// (whole EDF data records; at least one record). Each chunk owns its sample buffer, so it may be queued to
    /// another thread. Memory stays bounded whatever the file size. Each enumeration restarts at the first record; do not run two at once.
    /// </summary>
    /// <param name="chunkSeconds">Target chunk length in seconds; default 2 s; must be in (0, 3600].</param>
    /// <exception cref="RecordingFormatException">The file turns out to be malformed part-way through.</exception>
    IEnumerable<GroupChunk> ReadChunks(double chunkSeconds = 2.0);

    /// <summary>
    /// Annotations in file order; complete after <see cref="ReadChunks"/> has been enumerated to the end. At most the
    /// first 100 000 are kept; the rest are still checked and counted in <see cref="AnnotationsNotKept"/>.
    /// </summary>
    IReadOnlyList<RecordingAnnotation> Annotations { get; }

    /// <summary>Annotations read but not kept in <see cref="Annotations"/> because it already held 100 000.</summary>
    long AnnotationsNotKept { get; }
}
