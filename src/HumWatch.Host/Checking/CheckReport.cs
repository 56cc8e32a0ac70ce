using System.Text.Json.Serialization;
using HumWatch.Core.Reporting;
using HumWatch.Host.Serialization;

namespace HumWatch.Host.Checking;

/// <summary>The `check` report of one file — the JSON shape README.md documents.</summary>
public sealed class CheckReport
{
    public required string File { get; init; }

    /// <summary>Pass, warn, fail, or error when the file could not be read; written as "pass", "warn", "fail", "error".</summary>
    public required Verdict Verdict { get; init; }

    public string? Error { get; init; }

    /// <summary>For warn and fail: what decided, with the limit crossed and its setting; null for pass and error.</summary>
    public string? VerdictReason { get; init; }

    /// <summary>The limits the verdict was judged against (settings Check:*); null for error reports.</summary>
    public CheckReportLimits? Limits { get; init; }

    public string? Format { get; init; }

    public double? SampleRateHz { get; init; }

    public int? ChannelCount { get; init; }

    public double? DurationSeconds { get; init; }

    /// <summary>The recording's measured grid fundamental, Hz: per signal group the median over its frames of the mains fundamental's frequency (averaged over groups); null when not seen.</summary>
    public double? MainsEstimateHz { get; init; }

    /// <summary>The grid's nominal frequency the lines were attributed against (50 or 60 Hz); null when neither configured nor seen.</summary>
    public double? MainsHz { get; init; }

    /// <summary>"configured" (settings or --mains), "measured" (decided from the data) or "unknown".</summary>
    public string? MainsFrom { get; init; }

    public string? Prefiltering { get; init; }

    public IReadOnlyList<CheckLine> Lines { get; init; } = [];

    public IReadOnlyList<CheckFault> ChannelFaults { get; init; } = [];

    public IReadOnlyList<CheckSkippedSignal> SkippedSignals { get; init; } = [];

    public IReadOnlyList<string> Notes { get; init; } = [];

    /// <summary>The electrical-safety caution that goes with any suggestion.</summary>
    public string? Caution { get; init; }

    /// <summary>0 pass or warn, 1 fail, 2 error (unreadable input).</summary>
    [JsonIgnore]
    public int ExitCode => Verdict switch
    {
        Verdict.Pass or Verdict.Warn => 0,
        Verdict.Fail => 1,
        _ => 2,
    };
}

/// <summary>The `Check:*` limits a report's verdict was judged against, as reported.</summary>
public sealed class CheckReportLimits
{
    public double WarnLineUvRms { get; init; }

    public double FailLineUvRms { get; init; }

    public double MinLineSeconds { get; init; }

    public double FailFaultFraction { get; init; }

    public bool CountUnidentifiedLines { get; init; }

    internal static CheckReportLimits From(CheckLimits limits) => new()
    {
        WarnLineUvRms = limits.WarnLineUvRms,
        FailLineUvRms = limits.FailLineUvRms,
        MinLineSeconds = limits.MinLineSeconds,
        FailFaultFraction = limits.FailFaultFraction,
        CountUnidentifiedLines = limits.CountUnidentifiedLines,
    };
}

public sealed class CheckLine
{
    public double FrequencyHz { get; init; }

    /// <summary>"mains", "display", "site-tone" or "unidentified".</summary>
    public required string Source { get; init; }

    /// <summary>Catalogue name, e.g. "mains", "display 75 Hz".</summary>
    public required string SourceName { get; init; }

    /// <summary>
    /// The fundamental of the source family the line is attributed to, Hz: for mains the recording's measured grid
    /// fundamental (the same value as the report's mainsEstimateHz for a single-rate recording) when seen, else the
    /// nominal grid; a display's or site tone's catalogued rate; null when unidentified.
    /// </summary>
    public double? FundamentalHz { get; init; }

    /// <summary>1 = fundamental; 0 when unidentified.</summary>
    public int Harmonic { get; init; }

    public bool Aliased { get; init; }

    public IReadOnlyList<string> AlsoPossible { get; init; } = [];

    public double AmplitudeUvRms { get; init; }

    public double MaxAmplitudeUvRms { get; init; }

    public double ProminenceDb { get; init; }

    /// <summary>
    /// Median over the frames showing the line of the chance that noise alone would put a peak this strong anywhere in a
    /// frame's search (Welch bin over its median floor, Snedecor's F, Šidák-corrected for bins × channels); null when unknown.
    /// </summary>
    public double? FalseAlarmProbability { get; init; }

    public double ChannelShare { get; init; }

    public int AffectedChannels { get; init; }

    public IReadOnlyList<string> WorstChannels { get; init; } = [];

    public double FirstSeconds { get; init; }

    public double LastSeconds { get; init; }

    public double PresentSeconds { get; init; }

    /// <summary>Rate of the signal group the line was found in, Hz.</summary>
    public double SampleRateHz { get; init; }

    public string? Suggestion { get; init; }

