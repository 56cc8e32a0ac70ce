using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;
using HumWatch.Core.Summaries;
using HumWatch.Host.Configuration;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Options;
using Microsoft.Extensions.Time.Testing;

namespace HumWatch.Host.Tests.Summaries;

/// <summary>A temp store, output folder and fake clock for summary tests.</summary>
internal sealed class SummaryHarness : IDisposable
{
    private readonly TempFolder _folder = new();

    public SummaryHarness(string zoneId, DateTimeOffset startUtc)
    {
        Time = new FakeTimeProvider(startUtc);
        Zone = TimeZoneInfo.FindSystemTimeZoneById(zoneId);
        Options = new SummaryOutputOptions { Folder = Path.Combine(Root, "summaries"), PlotWidthPx = 640, PlotHeightPx = 320, SettleSeconds = 120 };
        Open();
    }

    public string Root => _folder.Path;

    public FakeTimeProvider Time { get; }

    public TimeZoneInfo Zone { get; }

    public SummaryOutputOptions Options { get; }

    public HumWatchStore Store { get; private set; } = null!;

    public SummaryStore Summaries { get; private set; } = null!;

    public RecordingPublisher Publisher { get; } = new();

    public string DbPath => Path.Combine(Root, "store.db");

    public void Open()
    {
        Store = new HumWatchStore(new StoreOptions { Path = DbPath }, Time);
        Summaries = new SummaryStore(Store);
    }

    /// <summary>Closes and reopens the store, as a process restart does.</summary>
    public void Reopen()
    {
        Store.Dispose();
        Open();
    }

    public DailySummaryService Service() => new(
        Summaries,
        Publisher,
        Microsoft.Extensions.Options.Options.Create(Options),
        Microsoft.Extensions.Options.Options.Create(new SiteOptions { Name = "Test site", TimeZone = Zone.Id }),
        NullLogger<DailySummaryService>.Instance,
        Time);

    public DailySummaryRenderer Renderer(string? folder = null) =>
        new(Summaries, folder is null ? Options : new SummaryOutputOptions { Folder = folder, PlotWidthPx = Options.PlotWidthPx, PlotHeightPx = Options.PlotHeightPx }, "Test site", Zone);

    /// <summary>Seeded, made-up minute rows of one stream over [fromUtc, toUtc): mains all day, a display line in the afternoon.</summary>
    public static List<MinuteRow> Rows(string stream, string session, DateTimeOffset fromUtc, DateTimeOffset toUtc, int seed)
    {
        var random = new Random(seed);
        var rows = new List<MinuteRow>();
        long seq = 0;
        for (var minute = fromUtc; minute < toUtc; minute = minute.AddMinutes(1))
        {
            var mainsHz = 50 + ((random.NextDouble() - 0.5) * 0.04);
            var mainsUv = 0.5 + (random.NextDouble() * 3);
            var mainsOn = mainsUv >= 1 ? 60.0 : 0.0;
            var displayOn = minute.Hour is >= 12 and < 14 ? 60.0 : 0.0;
            var strongest = Math.Max(mainsOn > 0 ? mainsUv : 0, displayOn > 0 ? 6 : 0);
            rows.Add(new MinuteRow(stream, session, ++seq, minute, MinuteLedger.AllSourcesKey, 60, Math.Max(mainsOn, displayOn),
                strongest > 0 ? strongest : double.NaN, strongest > 0 ? strongest * 0.9 : double.NaN, strongest > 0 ? ["Fp1", "F7"] : [], mainsHz));
            if (mainsOn > 0)
            {
                rows.Add(new MinuteRow(stream, session, ++seq, minute, FindingKey.Mains(1), 60, mainsOn, mainsUv, mainsUv * 0.9, ["Fp1"], mainsHz));
            }

            if (displayOn > 0)
            {
                rows.Add(new MinuteRow(stream, session, ++seq, minute, FindingKey.Display("display 75 Hz", 1), 60, displayOn, 6, 5.5, ["O1", "O2"], mainsHz));
            }
        }

        return rows;
    }

    public void Dispose()
    {
        Store.Dispose();
        _folder.Dispose();
    }
}
