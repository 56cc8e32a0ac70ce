using HumWatch.Cli.Commands;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>The overrides every settings-reading command builds: preset, then --data, then --set, then the command's own options.</summary>
public sealed class CommandSettingsTests
{
    [Fact]
    public void Set_beats_data_which_beats_the_preset_and_the_commands_own_options_beat_set()
    {
        var before = new Dictionary<string, string?> { ["Logs:ConsoleLevel"] = "Error", ["Store:Path"] = "preset.db" };
        var after = new Dictionary<string, string?> { ["Analysis:Sources:MainsHz"] = "60" };
        var sources = CommandSettings.TrySources(
            "demo",
            ["a.json", "b.json"],
            ["Logs:Folder=elsewhere", "Analysis:Sources:MainsHz=50"],
            TextWriter.Null,
            dataFolder: "data",
            before: before,
            after: after);

        Assert.NotNull(sources);
        Assert.Equal(["a.json", "b.json"], sources.ConfigFiles);
        Assert.Equal("Error", sources.Overrides["Logs:ConsoleLevel"]); // only the preset sets it
        Assert.Equal(Path.Combine("data", "humwatch.db"), sources.Overrides["Store:Path"]); // --data over the preset
        Assert.Equal("elsewhere", sources.Overrides["Logs:Folder"]); // --set over --data
        Assert.Equal("60", sources.Overrides["Analysis:Sources:MainsHz"]); // the command's own option over --set
        Assert.Equal("elsewhere", sources.Overrides["logs:folder"]); // keys compare as configuration keys do, ignoring case
    }

    [Fact]
    public void A_malformed_set_is_named_and_gives_no_sources()
    {
        using var stderr = new StringWriter();

        var sources = CommandSettings.TrySources("summary", [], ["Store:Path"], stderr);

        Assert.Null(sources);
        Assert.Equal("humwatch summary: --set takes KEY=VALUE (e.g. Publish:StatusIntervalSeconds=5); got 'Store:Path'." + Environment.NewLine, stderr.ToString());
    }
}
