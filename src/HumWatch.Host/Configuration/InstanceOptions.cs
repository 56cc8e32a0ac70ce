using System.Globalization;

namespace HumWatch.Host.Configuration;

/// <summary>
/// This process among several HumWatch instances that share one store: its name, how often it says it is alive, and
/// when a silent peer counts as stopped. Bound from section "Instance".
/// </summary>
public sealed class InstanceOptions
{
    /// <summary>Config section name, "Instance".</summary>
    public const string SectionName = "Instance";

    /// <summary>Longest instance name, characters (a DNS label's limit, so a host name fits).</summary>
    public const int MaxNameLength = 63;

    private string? _name;

    /// <summary>
    /// The instance's name in the store, the API and the page: 1–63 letters (a–z, A–Z), digits, '-', '_' or '.'; unique
    /// among the instances sharing a store. The default is this machine's host name, lower-cased.
    /// </summary>
    public string Name
    {
        // Looked up on first read, not at construction: `check` binds these options but never names itself, and the
        // host-name lookup costs a one-shot check some 15 ms.
        get => _name ??= DefaultName();
        set => _name = value;
    }

    /// <summary>How often the instance writes its heartbeat and looks for stopped peers, s, 1 to 3600. The default is 10 s.</summary>
    public double HeartbeatSeconds { get; set; } = 10;

    /// <summary>
    /// A peer whose last heartbeat is older than this, and that did not stop cleanly, is taken as stopped and its open
    /// alerts are closed, s; more than 3 × <see cref="HeartbeatSeconds"/>, so one slow beat is not a death. The default is 60 s.
    /// </summary>
    public double StaleAfterSeconds { get; set; } = 60;

    /// <summary>One message per problem, each naming the configuration key; empty when valid.</summary>
    public IReadOnlyList<string> Validate(string prefix = SectionName)
    {
        var errors = new List<string>();

        // An unset name is the host name made valid by FromHostName; only a configured one can break the rule.
        if (_name is not null && !IsValidName(_name))
        {
            errors.Add($"{prefix}:Name must be 1 to {MaxNameLength} characters, each a letter (a–z, A–Z), a digit, '-', '_' or '.' (got \"{Name}\").");
        }

        if (!(HeartbeatSeconds >= 1 && HeartbeatSeconds <= 3600))
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture, $"{prefix}:HeartbeatSeconds must be between 1 and 3600 s (got {HeartbeatSeconds})."));
        }
        else if (!(StaleAfterSeconds > 3 * HeartbeatSeconds) || !double.IsFinite(StaleAfterSeconds))
        {
            errors.Add(string.Create(CultureInfo.InvariantCulture,
                $"{prefix}:StaleAfterSeconds ({StaleAfterSeconds}) must exceed 3 × {prefix}:HeartbeatSeconds ({3 * HeartbeatSeconds} s), so a peer is not taken as stopped after one slow beat."));
        }

        return errors;
    }

    /// <summary>Whether <paramref name="name"/> is an allowed instance name.</summary>
    public static bool IsValidName(string? name)
    {
        if (string.IsNullOrEmpty(name) || name.Length > MaxNameLength)
        {
            return false;
        }

        foreach (var c in name)
        {
            if (!IsNameChar(c))
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>The host name, lower-cased, with any character a name may not hold as '-' and cut to 63 characters.</summary>
    internal static string DefaultName() => FromHostName(System.Net.Dns.GetHostName());

    internal static string FromHostName(string hostName)
    {
        var chars = hostName.Trim().ToLowerInvariant().Select(c => IsNameChar(c) ? c : '-').Take(MaxNameLength).ToArray();
        return chars.Length > 0 ? new string(chars) : "humwatch";
    }

    private static bool IsNameChar(char c) => char.IsAsciiLetterOrDigit(c) || c is '-' or '_' or '.';
}
