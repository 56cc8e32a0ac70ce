using HumWatch.Core.Analysis;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Lines;
using HumWatch.Core.Signals;

namespace HumWatch.Core.Tests.Alerts.Support;

/// <summary>A line to put into a built frame.</summary>
internal sealed record LineSpec(SourceMatch Source, double FrequencyHz, double AmplitudeUvRms, double ChannelShare, params int[] WorstChannels)
{
    /// <summary>Where the line's evidence starts and ends within the span, s from the stream start; NaN leaves it unset.</summary>
    public (double StartSeconds, double EndSeconds) Evidence { get; init; } = (double.NaN, double.NaN);

    /// <summary>Whether the line counts as persistent, as the line tracker would have marked it. The default is true.</summary>
    public bool Persistent { get; init; } = true;
}

/// <summary>
/// Builds frames the way the analyser emits them (one reused frame object, pooled lines) through the internal
/// setters, so alert and ledger logic can be driven without the DSP.
/// </summary>
internal sealed class FrameBuilder
{
    public const double SampleRateHz = 256;

    private readonly AnalysisFrame _frame;
    private readonly FrameLine[] _lines = [new(), new(), new(), new()];

    public FrameBuilder(double binWidthHz = 0.25, params string[] labels)
    {
        Labels = labels.Length == 0 ? ["Fp1", "Cz", "O1", "T3"] : labels;
        var channels = new List<ChannelInfo>();
        foreach (var label in Labels)
        {
            channels.Add(new ChannelInfo(label));
        }

        Layout = new StreamLayout(SampleRateHz, channels);
        _frame = new AnalysisFrame(Layout, 513, binWidthHz) { LineBuffer = _lines, FaultBuffer = new ChannelFault[4] };
    }

    public IReadOnlyList<string> Labels { get; }

    public StreamLayout Layout { get; }

    public static SourceMatch Mains(int harmonic = 1, bool aliased = false) =>
        new(SourceKind.Mains, "mains", 50, harmonic, aliased, 50 * harmonic, 0);

    public static SourceMatch Display(double rateHz, int harmonic = 1) =>
        new(SourceKind.Display, $"display {rateHz} Hz", rateHz, harmonic, false, rateHz * harmonic, 0);

    /// <summary>Fills the shared frame for the span [startSeconds, endSeconds) and returns it.</summary>
    public AnalysisFrame Frame(double startSeconds, double endSeconds, IReadOnlyList<LineSpec>? lines = null, IReadOnlyList<ChannelFault>? faults = null, double mainsHz = double.NaN)
    {
        _frame.StartSampleIndex = (long)Math.Round(startSeconds * SampleRateHz);
        _frame.EndSampleIndex = (long)Math.Round(endSeconds * SampleRateHz);
        _frame.AnalysedChannelCount = Layout.ChannelCount;
        _frame.EstimatedMainsHz = mainsHz;
        lines ??= [];
        for (var i = 0; i < lines.Count; i++)
        {
            var spec = lines[i];
            var line = _lines[i];
            line.ClearChannelsAndSources();
            line.Source = spec.Source;
            line.TrackId = i + 1;
            line.IsPersistent = spec.Persistent;
            line.FrequencyHz = spec.FrequencyHz;
            line.AmplitudeUvRms = spec.AmplitudeUvRms;
            line.MaxAmplitudeUvRms = spec.AmplitudeUvRms;
            line.ChannelShare = spec.ChannelShare;
            line.AffectedChannelCount = (int)Math.Round(spec.ChannelShare * Layout.ChannelCount);
            var evidenceSet = double.IsFinite(spec.Evidence.StartSeconds);
            line.EvidenceStartSampleIndex = evidenceSet ? (long)Math.Round(spec.Evidence.StartSeconds * SampleRateHz) : 0;
            line.EvidenceEndSampleIndex = evidenceSet ? (long)Math.Round(spec.Evidence.EndSeconds * SampleRateHz) : 0;
            for (var w = 0; w < spec.WorstChannels.Length; w++)
            {
                // Descending amplitudes so the order given is kept.
                line.OfferWorstChannel(spec.WorstChannels[w], spec.AmplitudeUvRms * (2 - (0.1 * w)));
            }
        }

        _frame.LineCount = lines.Count;
        faults ??= [];
        for (var i = 0; i < faults.Count; i++)
        {
            _frame.FaultBuffer[i] = faults[i];
        }

        _frame.FaultCount = faults.Count;
        return _frame;
    }
}

/// <summary>Drives frames of an 8 s span every 2 s hop (the analyser's defaults) from a UTC start.</summary>
internal sealed class FrameClock(FrameBuilder builder, DateTimeOffset streamStartUtc, double spanSeconds = 8, double hopSeconds = 2)
{
    private int _index;

    public double EndSeconds { get; private set; }

    public DateTimeOffset EndUtc => streamStartUtc + TimeSpan.FromSeconds(EndSeconds);

    /// <summary>Next frame; lines and faults as given.</summary>
    public AnalysisFrame Next(IReadOnlyList<LineSpec>? lines = null, IReadOnlyList<ChannelFault>? faults = null, double mainsHz = double.NaN)
    {
        var start = _index * hopSeconds;
        _index++;
        EndSeconds = start + spanSeconds;
        return builder.Frame(start, EndSeconds, lines, faults, mainsHz);
    }
}

/// <summary>Records alert events.</summary>
internal sealed class CollectingAlertSink : HumWatch.Core.Alerts.IAlertEventSink
{
    public List<HumWatch.Core.Alerts.AlertEvent> Events { get; } = [];

    public void OnAlertEvent(HumWatch.Core.Alerts.AlertEvent alertEvent) => Events.Add(alertEvent);
}
