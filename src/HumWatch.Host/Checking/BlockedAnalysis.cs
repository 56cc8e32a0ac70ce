using System.Collections.Concurrent;
using System.Runtime.ExceptionServices;
using HumWatch.Core.Analysis;
using HumWatch.Core.Spectra;
using HumWatch.Formats;

namespace HumWatch.Host.Checking;

/// <summary>
/// Analyses a gap-free EDF/BDF in time blocks on several threads, each with its own reader and analysers, and hands the
/// frames to the sinks in recording order: the same frames, in the same order, as one pass from the first record.
/// </summary>
/// <remarks>
/// A frame depends only on the samples of its span, and frames sit on a fixed grid (span + i·hop samples from the
/// start). So a block whose reading starts on that grid and at least span − hop earlier than the block itself (the
/// warm-up) reproduces every frame that ends inside the block. Blocks start on whole records that fall on the hop grid
/// of every signal group. At most workers + 1 blocks are read ahead of the one being handed on, which bounds memory.
/// </remarks>
internal sealed class BlockedAnalysis
{
    private const double MinBlockSeconds = 64;

    // A file shorter than a block per worker is still split, one block per worker, down to blocks of this length: its
    // warm-up is then a larger share of the work, but a short check's wall time is mostly that one pass.
    private const double MinShortBlockSeconds = 8;
    private const double MaxBlockSeconds = 512;

    // A hop grid that meets the record grid only this rarely is not worth splitting on.
    private const double MaxAlignmentSeconds = 600;

    private readonly string _path;
    private readonly AnalysisOptions _options;
    private readonly IReadOnlyList<SignalGroup> _groups;
    private readonly int[] _samplesPerRecord;
    private readonly long _recordCount;
    private readonly long _blockRecords;
    private readonly long _warmUpRecords;
    private readonly int _workers;
    private readonly ConcurrentBag<AnalysisFrame>[] _framePools;

    private BlockedAnalysis(string path, AnalysisOptions options, IReadOnlyList<SignalGroup> groups, int[] samplesPerRecord, long recordCount, long blockRecords, long warmUpRecords, int workers)
    {
        _path = path;
        _options = options;
        _groups = groups;
        _samplesPerRecord = samplesPerRecord;
        _recordCount = recordCount;
        _blockRecords = blockRecords;
        _warmUpRecords = warmUpRecords;
        _workers = workers;
        _framePools = [.. groups.Select(_ => new ConcurrentBag<AnalysisFrame>())];
    }

    /// <summary>Blocks the recording is split into.</summary>
    public long BlockCount => (_recordCount + _blockRecords - 1) / _blockRecords;

    /// <summary>Records per block (the last may be shorter).</summary>
    public long BlockRecords => _blockRecords;

    /// <summary>Records each block reads before its own first record, so its first frame is complete.</summary>
    public long WarmUpRecords => _warmUpRecords;

