using System.Globalization;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;

namespace HumWatch.Core.Alerts;

/// <summary>
/// One short line per finding telling the technician where to look first. Wording is practical advice, never a
/// diagnosis; anything involving mains wiring is left to qualified staff. Every action named is one a technician may
/// take at the recording setup (move, re-route, re-prepare, check); none asks to open equipment or touch its
/// protective earth, and "ground" always means the scalp ground (GND) electrode, never the building's earth. The
/// caution that goes with every hint is <see cref="Reporting.SafetyNotice.Text"/>.
/// </summary>
public static class Suggestions
{
    /// <summary>From this share of analysed channels on, a line counts as common to the montage (ground/reference path). 0.5.</summary>
    public const double WidespreadShare = 0.5;

    /// <summary>Suggestion for a line.</summary>
    /// <param name="source">Most likely source (<see cref="SourceMatch.None"/> when unidentified).</param>
    /// <param name="channelShare">Share of analysed channels carrying the line, 0..1.</param>
    /// <param name="worstChannels">Labels of the worst channels, largest first (may be empty).</param>
    public static string For(SourceMatch source, double channelShare, IReadOnlyList<string> worstChannels)
    {
        ArgumentNullException.ThrowIfNull(worstChannels);
        if (!(channelShare >= 0 && channelShare <= 1))
        {
            throw new ArgumentOutOfRangeException(nameof(channelShare), channelShare, "Channel share must be between 0 and 1.");
        }

        switch (source.Kind)
        {
            case SourceKind.Display:
                return string.Create(
                    CultureInfo.InvariantCulture,
                    $"Looks like a {source.FundamentalHz:0.##} Hz display: move that monitor and its cable farther from the subject and leads, or use a shielded cable.");
            case SourceKind.Unidentified:
                return "No known source: look for equipment that was switched on or moved when this line appeared.";
            case SourceKind.SiteTone:
                return $"Matches the site tone \"{source.Name}\": check whether that equipment is running and how close it is to the subject and leads.";
            default:
                break;
        }

        // Mains: a line on most channels enters through the common path; on a few, through those electrodes.
        if (channelShare >= WidespreadShare || worstChannels.Count == 0)
        {
            return "On most channels: check the scalp ground (GND) and reference electrodes and mains-powered equipment near the subject; leave any wiring work to qualified staff.";
        }

        return $"On a few channels ({string.Join(", ", worstChannels)}): check those electrodes' contact and impedance.";
    }

    /// <summary>Suggestion for a channel fault.</summary>
    /// <param name="kind">The fault.</param>
    /// <param name="channelLabel">The channel's label.</param>
    public static string ForFault(ChannelFaultKind kind, string channelLabel)
    {
        ArgumentNullException.ThrowIfNull(channelLabel);
        return kind switch
        {
            // Flat: no variance around the usual level, so nothing reaches the input (off, unplugged, lead apart) or it
            // follows a neighbour (bridged). Clipped: the input sits at a rail, typically an electrode offset too large
            // or drifting for the amplifier, which a fresh preparation resets.
            ChannelFaultKind.Flat => $"{channelLabel} is flat (disconnected or bridged to a neighbour): check that the electrode is attached, its lead plugged in and intact, and no gel joins it to the next.",
            ChannelFaultKind.Clipped => $"{channelLabel} sits at or keeps hitting its amplifier's range limit (electrode offset or drift): re-prepare and re-gel that electrode, then check its offset and its lead.",
            ChannelFaultKind.NonFinite => $"{channelLabel} delivers invalid samples: check the acquisition software and that input's connection.",
            _ => throw new ArgumentOutOfRangeException(nameof(kind), kind, "Unknown channel fault kind."),
        };
    }
}
