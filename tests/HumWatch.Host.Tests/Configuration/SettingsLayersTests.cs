using System.Text.Json;
using HumWatch.Host.Composition;
using HumWatch.Host.Configuration;
using HumWatch.Host.Inbox;
using HumWatch.Host.Ingest;
using HumWatch.Host.Store;
using HumWatch.Host.Summaries;
using HumWatch.Host.Tests.Ingest.Support;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Options;
using Xunit;

namespace HumWatch.Host.Tests.Configuration;

/// <summary>
/// The order of the settings layers, for the bound settings and for the service host built from them. A "staircase":
/// layer i sets every key from key i up, so key i's value shows that layer i beats every layer below it, and the keys
/// above show every layer above beats it. No process-wide environment variable or working directory is touched.
/// </summary>
public sealed class SettingsLayersTests : IDisposable
{
    // One key per layer, lowest first; key 0 is set only by the embedded defaults.
    private static readonly string[] Keys = ["Store:Path", "Logs:Folder", "Inbox:Folder", "Inbox:ArchiveFolder", "Inbox:RejectedFolder", "Summaries:Folder"];
    private static readonly string[] Layers = ["embedded", "appsettings", "first-config", "second-config", "environment", "set"];

    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void Each_layer_wins_over_every_layer_below_it()
    {
        var bound = SettingsBuilder.Build(StaircaseSources());

        string[] actual = [bound.Store.Path, bound.Logs.Folder, bound.Inbox.Folder, bound.Inbox.ArchiveFolder, bound.Inbox.RejectedFolder, bound.Summaries.Folder];
        Assert.Equal(Expected(), actual);
    }

    [Fact]
    public void The_service_host_registers_the_layered_values_and_the_very_instances_bound_once()
    {
        using var host = HumWatchHost.Build(new HumWatchHostSettings { Sources = StaircaseSources() });

        var services = host.Services;
        var bound = services.GetRequiredService<BoundSettings>();
        var store = services.GetRequiredService<IOptions<StoreOptions>>().Value;
        var inbox = services.GetRequiredService<IOptions<InboxOptions>>().Value;
        var summaries = services.GetRequiredService<IOptions<SummaryOutputOptions>>().Value;
        string[] actual = [store.Path, bound.Logs.Folder, inbox.Folder, inbox.ArchiveFolder, inbox.RejectedFolder, summaries.Folder];
        Assert.Equal(Expected(), actual);

        // Registrations take the bundle's objects rather than binding their section again.
        Assert.Same(bound.Ingest, services.GetRequiredService<IOptions<IngestOptions>>().Value);
        Assert.Same(bound.Summaries, summaries);
        Assert.Same(bound.Store, store);
        Assert.True(Directory.Exists(Expected()[1]), "the host creates the log folder it was given");
    }

    [Fact]
    public void Without_any_source_the_embedded_defaults_apply_and_agree_with_the_option_classes_own()
    {
        var bound = SettingsBuilder.Build(new SettingsSources { BaseDirectory = _folder.Path, Environment = new Dictionary<string, string?>() });

        Assert.Equal("humwatch-data/humwatch.db", bound.Store.Path);

        // The README and docs name one default per folder; the class defaults (what tests and embedders see) say the same.
        var classDefaults = new Dictionary<string, string?>
        {
            ["Store:Path"] = new StoreOptions().Path,
            ["Logs:Folder"] = new LogOptions().Folder,
            ["Inbox:Folder"] = new InboxOptions().Folder,
            ["Inbox:ArchiveFolder"] = new InboxOptions().ArchiveFolder,
            ["Inbox:RejectedFolder"] = new InboxOptions().RejectedFolder,
            ["Summaries:Folder"] = new SummaryOutputOptions().Folder,
        };
        Assert.Equal(SettingsBuilder.EmbeddedDefaults.OrderBy(p => p.Key), classDefaults.OrderBy(p => p.Key));
    }

    [Fact]
    public void The_working_directory_file_is_read_from_the_base_directory_unless_turned_off()
    {
        WriteJson(Path.Combine(_folder.Path, "appsettings.json"), new Dictionary<string, string?> { ["Check:MinLineSeconds"] = "7" });

        var read = SettingsBuilder.Build(new SettingsSources { BaseDirectory = _folder.Path, Environment = new Dictionary<string, string?>() });
        var ignored = SettingsBuilder.Build(new SettingsSources { BaseDirectory = _folder.Path, Environment = new Dictionary<string, string?>(), ReadWorkingDirectorySettings = false });

        Assert.Equal(7, read.Check.MinLineSeconds);
        Assert.Equal(new HumWatch.Core.Reporting.CheckLimits().MinLineSeconds, ignored.Check.MinLineSeconds);
    }