    /// <summary>
    /// A plan for <paramref name="workers"/> threads, or null when the recording should be read in one pass: it has gaps,
    /// is too short for two blocks, or its records never line up with the frame grid.
    /// </summary>
    public static BlockedAnalysis? TryPlan(string path, IRecordingReader reader, AnalysisOptions options, int workers)
    {
        if (workers < 2 || reader is not IRecordRangeReader { CanReadRanges: true } ranges || ranges.RecordCount < 2)
        {
            return null;
        }

        var groups = reader.Info.Groups;
        var samplesPerRecord = ranges.SamplesPerRecord.ToArray();
        var recordSeconds = ranges.RecordDurationSeconds;
        long unit = 1;
        var warmUpRecords = 0L;
        for (var g = 0; g < groups.Count; g++)
        {
            // The analyser owns the rounding of seconds to samples; ask a one-channel Welch rather than repeat it here.
            var welch = new SlidingWelch(groups[g].Layout.SampleRateHz, 1, options.Spectra);
            long span = welch.SpanSamples;
            long hop = welch.HopSamples;
            var perRecord = samplesPerRecord[g];
            unit = Lcm(unit, hop / Gcd(hop, perRecord));
            if (unit * recordSeconds > MaxAlignmentSeconds)
            {
                return null;
            }

            warmUpRecords = Math.Max(warmUpRecords, (span - hop + perRecord - 1) / perRecord);
        }

        warmUpRecords = RoundUp(warmUpRecords, unit);
        var durationSeconds = ranges.RecordCount * recordSeconds;
        var targetSeconds = Math.Clamp(durationSeconds / (4.0 * workers), MinBlockSeconds, MaxBlockSeconds);
        if (durationSeconds < targetSeconds * workers)
        {
            targetSeconds = Math.Max(durationSeconds / workers, MinShortBlockSeconds);
        }

        var blockRecords = Math.Max(unit, (long)Math.Round(targetSeconds / (unit * recordSeconds)) * unit);
        if (blockRecords >= ranges.RecordCount)
        {
            return null;
        }

        return new BlockedAnalysis(path, options, groups, samplesPerRecord, ranges.RecordCount, blockRecords, warmUpRecords, workers);
    }

    /// <summary>
    /// Runs the blocks and calls <paramref name="sinks"/>[g].OnFrame for every frame of group g, in recording order, on
    /// the calling thread. <paramref name="blockDone"/> gets the share of blocks handed on, 0..1.
    /// </summary>
    /// <exception cref="RecordingFormatException">A block is malformed; the earliest such block's problem is thrown.</exception>
    public void Run(IReadOnlyList<IAnalysisFrameSink> sinks, Action<double>? blockDone, CancellationToken cancellationToken)
    {
        var blockCount = BlockCount;
        var results = new TaskCompletionSource<List<AnalysisFrame>[]>[blockCount];
        for (var b = 0; b < blockCount; b++)
        {
            results[b] = new TaskCompletionSource<List<AnalysisFrame>[]>(TaskCreationOptions.RunContinuationsAsynchronously);
        }

        using var stop = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
        using var readAhead = new SemaphoreSlim(_workers + 1);
        var nextBlock = -1L;
        var workers = new Task[_workers];
        for (var w = 0; w < _workers; w++)
        {
            workers[w] = Task.Factory.StartNew(
                () => Work(results, readAhead, () => Interlocked.Increment(ref nextBlock), stop.Token),
                stop.Token,
                TaskCreationOptions.LongRunning,
                TaskScheduler.Default);
        }

        var handedOn = false;
        try
        {
            for (var b = 0; b < blockCount; b++)
            {
                var task = results[b].Task;
                try
                {
                    task.Wait(cancellationToken);
                }
                catch (AggregateException failed)
                {
                    // The block's own exception (e.g. RecordingFormatException naming the record), as one pass would throw it.
                    ExceptionDispatchInfo.Throw(failed.InnerException ?? failed);
                }

                var frames = task.Result;
                for (var g = 0; g < frames.Length; g++)
                {
                    foreach (var frame in frames[g])
                    {
                        sinks[g].OnFrame(frame);
                        _framePools[g].Add(frame);
                    }
                }

                readAhead.Release();
                blockDone?.Invoke((b + 1.0) / blockCount);
            }

            handedOn = true;
        }
        finally
        {
            // Once the last block is handed on, every hand-on has freed a read-ahead permit, so each worker takes one,
            // finds no block left and ends by itself; cancelling would throw into workers that are about to end (an
            // exception per worker and one from WaitAll, with stack traces, on every check). Stop them only when the
            // run ends early: a failed block or the caller's cancellation.
            if (!handedOn)
            {
                stop.Cancel();
            }

            try
            {
                Task.WaitAll(workers, CancellationToken.None);
            }
            catch (AggregateException)
            {
                // By design: a worker that was stopped or failed has already reported through its block's result.
            }
        }
    }

