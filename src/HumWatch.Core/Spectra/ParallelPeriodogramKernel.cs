namespace HumWatch.Core.Spectra;

/// <summary>
/// Splits a batch of channels over several kernels on the thread pool. For one long file (`check`), where a single
/// stream would otherwise use one core; the service runs many streams in parallel and keeps one kernel per stream.
/// Allocates a little per call (the parallel loop), so it is not for the allocation-free streaming path.
/// </summary>
internal sealed unsafe class ParallelPeriodogramKernel : IPeriodogramKernel
{
    // Channels go to a part in whole groups of four, the width of the vectorised kernel.
    private const int ChannelGroup = 4;

    private readonly IPeriodogramKernel[] _parts;

    public ParallelPeriodogramKernel(int segmentLength, double sampleRateHz, int ways)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(ways, 1);
        _parts = new IPeriodogramKernel[ways];
        for (var i = 0; i < ways; i++)
        {
            _parts[i] = PeriodogramKernels.Create(segmentLength, sampleRateHz);
        }
    }

    public int SegmentLength => _parts[0].SegmentLength;

    public int BinCount => _parts[0].BinCount;

    public void Compute(ReadOnlySpan<double> samples, int channelCount, int sampleStride, Span<double> periodograms)
    {
        if (!PeriodogramArguments.Check(SegmentLength, BinCount, samples, channelCount, sampleStride, periodograms))
        {
            return;
        }

        var groups = (channelCount + ChannelGroup - 1) / ChannelGroup;
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
                var first = part * groupsPerPart * ChannelGroup;
                var count = Math.Min(channelCount, first + (groupsPerPart * ChannelGroup)) - first;
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
