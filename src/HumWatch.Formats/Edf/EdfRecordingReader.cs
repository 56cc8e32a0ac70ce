using System.Buffers;
using System.Buffers.Binary;
using System.Globalization;
using System.Runtime.InteropServices;
using HumWatch.Core.Signals;

namespace HumWatch.Formats.Edf;

/// <summary>
/// Streams an EDF/EDF+/BDF/BDF+ file record by record through one pooled record buffer, converting analysed signals
/// to µV with the EDF scaling physical = phys_min + (digital − dig_min)·(phys_max − phys_min)/(dig_max − dig_min).
/// </summary>
internal sealed class EdfRecordingReader : IRecordingReader, IRecordRangeReader
{
    private const int FileBufferBytes = 1 << 20;

    /// <summary>Largest first-sample index of an EDF+D record (2^62): what follows it still fits in 64 bits.</summary>
    private const double MaxDiscontinuousIndex = 4.611686018427388E+18;

    /// <summary>Most annotations kept (100 000): a file of nothing but 2-byte annotations must not fill the heap.</summary>
    public const int MaxAnnotations = 100_000;

    private readonly FileStream _stream;
    private readonly EdfHeader _header;
    private readonly EdfGroupPlan[] _plans;
    private readonly EdfSignalHeader[] _annotationSignals;
    private readonly List<RecordingAnnotation> _annotations = [];
    private long _annotationsNotKept;

    private EdfRecordingReader(FileStream stream, EdfHeader header, RecordingInfo info, EdfGroupPlan[] plans, EdfSignalHeader[] annotationSignals)
    {
        (_stream, _header, _plans, _annotationSignals) = (stream, header, plans, annotationSignals);
        Info = info;
    }

    public RecordingInfo Info { get; }

    public IReadOnlyList<RecordingAnnotation> Annotations => _annotations;

    public long AnnotationsNotKept => _annotationsNotKept;

    public static EdfRecordingReader Open(string path, bool isBdf, RecordingReadOptions options)
    {
        FileStream stream;
        try
        {
            stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete, FileBufferBytes, FileOptions.SequentialScan);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new RecordingFormatException(path, RecordingReader.DescribeOpenFailure(ex), ex);
        }