    /// <summary>What decided <see cref="Source"/>; see <see cref="CheckEvidence"/>.</summary>
    public CheckEvidence? Evidence { get; init; }
}

/// <summary>The evidence behind a line's explanation, as reported.</summary>
public sealed class CheckEvidence
{
    /// <summary>"catalogue", "grid-fundamental", "frequency-track", "channel-pattern" or "undecided".</summary>
    public required string Basis { get; init; }

    /// <summary>"follows-grid", "independent", "channels-differ"; null when not judged.</summary>
    public string? GridLock { get; init; }

    /// <summary>Slope of the line's frequency against n × the grid's fundamental: 1 locked to the grid, near 0 its own source.</summary>
    public double? GridFollowRatio { get; init; }

    /// <summary>Mean overlap (Jaccard, 0..1) of the line's channels with the mains fundamental's.</summary>
    public double? ChannelOverlap { get; init; }

    /// <summary>Standard deviation of the line's frequency over the tracked frames, Hz.</summary>
    public double? FrequencySpreadHz { get; init; }

    /// <summary>Standard deviation of n × the fundamental over the same frames, Hz.</summary>
    public double? GridSpreadHz { get; init; }

    /// <summary>Frames the line shared with the fundamental.</summary>
    public int SharedFrames { get; init; }

    /// <summary>The same in one phrase a technician reads.</summary>
    public string? Summary { get; init; }

    internal static CheckEvidence From(Core.Reporting.LineFinding line) =>
        From(line.Evidence, line.Source, line.FrequencyHz, line.AlsoPossible);

    /// <summary>The evidence of an alert's raise, in the reported form.</summary>
    internal static CheckEvidence From(Core.Alerts.AlertRaised raised) =>
        From(raised.Evidence, raised.Source, raised.FrequencyHz, [.. raised.AlsoPossible.Select(Core.Reporting.LineFinding.Describe)]);

    /// <summary>The reported form of a line's evidence (check reports, alert bodies and the store share it).</summary>
    internal static CheckEvidence From(Core.Tracking.LineEvidence e, Core.Attribution.SourceMatch source, double frequencyHz, IReadOnlyList<string> alternatives) =>
        new()
        {
            Basis = e.Basis switch
            {
                Core.Tracking.EvidenceBasis.GridFundamental => "grid-fundamental",
                Core.Tracking.EvidenceBasis.FrequencyTrack => "frequency-track",
                Core.Tracking.EvidenceBasis.ChannelPattern => "channel-pattern",
                Core.Tracking.EvidenceBasis.Undecided => "undecided",
                _ => "catalogue",
            },
            GridLock = e.Lock switch
            {
                Core.Tracking.GridLock.FollowsGrid => "follows-grid",
                Core.Tracking.GridLock.Independent => "independent",
                Core.Tracking.GridLock.ChannelsDiffer => "channels-differ",
                _ => null,
            },
            GridFollowRatio = Reported.Finite(Reported.Ratio(e.GridFollowRatio)),
            ChannelOverlap = Reported.Finite(Reported.Ratio(e.ChannelOverlap)),
            FrequencySpreadHz = Reported.Finite(Reported.SpreadHz(e.FrequencySpreadHz)),
            GridSpreadHz = Reported.Finite(Reported.SpreadHz(e.GridSpreadHz)),
            SharedFrames = e.SharedFrames,
            Summary = Core.Reporting.EvidencePhrase.For(e, source, frequencyHz, alternatives),
        };
}

public sealed class CheckFault
{
    public required string Channel { get; init; }

    /// <summary>"flat", "clipped" or "non-finite".</summary>
    public required string Kind { get; init; }

    public double FirstSeconds { get; init; }

    public double LastSeconds { get; init; }

    public double SampleRateHz { get; init; }
}

public sealed class CheckSkippedSignal
{
    public required string Label { get; init; }

    public required string Reason { get; init; }
}

[JsonSourceGenerationOptions(
    PropertyNamingPolicy = JsonKnownNamingPolicy.CamelCase,
    WriteIndented = true,
    DefaultIgnoreCondition = JsonIgnoreCondition.WhenWritingNull,
    Converters = [typeof(VerdictJsonConverter)])]
[JsonSerializable(typeof(CheckReport))]
[JsonSerializable(typeof(List<CheckReport>))]
[JsonSerializable(typeof(CheckEvidence))]
public sealed partial class CheckReportJsonContext : JsonSerializerContext
{
    /// <summary>The context every output uses (stdout, archived reports, the store): characters written as themselves.</summary>
    public static CheckReportJsonContext Output => field ??= new(OutputText.JsonOptions(Default.Options));

    /// <summary>The same on one line per report, for JSON Lines output (`check --json`).</summary>
    public static CheckReportJsonContext Lines => field ??= new(new System.Text.Json.JsonSerializerOptions(OutputText.JsonOptions(Default.Options)) { WriteIndented = false });
}
