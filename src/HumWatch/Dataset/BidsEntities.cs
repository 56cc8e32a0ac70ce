using System.Text.RegularExpressions;

namespace HumWatch.Cli.Dataset;

/// <summary>
/// The BIDS entities of a recording's file name that an audit table sorts by. BIDS specification (Brain Imaging Data
/// Structure, "Common principles: filenames" and the entity table): a name is `key-value` pairs joined by `_`, the
/// first being `sub-<label>`, then a suffix and the extension, e.g. `sub-07_ses-2_task-rest_run-01_eeg.edf`; labels are
/// alphanumeric, `run` is an index (digits).
/// </summary>
internal sealed partial record BidsEntities(string Subject, string? Session, string? Task, string? Run, string? Acquisition)
{
    /// <summary>The table columns, in the BIDS entity order.</summary>
    public static readonly string[] Columns = ["sub", "ses", "task", "run", "acq"];

    /// <summary>The entities when <paramref name="fileName"/> follows BIDS naming for an EEG or iEEG recording, else null.</summary>
    public static BidsEntities? Parse(string fileName)
    {
        var name = Path.GetFileName(fileName);
        var match = RecordingName().Match(name);
        if (!match.Success)
        {
            return null;
        }

        var pairs = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (var part in match.Groups["entities"].Value.Split('_'))
        {
            var dash = part.IndexOf('-', StringComparison.Ordinal);
            if (!pairs.TryAdd(part[..dash], part[(dash + 1)..]))
            {
                return null; // an entity may appear once
            }
        }

        if (pairs.TryGetValue("run", out var run) && !run.All(char.IsAsciiDigit))
        {
            return null;
        }

        return new BidsEntities(
            pairs["sub"],
            pairs.GetValueOrDefault("ses"),
            pairs.GetValueOrDefault("task"),
            run,
            pairs.GetValueOrDefault("acq"));
    }

    /// <summary>The values in <see cref="Columns"/> order, null where absent.</summary>
    public string?[] Values() => [Subject, Session, Task, Run, Acquisition];

    [GeneratedRegex(@"^(?<entities>sub-[A-Za-z0-9]+(?:_[a-z]+-[A-Za-z0-9]+)*)_i?eeg\.[A-Za-z0-9]+$", RegexOptions.CultureInvariant)]
    private static partial Regex RecordingName();
}
