using System.Text.RegularExpressions;
using HumWatch.Core.Alerts;
using HumWatch.Core.Attribution;
using HumWatch.Core.Faults;
using HumWatch.Core.Tests.Alerts.Support;
using Xunit;

namespace HumWatch.Core.Tests.Alerts;

public sealed class SuggestionsTests
{
    // Words that would turn advice into a verdict; the product is not a medical device and never diagnoses.
    private static readonly string[] VerdictWords = ["diagnos", "defective", "faulty", "broken", "patient has", "unsafe", "disease", "seizure", "epilep", "abnormal", "patholog"];

    // Actions a technician must not take on mains-powered or medical electrical equipment, or that read as such: opening
    // a housing, working on the building's earth, lifting a ground, disconnecting the protective conductor (IEC 60601-1
    // relies on it for protection against electric shock; common practice, no clause cited).
    private static readonly Regex UnsafeActions = new(
        @"\bopen\b|\bopening\b|\bremove the (cover|case|housing)|\bearth|\blift|\bdisconnect\b|protective (conductor|earth)|\b(ground|earth) (pin|wire|lead|conductor)|\bcheater|\bbypass|\bwiring work yourself",
        RegexOptions.IgnoreCase | RegexOptions.CultureInvariant);

    /// <summary>Every hint the code can produce: each source kind at each spread of channels, and each channel fault.</summary>
    public static TheoryData<string> EveryHint()
    {
        var data = new TheoryData<string>();
        SourceMatch[] sources =
        [
            SourceMatch.None,
            FrameBuilder.Mains(),
            FrameBuilder.Mains(3),
            FrameBuilder.Display(75, 2),
            new SourceMatch(SourceKind.SiteTone, "pump room drive", 33, 1, false, 33, 0),
        ];
        Assert.Equal(Enum.GetValues<SourceKind>().Order(), sources.Select(s => s.Kind).Distinct().Order());
        foreach (var source in sources)
        {
            foreach (var share in new[] { 0.0, 0.1, Suggestions.WidespreadShare, 1.0 })
            {
                foreach (var worst in new[] { Array.Empty<string>(), ["T3", "F7"] })
                {
                    data.Add(Suggestions.For(source, share, worst));
                }
            }
        }

        foreach (var kind in Enum.GetValues<ChannelFaultKind>())
        {
            data.Add(Suggestions.ForFault(kind, "Pz"));
        }

        return data;
    }

    private static void AssertAdvice(string text)
    {
        Assert.False(string.IsNullOrWhiteSpace(text));
        Assert.DoesNotContain('\n', text);
        Assert.True(text.Length <= 160, $"Suggestion too long ({text.Length}): {text}");
        foreach (var word in VerdictWords)
        {
            Assert.DoesNotContain(word, text, StringComparison.OrdinalIgnoreCase);
        }

        Assert.False(UnsafeActions.IsMatch(text), $"Hint names an unsafe action (\"{UnsafeActions.Match(text).Value}\"): {text}");

        // "ground" alone can be taken for the building's earth: a hint only ever means the scalp ground electrode.
        var grounds = Regex.Count(text, @"\bground\b", RegexOptions.IgnoreCase);
        var scalpGrounds = Regex.Count(text, @"scalp ground \(GND\)", RegexOptions.None);
        Assert.True(grounds == scalpGrounds, $"'ground' must be 'scalp ground (GND)': {text}");
    }

    [Theory]
    [MemberData(nameof(EveryHint))]
    public void Every_hint_is_advice_without_diagnosis_or_an_unsafe_action(string hint)
    {
        AssertAdvice(hint);
    }

    [Theory]
    [InlineData("Open the monitor and check its shielding.")]
    [InlineData("Check the building earth at the socket.")]
    [InlineData("Lift the ground of the amplifier.")]
    [InlineData("Disconnect the protective conductor of the lamp.")]
    [InlineData("Check the ground and reference electrodes.")]
    [InlineData("The patient has a diagnosis.")]
    public void The_advice_check_refuses_unsafe_or_ambiguous_wording(string text)
    {
        // The check itself must be able to fail: each of these breaks one of its rules.
        Assert.ThrowsAny<Xunit.Sdk.XunitException>(() => AssertAdvice(text));
    }

    [Fact]
    public void Mains_on_most_channels_points_to_ground_reference_and_nearby_equipment()
    {
        var text = Suggestions.For(FrameBuilder.Mains(), 0.9, ["Fp1", "Cz"]);
        AssertAdvice(text);
        Assert.Contains("scalp ground (GND)", text, StringComparison.Ordinal);
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
    public void Display_rate_says_move_that_monitor_and_cable_away_or_use_a_shielded_cable()
    {
        // "Check its shielding" reads as opening the monitor; the hint names only moving it and a shielded cable.
        var text = Suggestions.For(FrameBuilder.Display(75, 2), 1.0, ["O1"]);
        AssertAdvice(text);
        Assert.Contains("75 Hz", text, StringComparison.Ordinal);
        Assert.Contains("move that monitor", text, StringComparison.Ordinal);
        Assert.Contains("cable", text, StringComparison.Ordinal);
        Assert.Contains("farther from the subject", text, StringComparison.Ordinal);
        Assert.Contains("shielded cable", text, StringComparison.Ordinal);
        Assert.DoesNotContain("its shielding", text, StringComparison.Ordinal);
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
