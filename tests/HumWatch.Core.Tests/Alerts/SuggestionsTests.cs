using HumWatch.Core.Alerts;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Tests.Alerts.Support;
using Xunit;

namespace HumWatch.Core.Tests.Alerts;

public sealed class SuggestionsTests
{
    // Words that would turn advice into a verdict; the product is not a medical device and never diagnoses.
    private static readonly string[] VerdictWords = ["diagnos", "defective", "faulty", "broken", "patient has", "unsafe"];

    private static void AssertAdvice(string text)
    {
        Assert.False(string.IsNullOrWhiteSpace(text));
        Assert.DoesNotContain('\n', text);
        Assert.True(text.Length <= 160, $"Suggestion too long ({text.Length}): {text}");
        foreach (var word in VerdictWords)
        {
            Assert.DoesNotContain(word, text, StringComparison.OrdinalIgnoreCase);
        }
    }

    [Fact]
    public void Mains_on_most_channels_points_to_ground_reference_and_nearby_equipment()
    {
        var text = Suggestions.For(FrameBuilder.Mains(), 0.9, ["Fp1", "Cz"]);
        AssertAdvice(text);
        Assert.Contains("ground", text, StringComparison.Ordinal);
        Assert.Contains("reference", text, StringComparison.Ordinal);
        Assert.Contains("equipment", text, StringComparison.Ordinal);
        Assert.Contains("qualified staff", text, StringComparison.Ordinal);
    }

    [Fact]
    public void Mains_on_a_few_channels_names_those_electrodes_and_impedance()
    {
        var text = Suggestions.For(FrameBuilder.Mains(3), 0.1, ["T3", "F7"]);
        AssertAdvice(text);
        Assert.Contains("T3, F7", text, StringComparison.Ordinal);
        Assert.Contains("contact", text, StringComparison.Ordinal);
        Assert.Contains("impedance", text, StringComparison.Ordinal);
    }

    [Fact]
    public void Display_rate_points_to_that_monitor_cable_distance_and_shielding()
    {
        var text = Suggestions.For(FrameBuilder.Display(75, 2), 1.0, ["O1"]);
        AssertAdvice(text);
        Assert.Contains("75 Hz", text, StringComparison.Ordinal);
        Assert.Contains("monitor", text, StringComparison.Ordinal);
        Assert.Contains("cable", text, StringComparison.Ordinal);
        Assert.Contains("distance", text, StringComparison.Ordinal);
        Assert.Contains("shielding", text, StringComparison.Ordinal);
    }

    [Fact]
    public void Unidentified_line_asks_what_was_switched_on()
    {
        var text = Suggestions.For(SourceMatch.None, 0.5, []);
        AssertAdvice(text);
        Assert.Contains("switched on", text, StringComparison.Ordinal);
    }

    [Fact]
    public void Site_tone_names_the_declared_equipment()
    {
        var tone = new SourceMatch(SourceKind.SiteTone, "pump room drive", 33, 1, false, 33, 0);
        var text = Suggestions.For(tone, 0.5, ["Cz"]);
        AssertAdvice(text);
        Assert.Contains("pump room drive", text, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(ChannelFaultKind.Flat, "attached")]
    [InlineData(ChannelFaultKind.Clipped, "range")]
    [InlineData(ChannelFaultKind.NonFinite, "invalid")]
    public void Channel_faults_name_the_channel(ChannelFaultKind kind, string expected)
    {
        var text = Suggestions.ForFault(kind, "Pz");
        AssertAdvice(text);
        Assert.StartsWith("Pz", text, StringComparison.Ordinal);
        Assert.Contains(expected, text, StringComparison.Ordinal);
    }

    [Fact]
    public void Saturation_and_flat_point_to_different_causes()
    {
        // Saturation: an electrode offset too large or drifting for the amplifier, reset by preparing the electrode again;
        // flat: nothing reaches the input, or it follows a neighbour through a gel bridge. Common practice, no source.
        var clipped = Suggestions.ForFault(ChannelFaultKind.Clipped, "Pz");
        var flat = Suggestions.ForFault(ChannelFaultKind.Flat, "Pz");

        Assert.Contains("offset", clipped, StringComparison.Ordinal);
        Assert.Contains("re-gel", clipped, StringComparison.Ordinal);
        Assert.DoesNotContain("bridged", clipped, StringComparison.Ordinal);
        Assert.Contains("disconnected", flat, StringComparison.Ordinal);
        Assert.Contains("bridged", flat, StringComparison.Ordinal);
        Assert.DoesNotContain("offset", flat, StringComparison.Ordinal);
    }

    [Fact]
    public void Channel_share_outside_zero_to_one_is_rejected_naming_the_parameter()
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => Suggestions.For(FrameBuilder.Mains(), 1.5, []));
        Assert.Equal("channelShare", ex.ParamName);
    }
}
