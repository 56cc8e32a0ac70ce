using HumWatch.Host.Configuration;
using Xunit;

namespace HumWatch.Host.Tests.Configuration;

public sealed class InstanceOptionsTests
{
    [Fact]
    public void By_default_the_name_is_the_host_name_lower_cased_and_valid()
    {
        var options = SettingsBuilder.Build(SettingsSources.Isolated()).Instance;
        Assert.Equal(InstanceOptions.FromHostName(System.Net.Dns.GetHostName()), options.Name);
        Assert.Equal(options.Name.ToLowerInvariant(), options.Name);
        Assert.Equal(10, options.HeartbeatSeconds);
        Assert.Equal(60, options.StaleAfterSeconds);
        Assert.Empty(options.Validate());
    }

    [Theory]
    [InlineData("EEG-Host.lab_1", "eeg-host.lab_1")]
    [InlineData("host with spaces", "host-with-spaces")]
    [InlineData("", "humwatch")]
    public void A_host_name_becomes_an_allowed_name(string hostName, string expected)
    {
        Assert.Equal(expected, InstanceOptions.FromHostName(hostName));
        Assert.True(InstanceOptions.IsValidName(expected));
    }

    [Fact]
    public void A_64_character_host_name_is_cut_to_63()
    {
        // RFC 1035 §2.3.4: a label is 63 octets or less; a host name's first label fits.
        Assert.Equal(63, InstanceOptions.FromHostName(new string('a', 64)).Length);
    }

    [Theory]
    [InlineData("")]
    [InlineData("lab a")]
    [InlineData("lab/a")]
    [InlineData("läb")]
    public void A_bad_name_is_refused_naming_the_key(string name)
    {
        var ex = Assert.Throws<ConfigurationException>(() => SettingsBuilder.Build(SettingsSources.Isolated(new Dictionary<string, string?> { ["Instance:Name"] = name })));
        Assert.Contains("Instance:Name must be 1 to 63 characters", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_64_character_name_is_refused_and_63_are_accepted()
    {
        Assert.Single(new InstanceOptions { Name = new string('a', 64) }.Validate());
        Assert.Empty(new InstanceOptions { Name = new string('a', 63) }.Validate());
    }

    [Fact]
    public void Stale_after_must_exceed_three_heartbeats()
    {
        Assert.Empty(new InstanceOptions { Name = "a", HeartbeatSeconds = 10, StaleAfterSeconds = 30.5 }.Validate());
        var error = Assert.Single(new InstanceOptions { Name = "a", HeartbeatSeconds = 10, StaleAfterSeconds = 30 }.Validate());
        Assert.StartsWith("Instance:StaleAfterSeconds (30) must exceed 3 × Instance:HeartbeatSeconds (30 s)", error, StringComparison.Ordinal);
        Assert.Contains("Instance:HeartbeatSeconds must be between 1 and 3600", Assert.Single(new InstanceOptions { Name = "a", HeartbeatSeconds = 0.5 }.Validate()), StringComparison.Ordinal);
    }
}
