using System.Globalization;
using HumWatch.Core.Reporting;
using HumWatch.Host.Checking;
using HumWatch.Host.Serialization;

namespace HumWatch.Cli.Dataset;

/// <summary>
/// The audit table of a dataset check: tab-separated, one header line, one row per file. Missing values are written
/// "n/a" and names use snake_case, as BIDS asks of its tabular files (BIDS specification, "Tabular files"), so the
/// table sits beside a dataset's own tables and reads into pandas or R with their defaults.
/// </summary>
internal static class CheckTable
{
    public const string Missing = "n/a";

    /// <summary>The source kinds that get their own "strongest line" columns, as reports name them, with their column prefix.</summary>
    private static readonly (string Source, string Prefix)[] _sources =
        [("mains", "mains"), ("display", "display"), ("site-tone", "site_tone"), ("unidentified", "unidentified")];

    private static readonly string[] _leading =
        ["path", "verdict", "exit_code", "check_s", "duration_s", "channels", "sample_rate_hz", "grid_hz", "grid_nominal_hz"];

    private static readonly string[] _trailing = ["faults", "error"];

    /// <summary>What <c>--skip-checked</c> needs of a table.</summary>
    public static readonly string[] FingerprintColumns = ["size_bytes", "modified_utc", "xxh3"];

    /// <summary>The header for a run: the BIDS entity columns only when some file follows BIDS naming.</summary>
    public static IReadOnlyList<string> Columns(bool withBidsEntities) =>
    [
        .. _leading,
        .. _sources.SelectMany(s => new[] { s.Prefix + "_hz", s.Prefix + "_uv_rms", s.Prefix + "_channel_share" }),
        .. _trailing,
        .. withBidsEntities ? BidsEntities.Columns : [],
        .. FingerprintColumns,
    ];

    /// <summary>One file's row by column name.</summary>
    public static Dictionary<string, string> Row(string tablePath, CheckReport report, TimeSpan checkTime, FileFingerprint? fingerprint)
    {
        var c = CultureInfo.InvariantCulture;
        var row = new Dictionary<string, string>(StringComparer.Ordinal)
        {
            ["path"] = tablePath,
            ["verdict"] = report.Verdict.ToText(),
            ["exit_code"] = report.ExitCode.ToString(c),
            ["check_s"] = checkTime.TotalSeconds.ToString("0.000", c),
            ["duration_s"] = Number(report.DurationSeconds, "0.###"),
            ["channels"] = report.ChannelCount?.ToString(c) ?? Missing,
            ["sample_rate_hz"] = Number(report.SampleRateHz, "0.###"),
            ["grid_hz"] = Number(report.MainsEstimateHz, "0.000"),
            ["grid_nominal_hz"] = Number(report.MainsHz, "0.##"),
            ["faults"] = report.ChannelFaults.Count == 0
                ? (report.Error is null ? "none" : Missing)
                : string.Join("; ", report.ChannelFaults.Select(f => $"{f.Channel} {f.Kind}").Distinct(StringComparer.Ordinal)),
            ["error"] = report.Error ?? Missing,
        };

        foreach (var (source, prefix) in _sources)
        {
            var strongest = report.Lines.Where(l => l.Source == source).MaxBy(l => l.AmplitudeUvRms);
            row[prefix + "_hz"] = Number(strongest?.FrequencyHz, "0.00");
            row[prefix + "_uv_rms"] = Number(strongest?.AmplitudeUvRms, "0.00");
            row[prefix + "_channel_share"] = Number(strongest?.ChannelShare, "0.00");
        }

        var entities = BidsEntities.Parse(tablePath)?.Values() ?? new string?[BidsEntities.Columns.Length];
        for (var i = 0; i < BidsEntities.Columns.Length; i++)
        {
            row[BidsEntities.Columns[i]] = entities[i] ?? Missing;
        }

        row["size_bytes"] = fingerprint is { } f ? f.SizeBytes.ToString(c) : Missing;
        row["modified_utc"] = fingerprint?.ModifiedText ?? Missing;
        row["xxh3"] = fingerprint?.ContentHash ?? Missing;
        return row;
    }

    /// <summary>The row's values in <paramref name="columns"/> order as one tab-separated line (no line end).</summary>
    public static string Line(IReadOnlyList<string> columns, IReadOnlyDictionary<string, string> row) =>
        string.Join('\t', columns.Select(c => Cell(row.GetValueOrDefault(c) ?? Missing)));

    /// <summary>A value as one cell: tabs and line ends would split the row, so they become spaces.</summary>
    public static string Cell(string value) =>
        value.AsSpan().IndexOfAny('\t', '\r', '\n') < 0 ? value : value.Replace('\t', ' ').Replace('\r', ' ').Replace('\n', ' ');

    private static string Number(double? value, string format) =>
        value is { } v && double.IsFinite(v) ? v.ToString(format, CultureInfo.InvariantCulture) : Missing;
}
