using System.Globalization;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;

namespace HumWatch.Core.Alerts;

/// <summary>Stable text keys for findings, shared by alerts, the minute ledger, the store and messages.</summary>
public static class AlertKeys
{
    /// <summary>
    /// Key of a line: "mains/h3", "display 75 Hz/h2", "site:pump room drive/h1" for identified sources,
    /// "unidentified/37.25Hz" (frequency to 0.01 Hz) otherwise.
    /// </summary>
    public static string ForLine(SourceMatch source, double frequencyHz) => source.Kind switch
    {
        SourceKind.Mains => string.Create(CultureInfo.InvariantCulture, $"mains/h{source.Harmonic}"),
        SourceKind.Display => string.Create(CultureInfo.InvariantCulture, $"{source.Name}/h{source.Harmonic}"),
        SourceKind.SiteTone => string.Create(CultureInfo.InvariantCulture, $"site:{source.Name}/h{source.Harmonic}"),
        _ => string.Create(CultureInfo.InvariantCulture, $"unidentified/{frequencyHz:0.00}Hz"),
    };

    /// <summary>Key of a channel fault: "fault/Fp1/flat".</summary>
    public static string ForFault(string channelLabel, ChannelFaultKind kind) => $"fault/{channelLabel}/{FaultText(kind)}";

    /// <summary>"flat", "clipped" or "non-finite".</summary>
    public static string FaultText(ChannelFaultKind kind) => kind switch
    {
        ChannelFaultKind.Flat => "flat",
        ChannelFaultKind.Clipped => "clipped",
        ChannelFaultKind.NonFinite => "non-finite",
        _ => "unknown",
    };

    /// <summary>"unidentified", "mains", "display" or "site".</summary>
    public static string KindText(SourceKind kind) => kind switch
    {
        SourceKind.Mains => "mains",
        SourceKind.Display => "display",
        SourceKind.SiteTone => "site",
        _ => "unidentified",
    };
}
