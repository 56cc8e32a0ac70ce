using HumWatch.Core.Faults;
using HumWatch.Core.Lines;
using HumWatch.Core.Signals;

namespace HumWatch.Core.Analysis;

/// <summary>
/// What one analysis span shows. The analyser reuses this object and its buffers for every frame: read it
/// inside <see cref="IAnalysisFrameSink.OnFrame"/> and copy what you keep.
/// </summary>
public sealed class AnalysisFrame
{
    internal AnalysisFrame(StreamLayout layout, int binCount, double binWidthHz)
    {
        Layout = layout;
        BinWidthHz = binWidthHz;
        MeanPsdBuffer = new double[binCount];
    }

    public StreamLayout Layout { get; }

    /// <summary>First sample of the span, counted from the stream's start.</summary>
    public long StartSampleIndex { get; internal set; }

    /// <summary>One past the last sample of the span.</summary>
    public long EndSampleIndex { get; internal set; }

    public double StartSeconds => StartSampleIndex / Layout.SampleRateHz;

    public double EndSeconds => EndSampleIndex / Layout.SampleRateHz;

    /// <summary>UTC time of the span's first sample, when the stream supplies times.</summary>
    public DateTimeOffset? StartUtc { get; internal set; }

    /// <summary>Channels that entered line finding: not flat and without non-finite samples in the span.</summary>
    public int AnalysedChannelCount { get; internal set; }

    /// <summary>Mains frequency estimated from the fundamental in this span, Hz; NaN when the fundamental is not seen.</summary>
    public double EstimatedMainsHz { get; internal set; } = double.NaN;

    /// <summary>Bin spacing of <see cref="MeanPsdUv2PerHz"/>, Hz.</summary>
    public double BinWidthHz { get; }

    /// <summary>Mean PSD over the analysed channels, µV²/Hz, one-sided, bin k at k × BinWidthHz.</summary>
    public ReadOnlySpan<double> MeanPsdUv2PerHz => MeanPsdBuffer;

    /// <summary>Lines of this span, strongest first.</summary>
    public ReadOnlySpan<FrameLine> Lines => LineBuffer.AsSpan(0, LineCount);

    /// <summary>Channel faults in this span.</summary>
    public ReadOnlySpan<ChannelFault> Faults => FaultBuffer.AsSpan(0, FaultCount);

    internal double[] MeanPsdBuffer { get; }

    internal FrameLine[] LineBuffer { get; set; } = [];

    internal int LineCount { get; set; }

    internal ChannelFault[] FaultBuffer { get; set; } = [];

    internal int FaultCount { get; set; }

    /// <summary>
    /// A deep copy with buffers of its own, for a sink that keeps frames beyond <see cref="IAnalysisFrameSink.OnFrame"/>
    /// (e.g. to hand them to another thread). Allocates; not for the allocation-free streaming path.
    /// </summary>
    public AnalysisFrame Clone()
    {
        var copy = new AnalysisFrame(Layout, MeanPsdBuffer.Length, BinWidthHz)
        {
            StartSampleIndex = StartSampleIndex,
            EndSampleIndex = EndSampleIndex,
            StartUtc = StartUtc,
            AnalysedChannelCount = AnalysedChannelCount,
            EstimatedMainsHz = EstimatedMainsHz,
            LineCount = LineCount,
            LineBuffer = new FrameLine[LineCount],
            FaultCount = FaultCount,
            FaultBuffer = Faults.ToArray(),
        };
        MeanPsdBuffer.CopyTo(copy.MeanPsdBuffer, 0);
        for (var i = 0; i < LineCount; i++)
        {
            copy.LineBuffer[i] = new FrameLine();
            copy.LineBuffer[i].CopyFrom(LineBuffer[i]);
        }

        return copy;
    }
}

/// <summary>Receives frames from a <see cref="StreamAnalyzer"/>.</summary>
public interface IAnalysisFrameSink
{
    void OnFrame(AnalysisFrame frame);
}
