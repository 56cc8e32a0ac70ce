using HumWatch.Host.Configuration;
using Xunit;

namespace HumWatch.Host.Tests.Configuration;

/// <summary>
/// Settings files the fuzzing harness (tests/HumWatch.Fuzz, docs/reliability.md "Fuzzing") recorded as crashes, each
/// refused now with a <see cref="ConfigurationException"/> naming the key.
/// </summary>
public sealed class SettingsFuzzRegressionTests
{
    [Fact]
    public void A_time_zone_that_names_a_folder_of_the_zone_database_is_an_unknown_time_zone()
    {
        // Found after 681 449 executions: "Europe" is /usr/share/zoneinfo/Europe, a folder, and .NET's lookup threw
        // SecurityException, which escaped SettingsBuilder.Build untyped.
        var path = Path.Combine(AppContext.BaseDirectory, "fixtures", "fuzz", "settings", "time_zone_is_a_folder.json");

        var ex = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(SettingsSources.Isolated(configFiles: [path])));

        Assert.Contains("Site:TimeZone \"Europe\" is not a known IANA time zone", ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("Europe")]
    [InlineData("America")]
    [InlineData("posix")]
    public void A_zone_database_folder_as_time_zone_is_reported_by_the_site_options(string name)
    {
        var errors = new SiteOptions { TimeZone = name }.Validate();

        Assert.Equal($"Site:TimeZone \"{name}\" is not a known IANA time zone (e.g. Europe/Berlin, America/New_York, UTC).", Assert.Single(errors));
    }
}
