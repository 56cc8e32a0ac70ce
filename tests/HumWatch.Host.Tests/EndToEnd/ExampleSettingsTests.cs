using HumWatch.Host.Configuration;
using Xunit;

namespace HumWatch.Host.Tests.EndToEnd;

/// <summary>The shipped example settings and site profiles must bind (no unknown keys) and validate.</summary>
public sealed class ExampleSettingsTests
{
    [Theory]
    [InlineData("appsettings.example.json")]
    [InlineData("config/site-50hz.json")]
    [InlineData("config/site-60hz.json")]
    [InlineData("config/display-rates.json")]
    public void A_shipped_settings_file_binds_and_validates(string relativePath)
    {
        var path = Path.Combine(RepositoryRoot(), relativePath);
        var bound = SettingsBuilder.Build(SettingsSources.Isolated(configFiles: [path]));

        Assert.NotEmpty(bound.Analysis.Sources.DisplayRatesHz);
    }

    [Fact]
    public void A_configured_display_list_replaces_the_default_list()
    {
        var bound = SettingsBuilder.Build(SettingsSources.Isolated(new Dictionary<string, string?> { ["Analysis:Sources:DisplayRatesHz:0"] = "75" }));

        Assert.Equal([75.0], bound.Analysis.Sources.DisplayRatesHz);
    }

    [Fact]
    public void A_misspelt_key_is_refused_with_its_name()
    {
        var sources = SettingsSources.Isolated(new Dictionary<string, string?> { ["Alerts:RaiseAfterFrame"] = "4" });

        var ex = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(sources));

        Assert.Contains("RaiseAfterFrame", ex.Message, StringComparison.Ordinal);
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