    private void Work(TaskCompletionSource<List<AnalysisFrame>[]>[] results, SemaphoreSlim readAhead, Func<long> takeBlock, CancellationToken stop)
    {
        IRecordingReader? reader = null;
        var analyzers = new StreamAnalyzer[_groups.Count];
        var collectors = new BlockFrameCollector[_groups.Count];
        try
        {
            while (true)
            {
                readAhead.Wait(stop);
                var block = takeBlock();
                if (block >= results.Length)
                {
                    return;
                }

                try
                {
                    // Opened inside the block's try, so a failure to open is that block's failure and reaches the caller.
                    reader ??= Prepare(analyzers, collectors);
                    results[block].SetResult(AnalyseBlock(reader, block, analyzers, collectors, stop));
                }
                catch (Exception ex)
                {
                    results[block].SetException(ex);
                    return;
                }
            }
        }
        finally
        {
            reader?.Dispose();
        }
    }

    private IRecordingReader Prepare(StreamAnalyzer[] analyzers, BlockFrameCollector[] collectors)
    {
        var reader = RecordingReader.Open(_path);
        try
        {
            for (var g = 0; g < _groups.Count; g++)
            {
                var layout = _groups[g].Layout;
                var kernel = PeriodogramKernels.Create(SlidingWelch.SegmentLengthFor(_options.Spectra, layout.SampleRateHz), layout.SampleRateHz);
                analyzers[g] = new StreamAnalyzer(layout, _options, kernel);
                collectors[g] = new BlockFrameCollector(_framePools[g]);
            }

            return reader;
        }
        catch
        {
            reader.Dispose();
            throw;
        }
    }

    private List<AnalysisFrame>[] AnalyseBlock(IRecordingReader reader, long block, StreamAnalyzer[] analyzers, BlockFrameCollector[] collectors, CancellationToken stop)
    {
        if (reader is not IRecordRangeReader { CanReadRanges: true } ranges || ranges.RecordCount != _recordCount)
        {
            throw new RecordingFormatException(_path, "the file changed while it was being checked; check it again once it is complete");
        }

        var first = block * _blockRecords;
        var end = Math.Min(_recordCount, first + _blockRecords);
        var readFrom = Math.Max(0, first - _warmUpRecords);
        for (var g = 0; g < analyzers.Length; g++)
        {
            analyzers[g].Reset();
            collectors[g].Start(first * _samplesPerRecord[g]);
        }

        foreach (var item in ranges.ReadRecordRange(readFrom, end - readFrom))
        {
            stop.ThrowIfCancellationRequested();
            analyzers[item.GroupIndex].Append(item.Chunk, collectors[item.GroupIndex]);
        }

        return [.. collectors.Select(c => c.TakeFrames())];
    }

    private static long RoundUp(long value, long unit) => (value + unit - 1) / unit * unit;

    private static long Gcd(long a, long b)
    {
        while (b != 0)
        {
            (a, b) = (b, a % b);
        }

        return a;
    }

    private static long Lcm(long a, long b) => a / Gcd(a, b) * b;

    /// <summary>
    /// Keeps copies of the frames that end inside the block (not those of the warm-up), in frames taken from a pool the
    /// caller refills once it has handed them on, so a long file does not leave a trail of dead frames for the GC.
    /// </summary>
    private sealed class BlockFrameCollector(ConcurrentBag<AnalysisFrame> pool) : IAnalysisFrameSink
    {
        private List<AnalysisFrame> _frames = [];
        private long _blockStartSample;

        public void Start(long blockStartSample)
        {
            _blockStartSample = blockStartSample;
            _frames = [];
        }

        public void OnFrame(AnalysisFrame frame)
        {
            if (frame.EndSampleIndex <= _blockStartSample)
            {
                return;
            }

            if (pool.TryTake(out var copy))
            {
                frame.CopyTo(copy);
            }
            else
            {
                copy = frame.Clone();
            }

            _frames.Add(copy);
        }

        public List<AnalysisFrame> TakeFrames() => _frames;
    }
}
