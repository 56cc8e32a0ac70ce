using HumWatch.TestSupport;
using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Core.Ledger;
using HumWatch.Core.Summaries;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;
using HumWatch.Host.Tests.Summaries;
using HumWatch.Host.Tests.Publishing.Support;
using Microsoft.Extensions.Time.Testing;
using Xunit;

namespace HumWatch.Host.Tests.Store.Postgres;

/// <summary>
/// The store's promises (docs/store.md), each held on SQLite and on PostgreSQL by the same test: one set of tables and
/// SQL, so what passes on one must pass on the other. Two <see cref="HumWatchStore"/> objects on one database stand for
/// two instances of a fleet; their races run on threads.
/// </summary>
[Collection(PostgresCollection.Name)]
public sealed class StoreContractTests(PostgresServer server) : IDisposable
{
    private const string Sha = "9f86d081884c7d659a2feaa0c55ad015a3bf4f1b2b0b822cd15d6c15b0f00a08";
    private readonly FakeTimeProvider _time = new(new DateTimeOffset(2026, 3, 2, 12, 0, 0, TimeSpan.Zero));
    private readonly List<IDisposable> _open = [];

    public void Dispose()
    {
        for (var i = _open.Count - 1; i >= 0; i--)
        {
            _open[i].Dispose();
        }
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void Alert_events_round_trip_with_every_column(string provider)
    {
        var store = Open(Db(provider), "lab-a");
        var first = store.Alerts.AppendAlert(Some.Raised());
        var second = store.Alerts.AppendAlert(Some.SeverityChanged());
        store.Alerts.AppendAlert(Some.Cleared());
        store.Alerts.AppendAlert(Some.Raised(utc: Some.Utc.AddDays(1)));
        Assert.True(second > first);

        var zone = TimeZoneInfo.CreateCustomTimeZone("Test+1", TimeSpan.FromHours(1), "Test+1", "Test+1");
        var day = store.Alerts.ForDay(new DateOnly(2026, 3, 2), zone);
        Assert.Equal([AlertEventKind.Raised, AlertEventKind.SeverityChanged, AlertEventKind.Cleared], day.Select(a => a.Event));
        var raised = day[0];
        Assert.Equal(first, raised.Id);
        Assert.Equal(("room-a", "mains/h1", FindingCategory.Mains, AlertSeverity.Marked, 1), (raised.Stream, raised.Key.ToString(), raised.Kind, raised.Severity, raised.Harmonic));
        Assert.Equal(["Cz", "Fp1"], raised.WorstChannels);
        Assert.Equal((Some.Utc, Some.Utc.AddSeconds(-14), 6.5), (raised.Utc, raised.OnsetUtc!.Value, raised.AmplitudeUvRms!.Value));
        Assert.Equal("lab-a", raised.Instance);
        Assert.NotNull(raised.EvidenceJson);
        var cleared = day[2];
        Assert.Equal((AlertClearReason.Subsided, 30.0, 22.0, AlertSeverity.Severe), (cleared.Reason!.Value, cleared.DurationSeconds!.Value, cleared.PeakUvRms!.Value, cleared.PeakSeverity!.Value));

        Assert.True(store.Alerts.Contains(Some.Raised()));
        Assert.False(store.Alerts.Contains(Some.Raised(utc: Some.Utc.AddSeconds(1))));
        Assert.False(store.Alerts.ClosedAtRestart("room-a", Some.Raised().Key));
        Assert.Equal(2, store.Alerts.Newest(Some.Utc.AddDays(-1), Some.Utc.AddDays(2), "room-a", "mains", 2).Count);
        Assert.Single(store.Alerts.Unclosed()); // the next day's raise is open
        Assert.Equal([new DateOnly(2026, 3, 2), new DateOnly(2026, 3, 3)], store.Activity.Days(zone));
        Assert.Equal(["room-a"], store.Activity.Streams());
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void Text_sorts_by_bytes_as_ordinal_order(string provider)
    {
        // Ordinal (byte) order puts capitals before lower case and "room-B" before "room-a"; a locale's order would not.
        var store = Open(Db(provider));
        foreach (var stream in (string[])["room-a", "Room-c", "room-B"])
        {
            store.Ledger.AddMinuteRows([Some.Row("s-" + stream, 1, 60, 0, 1, 1, stream: stream)]);
        }

        Assert.Equal(["Room-c", "room-B", "room-a"], store.Activity.Streams());
        Assert.Equal(["Room-c", "room-B", "room-a"], store.Activity.StreamsBetween(Some.Utc.AddHours(-1), Some.Utc.AddHours(1)));
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void Ledger_parts_count_once_whichever_instance_writes_them_even_racing(string provider)
    {
        var db = Db(provider);
        var a = Open(db, "lab-a");
        var b = Open(db, "lab-b");
        var rows = Enumerable.Range(1, 30).Select(i => Some.Row("file:abc", i, 2, 1, maxUvRms: i, medianUvRms: 1)).ToArray();

        // Both instances deliver the same 30 parts at once, each in its own transactions, a few at a time.
        var added = new int[2];
        Parallel.For(0, 2, w =>
        {
            var store = w == 0 ? a : b;
            foreach (var chunk in rows.Chunk(3))
            {
                Interlocked.Add(ref added[w], store.Ledger.AddMinuteRows(chunk));
            }
        });

        Assert.Equal(30, added[0] + added[1]);
        var row = Assert.Single(a.Ledger.Rows("room-a", Some.Utc.AddMinutes(-5), Some.Utc.AddMinutes(5)));
        Assert.Equal(60, row.MonitoredSeconds, 9);
        Assert.Equal(30, row.AffectedSeconds, 9);
        Assert.Equal(30, row.MaxUvRms);
        Assert.Equal(30, row.Parts);
        Assert.Equal(0, b.Ledger.AddMinuteRows(rows));
        Assert.Equal(30L, Convert.ToInt64(db.Raw("SELECT count(*) FROM minute_ledger_parts"), System.Globalization.CultureInfo.InvariantCulture));
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void Ledger_merges_two_sessions_as_documented(string provider)
    {
        var store = Open(Db(provider));
        Assert.Equal(1, store.Ledger.AddMinuteRows([Some.Row("session-a", 1, 30, 20, maxUvRms: 8, medianUvRms: 4, mainsHz: 50.00)]));
        Assert.Equal(1, store.Ledger.AddMinuteRows([Some.Row("session-b", 1, 30, 10, maxUvRms: 5, medianUvRms: 1, mainsHz: 50.02)]));
        store.Ledger.AddMinuteRows([Some.Row("session-c", 1, 0, 0, double.NaN, double.NaN, key: MinuteLedger.AllSourcesKey)]);

        var rows = store.Ledger.Rows("room-a", Some.Utc.AddMinutes(-5), Some.Utc.AddMinutes(5));
        Assert.Equal(["*", "mains/h1"], rows.Select(r => r.SourceKey.ToString()));
        var row = rows[1];
        Assert.Equal(60, row.MonitoredSeconds, 9);
        Assert.Equal(8, row.MaxUvRms);
        Assert.Equal(3, row.MeanMedianUvRms!.Value, 9); // docs/store.md: affected-time weighted, (4·20 + 1·10) / 30
        Assert.Equal(50.01, row.MainsHz!.Value, 9); // docs/store.md: monitored-time weighted, (50.00·30 + 50.02·30) / 60
        Assert.Null(rows[0].MaxUvRms);
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_file_is_processed_once_across_instances_racing_for_it(string provider)
    {
        var db = Db(provider);
        var stores = new[] { Open(db, "lab-a"), Open(db, "lab-b") };
        var wins = new string?[2];
        Parallel.For(0, 2, w =>
        {
            if (stores[w].Files.TryBegin($"/inbox-{w}/a.edf", 1234, Some.Utc, Sha, out _))
            {
                wins[w] = stores[w].Instance;
            }
        });

        var winner = Assert.Single(wins, w => w is not null)!;
        var loser = stores.Single(s => s.Instance != winner);
        Assert.Equal(winner, loser.Files.Find(Sha, 1234)!.Instance);

        // The winner is alive: its 'received' row is not taken, however often the loser asks.
        Assert.False(loser.Files.TryBegin("/inbox/a.edf", 1234, Some.Utc, Sha, out var held));
        Assert.Equal((FileJournalState.Received, 1), (held.State, held.Attempts));
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_received_file_is_taken_again_by_its_own_restart_or_from_a_stopped_instance_never_from_a_live_one(string provider)
    {
        var db = Db(provider);
        var a = Open(db, "lab-a");
        var b = Open(db, "lab-b");
        a.Instances.Register("lab-a", "test", _time.GetUtcNow());
        b.Instances.Register("lab-b", "test", _time.GetUtcNow());
        Assert.True(a.Files.TryBegin("/in/a.edf", 10, Some.Utc, Sha, out _));

        // lab-a restarts (a new store object, nothing in memory): it takes its own interrupted file again.
        a.Dispose();
        var a2 = Open(db, "lab-a");
        Assert.False(b.Files.TryBegin("/in/a.edf", 10, Some.Utc, Sha, out _));
        Assert.True(a2.Files.TryBegin("/in/a.edf", 10, Some.Utc, Sha, out var again));
        Assert.Equal(2, again.Attempts);

        // lab-a dies and lab-b sweeps it: then lab-b may take the file over.
        a2.Dispose();
        _time.Advance(TimeSpan.FromMinutes(5));
        Assert.NotNull(b.Instances.TryClaim("lab-a", "lab-b", _time.GetUtcNow().AddMinutes(-1), _time.GetUtcNow()));
        Assert.True(b.Files.TryBegin("/in/b-copy.edf", 10, Some.Utc, Sha, out var taken));
        Assert.Equal(("lab-b", 3, "/in/b-copy.edf"), (taken.Instance, taken.Attempts, taken.Path));
        var done = b.Files.Complete(Sha, 10, FileJournalState.Archived, "/reports/a.json");
        Assert.Equal(FileJournalState.Archived, done.State);
        Assert.False(b.Files.TryBegin("/in/a.edf", 10, Some.Utc, Sha, out var archived));
        Assert.Equal(FileJournalState.Archived, archived.State);
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_day_summary_claim_goes_to_one_instance_and_passes_on_only_when_it_stopped(string provider)
    {
        var db = Db(provider);
        var stores = new[] { Open(db, "lab-a"), Open(db, "lab-b"), Open(db, "lab-c") };
        foreach (var s in stores)
        {
            s.Instances.Register(s.Instance!, "test", _time.GetUtcNow());
        }

        var claim = SummaryRenderTable.ClaimName(new DateOnly(2026, 3, 1), "UTC");
        var won = new bool[3];
        Parallel.For(0, 3, i => won[i] = stores[i].Instances.Hold(claim, stores[i].Instance!, _time.GetUtcNow()));
        var holder = stores[Array.IndexOf(won, true)];
        Assert.Single(won, w => w);
        Assert.Equal(holder.Instance, stores[0].Instances.Holder(claim));
        Assert.True(holder.Instances.Hold(claim, holder.Instance!, _time.GetUtcNow())); // the holder again (a restart)

        var other = stores.First(s => s != holder);
        Assert.False(other.Instances.Hold(claim, other.Instance!, _time.GetUtcNow()));
        Assert.True(holder.Instances.MarkStopped(holder.Instance!, _time.GetUtcNow()));
        Assert.True(other.Instances.Hold(claim, other.Instance!, _time.GetUtcNow()));
        Assert.Equal(other.Instance, holder.Instances.Holder(claim));
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_day_is_rendered_by_one_instance_of_the_fleet_and_re_rendered_by_any_with_the_same_bytes(string provider)
    {
        var db = Db(provider);
        var day = new DateOnly(2026, 3, 1);
        var from = new DateTimeOffset(2026, 3, 1, 0, 0, 0, TimeSpan.Zero);
        using var folders = new TempFolder();
        var instances = new[] { "lab-a", "lab-b" };
        var stores = instances.Select(name => Open(db, name)).ToArray();
        var renderers = stores.Select(store =>
        {
            store.Instances.Register(store.Instance!, "test", _time.GetUtcNow());
            var options = new SummaryOutputOptions { Folder = folders.File(store.Instance!), PlotWidthPx = 320, PlotHeightPx = 200 };
            return new DailySummaryRenderer(new SummaryStore(store), options, "Test site", TimeZoneInfo.Utc);
        }).ToArray();
        stores[0].Ledger.AddMinuteRows(SummaryHarness.Rows("room-a", "a", from.AddHours(8), from.AddHours(9), seed: 1));
        stores[1].Ledger.AddMinuteRows(SummaryHarness.Rows("room-b", "b", from.AddHours(8), from.AddHours(9), seed: 2));

        var results = new IReadOnlyList<RenderedStream>[2];
        Parallel.For(0, 2, i => results[i] = renderers[i].RenderDay(day));

        var writer = Assert.Single(Enumerable.Range(0, 2), i => results[i].Any(r => r.Written));
        var other = 1 - writer;
        Assert.All(results[writer], r => Assert.True(r.Written));
        Assert.All(results[other], r => Assert.False(r.Written));
        Assert.False(Directory.Exists(folders.File(instances[other])));
        Assert.Equal(2, stores[other].Renders.RenderedCount(day, "UTC"));

        // `humwatch summary` (forced) from the other instance writes the same summary bytes.
        var again = renderers[other].RenderDay(day, folder: folders.File("on-demand"), force: true);
        foreach (var stream in (string[])["room-a", "room-b"])
        {
            var name = Path.Combine(DailySummaryRenderer.DayFolder(folders.File(instances[writer]), day), stream + ".json");
            Assert.Equal(File.ReadAllBytes(name), again.Single(r => r.Stream == stream).Json);
        }
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_stale_peer_is_swept_by_exactly_one_instance(string provider)
    {
        var db = Db(provider);
        var stores = Enumerable.Range(0, 4).Select(i => Open(db, $"lab-{i}")).ToArray();
        var start = _time.GetUtcNow();
        foreach (var s in stores)
        {
            Assert.Equal(InstanceStart.Fresh, s.Instances.Register(s.Instance!, "test", start));
        }

        _time.Advance(TimeSpan.FromMinutes(2));
        var now = _time.GetUtcNow();
        for (var i = 1; i < stores.Length; i++)
        {
            Assert.True(stores[i].Instances.Beat(stores[i].Instance!, now));
        }

        Assert.Equal(["lab-0"], stores[1].Instances.Stale("lab-1", now.AddMinutes(-1)));
        var claims = new DateTimeOffset?[stores.Length - 1];
        Parallel.For(1, stores.Length, i => claims[i - 1] = stores[i].Instances.TryClaim("lab-0", stores[i].Instance!, now.AddMinutes(-1), now));
        Assert.Equal(start, Assert.Single(claims, c => c is not null));
        var swept = stores[1].Instances.Find("lab-0")!;
        Assert.Equal(InstanceTable.SweptStop, swept.StopReason);
        Assert.False(stores[0].Instances.Beat("lab-0", now));
        Assert.Equal(InstanceStart.Swept, stores[0].Instances.Register("lab-0", "test", now));
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void Spectra_renders_and_stream_owners_round_trip(string provider)
    {
        var store = Open(Db(provider), "lab-a");
        var hour = new DateTimeOffset(2026, 3, 2, 9, 0, 0, TimeSpan.Zero);
        var lines = new Dictionary<FindingKey, LineFrequencyTally> { [FindingKey.Parse("mains/h1")] = new(500.25, 10) };
        var part = new SpectrumPart("room-a", "s", 1, hour, 0.25, 3600, [1.5f, float.Epsilon, 3e30f], lines);
        Assert.Equal(1, store.Spectra.Add([part]));
        Assert.Equal(0, store.Spectra.Add([part]));
        var back = Assert.Single(store.Spectra.Between("room-a", hour, hour.AddHours(1)));
        Assert.Equal(part.MeanPsdUv2PerHz, back.MeanPsdUv2PerHz);
        Assert.Equal((500.25, 10), (back.Lines[FindingKey.Parse("mains/h1")].SumHz, back.Lines[FindingKey.Parse("mains/h1")].Frames));

        var day = new DateOnly(2026, 3, 2);
        Assert.False(store.Renders.IsRendered(day, "UTC", "room-a"));
        store.Renders.MarkRendered(day, "UTC", "room-a", DayVerdict.Pass);
        store.Renders.MarkRendered(day, "UTC", "", null);
        Assert.True(store.Renders.IsRendered(day, "UTC", "room-a"));
        Assert.Equal(1, store.Renders.RenderedCount(day, "UTC"));

        store.StreamOwners.Record("lab-a", [new StreamSighting("room-a", hour.ToUnixTimeSeconds(), _time.GetUtcNow())]);
        store.StreamOwners.Record("lab-a", [new StreamSighting("room-a", hour.ToUnixTimeSeconds(), _time.GetUtcNow().AddMinutes(-5))]);
        var owner = Assert.Single(store.StreamOwners.Latest(_time.GetUtcNow().AddHours(-1)));
        Assert.Equal(("lab-a", _time.GetUtcNow()), (owner.Instance, owner.LastSeenUtc));
        Assert.Equal(["lab-a"], store.StreamOwners.InstancesBetween("room-a", hour, hour.AddHours(1)));
        Assert.Null(store.Activity.LastMonitoredUtc("room-a")); // no ledger rows yet
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void Migrations_run_once_even_when_instances_open_a_new_store_together(string provider)
    {
        var db = Db(provider);
        var opened = new HumWatchStore[3];
        Parallel.For(0, 3, i => opened[i] = new HumWatchStore(db.Options, _time, $"lab-{i}"));
        foreach (var s in opened)
        {
            _open.Add(s);
            Assert.Equal(StoreSchema.LatestVersion, s.SchemaVersion);
        }

        Open(db).Dispose();
        Assert.Equal((long)StoreSchema.LatestVersion, Convert.ToInt64(db.Raw("SELECT count(*) FROM schema_version"), System.Globalization.CultureInfo.InvariantCulture));
        Assert.Equal((long)StoreSchema.LatestVersion, Convert.ToInt64(db.Raw("SELECT max(version) FROM schema_version"), System.Globalization.CultureInfo.InvariantCulture));
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_schema_newer_than_the_build_is_refused_naming_the_store_and_the_setting(string provider)
    {
        var db = Db(provider);
        Open(db).Dispose();
        var newer = StoreSchema.LatestVersion + 1;
        db.Raw($"INSERT INTO schema_version (version, applied_utc_ms) VALUES ({newer}, 0)");

        var ex = Assert.Throws<InvalidOperationException>(() => Open(db));
        Assert.Contains($"has schema version {newer}, newer than this build knows ({StoreSchema.LatestVersion})", ex.Message, StringComparison.Ordinal);
        Assert.Contains(db.Options.Describe(), ex.Message, StringComparison.Ordinal);
        Assert.Contains(db.IsPostgres ? "Store:ConnectionString" : "Store:Path", ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(StoreUnderTest.Sqlite)]
    [PostgresRow]
    public void A_store_that_takes_no_writes_is_classified_read_only(string provider)
    {
        var db = Db(provider);
        if (db.IsPostgres)
        {
            // Every operation on a connection of its own, so the database setting below reaches the store's next one.
            db.Options.ConnectionString = new Npgsql.NpgsqlConnectionStringBuilder(db.Options.ConnectionString) { Pooling = false }.ConnectionString;
        }

        var store = Open(db);
        store.Activity.CheckWritable();
        if (db.IsPostgres)
        {
            // PostgreSQL: default_transaction_read_only makes every new session's transactions read-only (SQLSTATE 25006).
            db.Raw($"ALTER DATABASE {new Npgsql.NpgsqlConnectionStringBuilder(db.Options.ConnectionString).Database} SET default_transaction_read_only = on");
        }
        else
        {
            store.Connection.Run(c => { Sql.Execute(c, "PRAGMA query_only = 1"); return true; }); // SQLite: SQLITE_READONLY on every write
        }

        var refused = Record.Exception(() => store.Ledger.AddMinuteRows([Some.Row("s", 1, 60, 0, 1, 1)]));
        Assert.NotNull(refused);
        Assert.True(StoreFaults.IsStoreFailure(refused));
        Assert.Equal(StoreFaultKind.ReadOnly, StoreFaults.Classify(refused));
        if (db.IsPostgres)
        {
            Assert.Equal(StoreFaultKind.ReadOnly, StoreFaults.Classify(Record.Exception(store.Activity.CheckWritable)!));
        }
    }

    [Theory]
    [PostgresRow]
    public void Both_providers_have_the_same_tables_and_columns_in_the_same_order(string provider)
    {
        var postgres = Db(provider);
        var sqlite = Db(StoreUnderTest.Sqlite);
        Open(postgres).Dispose();
        Open(sqlite).Dispose();

        foreach (var (table, _) in StoreSchema.Tables)
        {
            // SQLite: pragma_table_info; PostgreSQL: information_schema.columns (SQL standard), both in column order.
            var sqliteColumns = sqlite.Raw($"SELECT group_concat(name, ',') FROM (SELECT name FROM pragma_table_info('{table}') ORDER BY cid)") as string;
            var postgresColumns = postgres.Raw($"SELECT string_agg(column_name, ',' ORDER BY ordinal_position) FROM information_schema.columns WHERE table_schema = 'public' AND table_name = '{table}'") as string;
            Assert.False(string.IsNullOrEmpty(sqliteColumns), table);
            Assert.Equal(sqliteColumns, postgresColumns);
        }

        Assert.Equal(
            StoreSchema.Tables.Select(t => t.Table).Order(StringComparer.Ordinal),
            (postgres.Raw("SELECT string_agg(table_name, ',' ORDER BY table_name) FROM information_schema.tables WHERE table_schema = 'public'") as string)!.Split(','));
        Assert.Equal(StoreSchema.LatestVersion, PostgresSchema.Migrations.Length);
    }

    [Theory]
    [PostgresRow]
    public void Times_and_ids_are_64_bit_and_floating_columns_double_on_postgres(string provider)
    {
        var db = Db(provider);
        Open(db).Dispose();

        // PostgreSQL documentation 8.1: integer is 4 bytes, bigint 8; real 4 bytes, double precision 8.
        var narrow = db.Raw("""
            SELECT string_agg(table_name || '.' || column_name, ',' ORDER BY table_name, column_name) FROM information_schema.columns
            WHERE table_schema = 'public' AND (data_type = 'real' OR (data_type = 'integer' AND (column_name LIKE '%utc%' OR column_name IN ('id', 'seq', 'size_bytes'))))
            """);
        Assert.Equal(DBNull.Value, narrow);

        var store = Open(db);
        var late = new DateTimeOffset(2300, 1, 1, 0, 0, 0, TimeSpan.Zero); // Unix ms past 2^31 many times over
        store.Alerts.AppendAlert(Some.Raised(utc: late));
        Assert.Equal(late, Assert.Single(store.Alerts.Between(late, late.AddSeconds(1))).Utc);
    }

    private StoreUnderTest Db(string provider)
    {
        var db = new StoreUnderTest(provider, server, _time);
        _open.Add(db);
        return db;
    }

    private HumWatchStore Open(StoreUnderTest db, string? instance = null)
    {
        var store = db.Open(instance);
        _open.Add(store);
        return store;
    }
}
