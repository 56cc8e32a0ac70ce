using System.Text.Json.Serialization;

namespace HumWatch.Host.Checking;

/// <summary>The `check` report of one file — the JSON shape in DESIGN.md ("check JSON report").</summary>
public sealed class CheckReport
{
    public required string File { get; init; }

    /// <summary>"pass", "warn", "fail", or "error" when the file could not be read.</summary>
    public required string Verdict { get; init; }

    public string? Error { get; init; }

    public string? Format { get; init; }

    public double? SampleRateHz { get; init; }

    public int? ChannelCount { get; init; }

    public double? DurationSeconds { get; init; }

    /// <summary>Median mains frequency estimated from the fundamental, Hz, when it was seen.</summary>
    public double? MainsEstimateHz { get; init; }

    public string? Prefiltering { get; init; }

    public IReadOnlyList<CheckLine> Lines { get; init; } = [];

    public IReadOnlyList<CheckFault> ChannelFaults { get; init; } = [];

    public IReadOnlyList<CheckSkippedSignal> SkippedSignals { get; init; } = [];

    public IReadOnlyList<string> Notes { get; init; } = [];

    /// <summary>The electrical-safety caution that goes with any suggestion.</summary>
    public string? Caution { get; init; }

    [JsonIgnore]
    public int ExitCode => Verdict switch
    {
        "pass" or "warn" => 0,
        "fail" => 1,
        _ => 2,
    };
}

public sealed class CheckLine
{
    public double FrequencyHz { get; init; }

    /// <summary>"mains", "display", "site-tone" or "unidentified".</summary>
    public required string Source { get; init; }

    /// <summary>Catalogue name, e.g. "mains", "display 75 Hz".</summary>
    public required string SourceName { get; init; }

    /// <summary>The source's fundamental, Hz (estimated for mains when seen); null when unidentified.</summary>
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
    DefaultIgnoreCondition = JsonIgnoreCondition.WhenWritingNull)]
[JsonSerializable(typeof(CheckReport))]
[JsonSerializable(typeof(List<CheckReport>))]
public sealed partial class CheckReportJsonContext : JsonSerializerContext;