    [Fact]
    public void Environment_settings_need_the_prefix_in_any_case_and_read_double_underscore_as_the_section_separator()
    {
        var environment = new Dictionary<string, string?>
        {
            ["HUMWATCH_Analysis__Tracking__PersistFrames"] = "6",
            ["humwatch_Alerts__RaiseAfterFrames"] = "4",
            ["Check__MinLineSeconds"] = "99",
            ["OTHER_Check__FailFaultFraction"] = "0.9",
            ["HUMWATCH_"] = "ignored",
        };

        var bound = SettingsBuilder.Build(new SettingsSources { ReadWorkingDirectorySettings = false, Environment = environment });

        Assert.Equal(6, bound.Analysis.Tracking.PersistFrames);
        Assert.Equal(4, bound.Alerts.RaiseAfterFrames);
        Assert.Equal(new HumWatch.Core.Reporting.CheckLimits().MinLineSeconds, bound.Check.MinLineSeconds);
        Assert.Equal(new HumWatch.Core.Reporting.CheckLimits().FailFaultFraction, bound.Check.FailFaultFraction);
    }

    [Fact]
    public void A_missing_config_file_is_named_as_given()
    {
        var sources = SettingsSources.Isolated(configFiles: ["no-such-site.json"]) with { BaseDirectory = _folder.Path };

        var ex = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(sources));

        Assert.Equal("no-such-site.json: configuration file not found.", ex.Message);
    }

    [Fact]
    public void A_config_file_that_is_not_JSON_is_named()
    {
        var path = Path.Combine(_folder.Path, "broken.json");
        File.WriteAllText(path, "{ \"Check\": ");

        var ex = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(SettingsSources.Isolated(configFiles: [path])));

        Assert.Contains("broken.json", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_16_MiB_config_file_is_refused_by_its_size_without_being_read()
    {
        var path = Path.Combine(_folder.Path, "huge.json");
        using (var file = File.Create(path))
        {
            file.Write("{\"Site\":{\"Name\":\""u8);
            file.SetLength(16 << 20);
        }

        var before = GC.GetAllocatedBytesForCurrentThread();
        var ex = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(SettingsSources.Isolated(configFiles: ["huge.json"]) with { BaseDirectory = _folder.Path }));
        var allocated = GC.GetAllocatedBytesForCurrentThread() - before;

        Assert.Equal("huge.json: the configuration file has 16777216 bytes; more than 1048576 (1 MiB) is not a settings file.", ex.Message);
        Assert.True(allocated < 1 << 20, $"{allocated} bytes allocated to refuse a 16 MiB file");
    }

    [Fact]
    public void Every_bad_setting_in_every_section_is_reported_at_once_each_naming_its_key()
    {
        var sources = SettingsSources.Isolated(new Dictionary<string, string?>
        {
            ["Analysis:Lines:MinProminenceDb"] = "1",
            ["Check:FailLineUvRms"] = "0.5",
            ["Alerts:RaiseAfterFrame"] = "4",
            ["Store:BusyTimeoutMs"] = "soon",
            ["Site:TimeZone"] = "Mars/Olympus",
            ["Ingest:QueueCapacity"] = "0",
            ["Summaries:PlotWidthPx"] = "10",
        });

        var ex = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(sources));

        var lines = ex.Message.Split(Environment.NewLine);
        foreach (var key in new[] { "Analysis:Lines:MinProminenceDb", "Check:FailLineUvRms", "RaiseAfterFrame", "Store:BusyTimeoutMs", "Site:TimeZone", "Ingest:QueueCapacity", "Summaries:PlotWidthPx" })
        {
            Assert.Contains(lines, l => l.Contains(key, StringComparison.Ordinal));
        }
    }

    private SettingsSources StaircaseSources()
    {
        WriteJson(Path.Combine(_folder.Path, "appsettings.json"), LayerValues(1));
        WriteJson(Path.Combine(_folder.Path, "first.json"), LayerValues(2));
        WriteJson(Path.Combine(_folder.Path, "second.json"), LayerValues(3));
        var environment = LayerValues(4).ToDictionary(kv => "HUMWATCH_" + kv.Key.Replace(":", "__", StringComparison.Ordinal), kv => kv.Value);
        environment["PATH"] = "/usr/bin";
        return new SettingsSources
        {
            BaseDirectory = _folder.Path,

            // Relative, as typed on a command line: they resolve against the base directory.
            ConfigFiles = ["first.json", "second.json"],
            Environment = environment,
            Overrides = LayerValues(5),
        };
    }

    private Dictionary<string, string?> LayerValues(int layer)
    {
        var values = new Dictionary<string, string?>();
        for (var key = layer; key < Keys.Length; key++)
        {
            values[Keys[key]] = Value(layer, key);
        }

        return values;
    }

    private string[] Expected() => [SettingsBuilder.EmbeddedDefaults[Keys[0]]!, .. Enumerable.Range(1, Keys.Length - 1).Select(key => Value(key, key))];

    private string Value(int layer, int key) => Path.Combine(_folder.Path, Layers[layer], Keys[key].Replace(':', '-'));

    /// <summary>Writes Section:Key settings as the nested JSON a settings file holds.</summary>
    private static void WriteJson(string path, Dictionary<string, string?> settings)
    {
        var sections = new Dictionary<string, Dictionary<string, string?>>();
        foreach (var (key, value) in settings)
        {
            var parts = key.Split(':');
            if (!sections.TryGetValue(parts[0], out var section))
            {
                sections[parts[0]] = section = [];
            }

            section[parts[1]] = value;
        }

        File.WriteAllText(path, JsonSerializer.Serialize(sections));
    }
}
