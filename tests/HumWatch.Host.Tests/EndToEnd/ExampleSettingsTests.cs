using HumWatch.Host.Composition;
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
        var configuration = HumWatchHost.BuildConfiguration(new HumWatchHostSettings
        {
            ConfigFiles = [path],
            ReadWorkingDirectorySettings = false,
            EnvironmentPrefix = null,
        });

        var bound = HumWatchHost.BoundOptions.From(configuration);

        Assert.NotEmpty(bound.Analysis.Sources.DisplayRatesHz);
    }

    [Fact]
    public void A_configured_display_list_replaces_the_default_list()
    {
        var configuration = HumWatchHost.BuildConfiguration(new HumWatchHostSettings
        {
            ReadWorkingDirectorySettings = false,
            EnvironmentPrefix = null,
            Overrides = new Dictionary<string, string?> { ["Analysis:Sources:DisplayRatesHz:0"] = "75" },
        });

        var bound = HumWatchHost.BoundOptions.From(configuration);

        Assert.Equal([75.0], bound.Analysis.Sources.DisplayRatesHz);
    }

    [Fact]
    public void A_misspelt_key_is_refused_with_its_name()
    {
        var configuration = HumWatchHost.BuildConfiguration(new HumWatchHostSettings
        {
            ReadWorkingDirectorySettings = false,
            EnvironmentPrefix = null,
            Overrides = new Dictionary<string, string?> { ["Alerts:RaiseAfterFrame"] = "4" },
        });

        var ex = Assert.Throws<HumWatch.Host.Configuration.ConfigurationException>(() => HumWatchHost.BoundOptions.From(configuration));

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
