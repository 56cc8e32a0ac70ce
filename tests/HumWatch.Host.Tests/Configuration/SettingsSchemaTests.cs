using System.Text;
using System.Text.Json;
using HumWatch.Host.Configuration;
using HumWatch.Host.Tests.Ingest.Support;
using Xunit;

namespace HumWatch.Host.Tests.Configuration;

/// <summary>
/// Unknown sections and keys stop the start with the nearest known key; values of the wrong type and bad JSON are
/// named by key, or by file, line and column. The known keys are read off the options classes.
/// </summary>
public sealed class SettingsSchemaTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void A_misspelt_key_in_a_file_names_the_key_the_nearest_known_one_and_the_file()
    {
        var file = Write("site.json", """{ "Alerts": { "RaiseAftreFrames": 2 } }""");

        var lines = Errors(SettingsSources.Isolated(configFiles: [file]));

        var line = Assert.Single(lines);
        Assert.Equal($"unknown setting 'Alerts:RaiseAftreFrames' — did you mean 'Alerts:RaiseAfterFrames'? ({file})", line);
    }

    [Fact]
    public void A_misspelt_section_is_not_ignored_once_for_one_key_and_once_for_a_whole_section()
    {
        var single = Write("one.json", """{ "Alert": { "RaiseAfterFrames": 3 } }""");
        var whole = Write("two.json", """{ "Alert": { "RaiseAfterFrames": 3, "ClearAfterFrames": 6 } }""");

        Assert.Equal($"unknown setting 'Alert:RaiseAfterFrames' — did you mean 'Alerts:RaiseAfterFrames'? ({single})", Assert.Single(Errors(SettingsSources.Isolated(configFiles: [single]))));
        Assert.Equal($"unknown section 'Alert' (2 settings) — did you mean 'Alerts'? ({whole})", Assert.Single(Errors(SettingsSources.Isolated(configFiles: [whole]))));
    }

    [Fact]
    public void Keys_in_lists_and_nested_sections_are_checked_too()
    {
        var lines = Errors(SettingsSources.Isolated(new Dictionary<string, string?>
        {
            ["Ingest:Endpoints:0:Adress"] = "tcp://127.0.0.1:5710",
            ["Analysis:Sources:SiteTones:0:FrequencyHz"] = "33.3",
            ["Analysis:Sources:SiteTones:0:Nme"] = "fan",
            ["Summaries:Day:Mains:WarnMinute"] = "5",
        }));

        Assert.Equal(
            [
                "unknown setting 'Analysis:Sources:SiteTones:0:Nme' — did you mean 'Analysis:Sources:SiteTones:0:Name'? (--set)",
                "unknown setting 'Ingest:Endpoints:0:Adress' — did you mean 'Ingest:Endpoints:0:Address'? (--set)",
                "unknown setting 'Summaries:Day:Mains:WarnMinute' — did you mean 'Summaries:Day:Mains:WarnMinutes'? (--set)",
            ],
            lines.Where(l => l.StartsWith("unknown", StringComparison.Ordinal)));

        // The rest of a section with an unknown key is still bound and validated: the tone without its name is refused.
        Assert.Contains(lines, l => l.StartsWith("Analysis:Sources:SiteTones:0:Name", StringComparison.Ordinal));
    }

    [Fact]
    public void A_right_name_in_the_wrong_section_points_at_its_section_and_a_name_far_from_any_lists_the_choices()
    {
        var lines = Errors(SettingsSources.Isolated(new Dictionary<string, string?> { ["Alerts:FailLineUvRms"] = "3", ["Store:Colour"] = "blue" }));

        Assert.Contains("unknown setting 'Alerts:FailLineUvRms' — did you mean 'Check:FailLineUvRms'? (--set)", lines);
        Assert.Contains("unknown setting 'Store:Colour' (Store has: BusyTimeoutMs, ConnectionString, ConnectionStringFile, Path, Provider) (--set)", lines);
    }

    [Fact]
    public void An_environment_variable_is_named_as_the_variable()
    {
        var sources = new SettingsSources { ReadWorkingDirectorySettings = false, Environment = new Dictionary<string, string?> { ["HUMWATCH_Check__WarnLineUvRm"] = "2" } };

        Assert.Equal(
            "unknown setting 'Check:WarnLineUvRm' — did you mean 'Check:WarnLineUvRms'? (environment variable HUMWATCH_Check__WarnLineUvRm)",
            Assert.Single(Errors(sources)));
    }

    [Fact]
    public void A_variable_without_a_double_underscore_is_no_setting_unless_it_starts_like_one()
    {
        // HUMWATCH_MEASURE switches the tests' measurement run; it is not a setting and must not stop a start.
        var quiet = new SettingsSources { ReadWorkingDirectorySettings = false, Environment = new Dictionary<string, string?> { ["HUMWATCH_MEASURE"] = "1" } };
        var mistyped = new SettingsSources { ReadWorkingDirectorySettings = false, Environment = new Dictionary<string, string?> { ["HUMWATCH_Alerts_RaiseAfterFrames"] = "4" } };

        Assert.Equal(new HumWatch.Core.Alerts.AlertOptions().RaiseAfterFrames, SettingsBuilder.Build(quiet).Alerts.RaiseAfterFrames);
        Assert.Equal(
            "environment variable HUMWATCH_Alerts_RaiseAfterFrames is not a setting: a section and its key are joined by two underscores, e.g. HUMWATCH_Alerts__RaiseAfterFrames",
            Assert.Single(Errors(mistyped)));
    }

    [Fact]
    public void A_value_of_the_wrong_type_names_the_key_and_what_it_takes_and_no_message_names_the_binder()
    {
        var lines = Errors(SettingsSources.Isolated(new Dictionary<string, string?>
        {
            ["Store:BusyTimeoutMs"] = "soon",
            ["Check:WarnLineUvRms"] = "1,5",
            ["Inbox:Enabled"] = "yes",
            ["Alerts:UnidentifiedMinSeverity"] = "Loud",
            ["Alerts:RaiseAftreFrames"] = "2",
        }));

        Assert.Contains("Store:BusyTimeoutMs must be a whole number (got \"soon\").", lines);
        Assert.Contains("Check:WarnLineUvRms must be a number (with a point for decimals, e.g. 2.5) (got \"1,5\").", lines);
        Assert.Contains("Inbox:Enabled must be true or false (got \"yes\").", lines);
        Assert.Contains(lines, l => l.StartsWith("Alerts:UnidentifiedMinSeverity must be one of ", StringComparison.Ordinal) && l.Contains("Marked", StringComparison.Ordinal));
        Assert.Contains(lines, l => l.StartsWith("unknown setting 'Alerts:RaiseAftreFrames'", StringComparison.Ordinal));
        Assert.DoesNotContain(lines, l => l.Contains("BinderOptions", StringComparison.Ordinal) || l.Contains("HumWatch.", StringComparison.Ordinal));
    }

    [Fact]
    public void A_section_with_an_unknown_key_is_still_bound_and_validated()
    {
        var lines = Errors(SettingsSources.Isolated(new Dictionary<string, string?> { ["Alerts:RaiseAftreFrames"] = "2", ["Alerts:ClearAfterFrames"] = "0" }));

        Assert.Equal(2, lines.Count);
        Assert.Contains(lines, l => l.StartsWith("Alerts:ClearAfterFrames", StringComparison.Ordinal));
    }

    [Fact]
    public void Invalid_JSON_names_the_file_the_line_and_the_column_counted_in_characters()
    {
        // The missing comma before "FailLineUvRms" on line 4; "µ" is two bytes in UTF-8 but one column.
        var text = "{\n  \"Site\": { \"Name\": \"µ lab\" },\n  \"Check\": { \"WarnLineUvRms\": 1\n    \"FailLineUvRms\": 5 }\n}\n";
        var file = Write("broken.json", text);
        var lineText = text.Split('\n')[3];
        var column = lineText.IndexOf('"', StringComparison.Ordinal) + 1;

        var ex = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(SettingsSources.Isolated(configFiles: [file])));

        Assert.StartsWith($"{file}: not valid JSON at line 4, column {column}: ", ex.Message, StringComparison.Ordinal);
        Assert.DoesNotContain("BytePositionInLine", ex.Message, StringComparison.Ordinal);

        // On the line with the two-byte "µ" the column is still the character's.
        var onMu = Write("mu.json", "{ \"Site\": { \"Name\": \"µ lab\" \"TimeZone\": \"UTC\" } }");
        var muColumn = File.ReadAllText(onMu).IndexOf("\"TimeZone\"", StringComparison.Ordinal) + 1;
        var muEx = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(SettingsSources.Isolated(configFiles: [onMu])));
        Assert.StartsWith($"{onMu}: not valid JSON at line 1, column {muColumn}: ", muEx.Message, StringComparison.Ordinal);
        Assert.NotEqual(Encoding.UTF8.GetByteCount(File.ReadAllText(onMu)[..(muColumn - 1)]) + 1, muColumn);
    }

    [Fact]
    public void A_file_that_is_not_one_object_or_repeats_a_key_is_named()
    {
        var array = Write("array.json", "[ 1, 2 ]");
        var twice = Write("twice.json", """{ "Check": { "WarnLineUvRms": 1, "WarnLineUvRms": 2 } }""");

        var arrayEx = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(SettingsSources.Isolated(configFiles: [array])));
        var twiceEx = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(SettingsSources.Isolated(configFiles: [twice])));

        Assert.Equal($"{array}: a configuration file holds one JSON object {{ … }}, not an array.", arrayEx.Message);
        Assert.StartsWith($"{twice}: not valid JSON at line 1", twiceEx.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void The_working_directory_file_with_bad_JSON_is_named_by_its_full_path()
    {
        var file = Write("appsettings.json", "{ \"Check\": }");

        var ex = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(new SettingsSources { BaseDirectory = _folder.Path, Environment = new Dictionary<string, string?>() }));

        Assert.StartsWith($"{file}: not valid JSON at line 1, column 12: ", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void The_known_keys_are_the_keys_of_the_example_settings_which_list_every_setting()
    {
        // One source of truth: the keys come from the bound options classes; the shipped example must list the same.
        var example = Path.Combine(RepositoryRoot(), "appsettings.example.json");
        var exampleKeys = new SortedSet<string>(StringComparer.OrdinalIgnoreCase);
        using (var document = JsonDocument.Parse(File.ReadAllText(example), new JsonDocumentOptions { CommentHandling = JsonCommentHandling.Skip }))
        {
            Flatten(document.RootElement, "", exampleKeys);
        }

        // An optional section the example leaves off ("Curve": null) stands for the keys under it.
        var known = new SortedSet<string>(StringComparer.OrdinalIgnoreCase);
        foreach (var key in SettingsSchema.KnownKeys())
        {
            known.Add(exampleKeys.FirstOrDefault(k => key.StartsWith(k + ":", StringComparison.OrdinalIgnoreCase)) ?? key);
        }

        Assert.Empty(known.Except(exampleKeys, StringComparer.OrdinalIgnoreCase)); // settings the example does not list
        Assert.Empty(exampleKeys.Except(known, StringComparer.OrdinalIgnoreCase)); // example keys no setting reads
    }

    [Theory]
    [InlineData("kitten", "sitting", 3)] // the usual worked example of Levenshtein distance (common practice, no source)
    [InlineData("RaiseAftreFrames", "RaiseAfterFrames", 1)] // one adjacent transposition
    [InlineData("alerts", "ALERTS", 0)] // setting keys ignore case
    [InlineData("", "abc", 3)]
    public void Edit_distance_counts_inserts_deletes_substitutions_and_swaps(string a, string b, int expected)
    {
        Assert.Equal(expected, SettingsSchema.Distance(a, b));
        Assert.Equal(expected, SettingsSchema.Distance(b, a));
    }

    private static List<string> Errors(SettingsSources sources)
    {
        var ex = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(sources));
        return [.. ex.Message.Split(Environment.NewLine)];
    }

    /// <summary>Section:Key paths of a JSON settings file, list indexes written as "*".</summary>
    private static void Flatten(JsonElement element, string path, SortedSet<string> keys)
    {
        switch (element.ValueKind)
        {
            case JsonValueKind.Object:
                foreach (var property in element.EnumerateObject())
                {
                    Flatten(property.Value, path.Length == 0 ? property.Name : $"{path}:{property.Name}", keys);
                }

                break;
            case JsonValueKind.Array:
                var items = element.EnumerateArray().ToList();
                if (items.Count == 0 || items[0].ValueKind is not (JsonValueKind.Object or JsonValueKind.Array))
                {
                    keys.Add(path + ":*");
                }

                foreach (var item in items.Where(i => i.ValueKind is JsonValueKind.Object or JsonValueKind.Array))
                {
                    Flatten(item, path + ":*", keys);
                }

                break;
            default:
                keys.Add(path);
                break;
        }
    }

    private string Write(string name, string text)
    {
        var path = Path.Combine(_folder.Path, name);
        File.WriteAllText(path, text);
        return path;
    }

    private static string RepositoryRoot()
    {
        var folder = new DirectoryInfo(AppContext.BaseDirectory);
        while (folder is not null && !File.Exists(Path.Combine(folder.FullName, "HumWatch.sln")))
        {
            folder = folder.Parent;
        }

        return folder?.FullName ?? throw new InvalidOperationException("HumWatch.sln not found above the test folder.");
    }
}
