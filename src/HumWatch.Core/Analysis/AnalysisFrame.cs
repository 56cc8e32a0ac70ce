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

    /// <summary>
    /// The grid's nominal frequency (50 or 60 Hz) the lines were attributed against, NaN while the tracker has not
    /// decided it; see <see cref="GridFrom"/>. Set by the <see cref="Tracking.LineTracker"/>.
    /// </summary>
    public double GridNominalHz { get; internal set; } = double.NaN;

    /// <summary>Whether <see cref="GridNominalHz"/> was configured or measured from the data.</summary>
    public Tracking.GridOrigin GridFrom { get; internal set; }

    /// <summary>
    /// The other grid's nominal frequency when the configured grid is contradicted by the data (its fundamental never
    /// seen, the other one's clearly present on most channels); NaN otherwise.
    /// </summary>
    public double GridConflictHz { get; internal set; } = double.NaN;

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
    /// (e.g. to hand them to another thread). Allocates; reuse copies with <see cref="CopyTo"/>.
    /// </summary>
    public AnalysisFrame Clone()
    {
        var copy = new AnalysisFrame(Layout, MeanPsdBuffer.Length, BinWidthHz);
        CopyTo(copy);
        return copy;
    }

    /// <summary>
    /// Overwrites <paramref name="target"/> (a frame of the same stream shape, e.g. an earlier <see cref="Clone"/>) with
    /// this frame. Allocates only when the target holds fewer lines or faults than this frame.
    /// </summary>
    public void CopyTo(AnalysisFrame target)
    {
        ArgumentNullException.ThrowIfNull(target);
        if (target.MeanPsdBuffer.Length != MeanPsdBuffer.Length || !target.Layout.IsSameShape(Layout))
        {
            throw new ArgumentException($"Target frame has {target.MeanPsdBuffer.Length} bins and {target.Layout.ChannelCount} channels; this one {MeanPsdBuffer.Length} and {Layout.ChannelCount}.", nameof(target));
        }

        target.StartSampleIndex = StartSampleIndex;
        target.EndSampleIndex = EndSampleIndex;
        target.StartUtc = StartUtc;
        target.AnalysedChannelCount = AnalysedChannelCount;
        target.EstimatedMainsHz = EstimatedMainsHz;
        target.GridNominalHz = GridNominalHz;
        target.GridFrom = GridFrom;
        target.GridConflictHz = GridConflictHz;
        MeanPsdBuffer.CopyTo(target.MeanPsdBuffer, 0);
        if (target.LineBuffer.Length < LineCount)
        {
            var grown = new FrameLine[LineCount];
            target.LineBuffer.CopyTo(grown, 0);
            for (var i = target.LineBuffer.Length; i < grown.Length; i++)
            {
                grown[i] = new FrameLine(Layout.ChannelCount);
            }

            target.LineBuffer = grown;
        }

        for (var i = 0; i < LineCount; i++)
        {
            target.LineBuffer[i].CopyFrom(LineBuffer[i]);
        }

        target.LineCount = LineCount;
        if (target.FaultBuffer.Length < FaultCount)
        {
            target.FaultBuffer = new ChannelFault[FaultCount];
        }

        Faults.CopyTo(target.FaultBuffer);
        target.FaultCount = FaultCount;
    }
}

/// <summary>Receives frames from a <see cref="StreamAnalyzer"/>.</summary>
public interface IAnalysisFrameSink
{
    void OnFrame(AnalysisFrame frame);
}
