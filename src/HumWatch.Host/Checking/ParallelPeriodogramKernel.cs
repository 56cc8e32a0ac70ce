using HumWatch.Core.Spectra;

namespace HumWatch.Host.Checking;

/// <summary>
/// Splits a batch of channels over several of Core's kernels on the thread pool. For one long file (`check`), where a
/// single stream would otherwise use one core; the service runs many streams in parallel and keeps one kernel per stream.
/// Core decides no threading: it offers kernels that take any range of channels, and this Host type runs the ranges side
/// by side. Allocates a little per call (the parallel loop), so it is not for the allocation-free streaming path.
/// </summary>
internal sealed unsafe class ParallelPeriodogramKernel : IPeriodogramKernel
{
    private readonly IPeriodogramKernel[] _parts;

    private ParallelPeriodogramKernel(int segmentLength, double sampleRateHz, int ways)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(ways, 1);
        _parts = new IPeriodogramKernel[ways];
        for (var i = 0; i < ways; i++)
        {
            _parts[i] = PeriodogramKernels.Create(segmentLength, sampleRateHz);
        }
    }

    /// <summary>
    /// A kernel that spreads each batch of channels over <paramref name="ways"/> threads (≥ 1). Same results as
    /// <see cref="PeriodogramKernels.Create"/>: channels go to a part in whole vector groups, so each channel meets the
    /// same code in the same lane.
    /// </summary>
    public static IPeriodogramKernel Create(int segmentLength, double sampleRateHz, int ways) =>
        ways <= 1 ? PeriodogramKernels.Create(segmentLength, sampleRateHz) : new ParallelPeriodogramKernel(segmentLength, sampleRateHz, ways);

    public int SegmentLength => _parts[0].SegmentLength;

    public int BinCount => _parts[0].BinCount;

    public void Compute(ReadOnlySpan<double> samples, int channelCount, int sampleStride, Span<double> periodograms)
    {
        if (!PeriodogramArguments.Check(SegmentLength, BinCount, samples, channelCount, sampleStride, periodograms))
        {
            return;
        }

        var group = PeriodogramKernels.ChannelGroup;
        var groups = (channelCount + group - 1) / group;
        var ways = Math.Min(_parts.Length, groups);
        if (ways == 1)
        {
            _parts[0].Compute(samples, channelCount, sampleStride, periodograms);
            return;
        }

        var bins = BinCount;
        var groupsPerPart = (groups + ways - 1) / ways;
        fixed (double* samplesPointer = samples)
        fixed (double* periodogramsPointer = periodograms)
        {
            // Spans cannot cross into the parallel loop; the pinned addresses can, and the loop ends before fixed does.
            var samplesAddress = (nint)samplesPointer;
            var periodogramsAddress = (nint)periodogramsPointer;
            var samplesLength = samples.Length;
            var periodogramsLength = periodograms.Length;
            Parallel.For(0, ways, part =>
            {
                var first = part * groupsPerPart * group;
                var count = Math.Min(channelCount, first + (groupsPerPart * group)) - first;
                if (count <= 0)
                {
                    return;
                }

                var input = new ReadOnlySpan<double>((double*)samplesAddress, samplesLength)[(first * sampleStride)..];
                var output = new Span<double>((double*)periodogramsAddress, periodogramsLength)[(first * bins)..];
                _parts[part].Compute(input, count, sampleStride, output);
            });
        }
    }
}
