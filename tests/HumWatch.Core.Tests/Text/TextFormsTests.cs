using HumWatch.Core.Alerts;
using HumWatch.Core.Text;
using Xunit;

namespace HumWatch.Core.Tests.Text;

public sealed class TextFormsTests
{
    [Fact]
    public void Text_and_value_read_the_same_table()
    {
        var forms = new TextForms<AlertSeverity>(AlertSeverity.None, (AlertSeverity.None, "none"), (AlertSeverity.Severe, "severe"));

        Assert.Equal("severe", forms.ToText(AlertSeverity.Severe));
        Assert.True(forms.TryParse("severe", out var parsed));
        Assert.Equal(AlertSeverity.Severe, parsed);
        Assert.Equal(["none", "severe"], forms.Texts);
    }

    [Fact]
    public void A_value_outside_the_table_is_written_as_the_fallback_and_unknown_text_parses_to_false()
    {
        var forms = new TextForms<AlertSeverity>(AlertSeverity.None, (AlertSeverity.None, "none"), (AlertSeverity.Severe, "severe"));

        Assert.Equal("none", forms.ToText(AlertSeverity.Marked));
        Assert.Equal("none", forms.ToText((AlertSeverity)42));
        Assert.False(forms.TryParse("Severe", out var cased)); // texts compare ordinally
        Assert.Equal(AlertSeverity.None, cased);
        Assert.False(forms.TryParse(null, out _));
        Assert.False(forms.TryParse("", out _));
    }

    [Fact]
    public void A_table_with_a_value_or_text_twice_or_without_its_fallback_is_refused()
    {
        Assert.Throws<ArgumentException>(() => new TextForms<AlertSeverity>(AlertSeverity.None, (AlertSeverity.None, "none"), (AlertSeverity.None, "zero")));
        Assert.Throws<ArgumentException>(() => new TextForms<AlertSeverity>(AlertSeverity.None, (AlertSeverity.None, "none"), (AlertSeverity.Minor, "none")));
        Assert.Throws<ArgumentException>(() => new TextForms<AlertSeverity>(AlertSeverity.Marked, (AlertSeverity.None, "none")));
        Assert.Throws<ArgumentException>(() => new TextForms<AlertSeverity>(AlertSeverity.None, (AlertSeverity.None, " ")));
    }
}