        try
        {
            var header = EdfHeader.Read(path, stream, isBdf);
            var warnings = new List<string>(header.Warnings);
            var skipped = new List<SkippedSignal>();
            var annotationSignals = new List<EdfSignalHeader>();
            var byRate = new List<(int SamplesPerRecord, List<EdfSignalHeader> Signals)>();
            foreach (var s in header.Signals)
            {
                var rateHz = s.SamplesPerRecord / header.RecordDurationSeconds;
                if (s.IsAnnotation)
                {
                    annotationSignals.Add(s);
                    skipped.Add(new SkippedSignal(s.Index, s.Label, "annotation signal (read as annotations, not analysed)"));
                    continue;
                }

                if (IsTriggerLabel(s.Label))
                {
                    skipped.Add(new SkippedSignal(s.Index, s.Label, "trigger/status channel"));
                    continue;
                }

                if (s.PhysicalDimension.Length == 0)
                {
                    // Some exporters leave the unit blank on EEG channels; dropping them would hide the recording.
                    warnings.Add($"signal {s.Index + 1} ('{s.Label}') has no physical dimension; assumed µV");
                }
                else if (!VoltageUnits.TryGetFactorToUv(s.PhysicalDimension, out _))
                {
                    skipped.Add(new SkippedSignal(s.Index, s.Label, $"physical dimension '{s.PhysicalDimension}' is not a voltage"));
                    continue;
                }

                if (rateHz < options.MinAnalysisRateHz)
                {
                    skipped.Add(new SkippedSignal(s.Index, s.Label, string.Create(CultureInfo.InvariantCulture, $"sample rate {rateHz:0.###} Hz is below the analysis minimum of {options.MinAnalysisRateHz:0.###} Hz")));
                    continue;
                }

                var slot = byRate.FindIndex(g => g.SamplesPerRecord == s.SamplesPerRecord);
                if (slot < 0)
                {
                    byRate.Add((s.SamplesPerRecord, [s]));
                }
                else
                {
                    byRate[slot].Signals.Add(s);
                }
            }

            if (byRate.Count == 0)
            {
                var reasons = string.Join("; ", skipped.Select(k => $"{k.SignalIndex + 1} '{k.Label}': {k.Reason}"));
                throw new RecordingFormatException(path, $"no analysable EEG signal ({header.Signals.Count} signals: {reasons})");
            }

            var groups = new SignalGroup[byRate.Count];
            var plans = new EdfGroupPlan[byRate.Count];
            var prefilters = new List<string>();
            for (var g = 0; g < byRate.Count; g++)
            {
                var signals = byRate[g].Signals;
                var channels = new ChannelInfo[signals.Count];
                for (var c = 0; c < signals.Count; c++)
                {
                    var s = signals[c];
                    var factor = s.PhysicalDimension.Length == 0 ? 1.0 : UnitFactor(s.PhysicalDimension);
                    channels[c] = new ChannelInfo(s.Label, Math.Min(s.PhysicalMin, s.PhysicalMax) * factor, Math.Max(s.PhysicalMin, s.PhysicalMax) * factor);
                    if (s.Prefiltering.Length > 0 && !prefilters.Contains(s.Prefiltering))
                    {
                        prefilters.Add(s.Prefiltering);
                    }
                }

                var layout = new StreamLayout(byRate[g].SamplesPerRecord / header.RecordDurationSeconds, channels);
                groups[g] = new SignalGroup(g, layout, signals.Select(s => s.Index).ToArray());
                plans[g] = new EdfGroupPlan(layout, [.. signals]);
            }

            var info = new RecordingInfo(
                path,
                header.Format,
                header.StartLocal,
                header.RecordCount * header.RecordDurationSeconds,
                groups,
                skipped,
                prefilters.Count == 0 ? null : string.Join("; ", prefilters))
            {
                Warnings = warnings,
            };
            return new EdfRecordingReader(stream, header, info, plans, [.. annotationSignals]);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            stream.Dispose();
            throw new RecordingFormatException(path, "cannot read header: " + ex.Message, ex);
        }
        catch
        {
            stream.Dispose();
            throw;
        }
    }

    public IEnumerable<GroupChunk> ReadChunks(double chunkSeconds = 2.0)
    {
        CheckChunkSeconds(chunkSeconds);
        return ReadChunksCore(chunkSeconds, 0, _header.RecordCount, reuseBuffers: false, collectAnnotations: true);
    }

    public bool CanReadRanges => !_header.IsDiscontinuous;

    public long RecordCount => _header.RecordCount;

    public double RecordDurationSeconds => _header.RecordDurationSeconds;

    public IReadOnlyList<int> SamplesPerRecord => [.. _plans.Select(p => p.SamplesPerRecord)];

    public IEnumerable<GroupChunk> ReadRecordRange(long firstRecord, long recordCount, double chunkSeconds = 2.0)
    {
        CheckChunkSeconds(chunkSeconds);
        if (!CanReadRanges)
        {
            throw new InvalidOperationException($"{Info.Path}: {_header.Format} has gaps between records; read it in order with ReadChunks.");
        }

        ArgumentOutOfRangeException.ThrowIfNegative(firstRecord);
        ArgumentOutOfRangeException.ThrowIfLessThan(recordCount, 1);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(recordCount, _header.RecordCount - firstRecord);
        return ReadChunksCore(chunkSeconds, firstRecord, recordCount, reuseBuffers: true, collectAnnotations: false);
    }

    private static void CheckChunkSeconds(double chunkSeconds)
    {
        if (!double.IsFinite(chunkSeconds) || chunkSeconds <= 0 || chunkSeconds > 3600)
        {
            throw new ArgumentOutOfRangeException(nameof(chunkSeconds), chunkSeconds, "Chunk length must be in (0, 3600] seconds.");
        }
    }

    public void Dispose() => _stream.Dispose();

    private IEnumerable<GroupChunk> ReadChunksCore(double chunkSeconds, long firstRecord, long recordCount, bool reuseBuffers, bool collectAnnotations)
    {
        var header = _header;
        var path = Info.Path;
        var recordBytes = (int)header.RecordBytes;
        var floatsPerRecord = 0L;
        foreach (var p in _plans)
        {
            floatsPerRecord += (long)p.Layout.ChannelCount * p.SamplesPerRecord;
        }

        // Whole records per chunk, at least one, never more than the records to read (the batch buffer is sized from
        // what the file holds, not from the record duration the header declares) and never more than 64 MiB of floats.
        var recordsPerChunk = (long)Math.Clamp(Math.Round(chunkSeconds / header.RecordDurationSeconds), 1, int.MaxValue);
        recordsPerChunk = Math.Max(1, Math.Min(Math.Min(recordsPerChunk, recordCount), EdfHeader.MaxRecordBytes / 4 / floatsPerRecord));

        // Annotations of a range are parsed (a malformed one is still an error) into a list nobody reads.
        var annotations = collectAnnotations ? _annotations : [];
        annotations.Clear();
        _annotationsNotKept = 0;
        var batches = new EdfRecordBatch[_plans.Length];
        for (var g = 0; g < _plans.Length; g++)
        {
            batches[g] = new EdfRecordBatch(_plans[g], (int)recordsPerChunk, reuseBuffers);
        }

        var record = ArrayPool<byte>.Shared.Rent(recordBytes);
        try
        {
            _stream.Position = header.HeaderBytes + (firstRecord * recordBytes);
            double? firstOnset = null;
            for (var r = firstRecord; r < firstRecord + recordCount; r++)
            {
                ReadRecord(record, recordBytes, r);
                var onset = ParseRecordAnnotations(record, r, annotations);
                if (header.IsDiscontinuous)
                {
                    if (onset is null)
                    {
                        throw new RecordingFormatException(path, $"data record {r + 1} of {header.RecordCount} has no time-keeping annotation (required in {header.Format})");
                    }

                    firstOnset ??= onset;
                }

                // EDF+D: a record's time comes from its time-keeping TAL, so a gap shows as a jump in sample index.
                var startSeconds = header.IsDiscontinuous ? onset!.Value - firstOnset!.Value : r * header.RecordDurationSeconds;
                var contiguous = true;
                for (var g = 0; g < batches.Length; g++)
                {
                    var b = batches[g];
                    var startIndex = header.IsDiscontinuous ? DiscontinuousStartIndex(startSeconds, b.Plan.Layout.SampleRateHz, r, onset!.Value) : r * b.Plan.SamplesPerRecord;
                    b.PendingStart = startIndex;
                    if (b.Filled > 0 && startIndex != b.EndIndex)
                    {
                        contiguous = false;
                        if (startIndex < b.EndIndex)
                        {
                            throw new RecordingFormatException(path, string.Create(CultureInfo.InvariantCulture, $"data record {r + 1} starts at {onset:0.######} s, before the previous record ends"));
                        }
                    }
                }

                if (!contiguous || batches[0].IsFull)
                {
                    for (var g = 0; g < batches.Length; g++)
                    {
                        yield return new GroupChunk(g, batches[g].TakeChunk());
                    }
                }

                for (var g = 0; g < batches.Length; g++)
                {
                    batches[g].Append(record, header.IsBdf);
                }
            }

            if (batches[0].Filled > 0)
            {
                for (var g = 0; g < batches.Length; g++)
                {
                    yield return new GroupChunk(g, batches[g].TakeChunk());
                }
            }
        }
        finally
        {
            ArrayPool<byte>.Shared.Return(record);
            foreach (var b in batches)
            {
                b.Dispose();
            }
        }
    }

    /// <summary>An EDF+D record's first sample index from its onset; one too large for a 64-bit index (with room for the records after it) is an error.</summary>
    private long DiscontinuousStartIndex(double startSeconds, double rateHz, long recordIndex, double onsetSeconds)
    {
        var index = Math.Round(startSeconds * rateHz);
        if (!(index < MaxDiscontinuousIndex))
        {
            throw new RecordingFormatException(Info.Path, string.Create(CultureInfo.InvariantCulture,
                $"data record {recordIndex + 1} starts at {onsetSeconds:G6} s, too late for a 64-bit sample index at {rateHz:G6} Hz"));
        }

        return (long)index;
    }

    private void ReadRecord(byte[] record, int recordBytes, long recordIndex)
    {
        try
        {
            var read = _stream.ReadAtLeast(record.AsSpan(0, recordBytes), recordBytes, throwOnEndOfStream: false);
            if (read < recordBytes)
            {
                throw new RecordingFormatException(Info.Path, $"file ended inside data record {recordIndex + 1} of {_header.RecordCount} (was it truncated while being read?)");
            }
        }
        catch (IOException ex)
        {
            throw new RecordingFormatException(Info.Path, $"read error in data record {recordIndex + 1}: {ex.Message}", ex);
        }
    }

    private double? ParseRecordAnnotations(byte[] record, long recordIndex, List<RecordingAnnotation> annotations)
    {
        double? recordOnset = null;
        for (var a = 0; a < _annotationSignals.Length; a++)
        {
            var s = _annotationSignals[a];
            var bytes = record.AsSpan((int)s.ByteOffsetInRecord, s.SamplesPerRecord * _header.BytesPerSample);
            try
            {
                var first = TalParser.Parse(bytes, annotations, MaxAnnotations, ref _annotationsNotKept);
                if (a == 0)
                {
                    recordOnset = first;
                }
            }
            catch (FormatException ex)
            {
                throw new RecordingFormatException(Info.Path, $"data record {recordIndex + 1}, annotation signal {s.Index + 1} ('{s.Label}'): {ex.Message}", ex);
            }
        }

        return recordOnset;
    }

    internal static bool IsTriggerLabel(string label) =>
        label.Equals("Status", StringComparison.OrdinalIgnoreCase)
        || label.StartsWith("Trigger", StringComparison.OrdinalIgnoreCase)
        || label.Equals("TRIG", StringComparison.OrdinalIgnoreCase);

    internal static double UnitFactor(string dimension) => VoltageUnits.TryGetFactorToUv(dimension, out var f) ? f : 1.0;
}
