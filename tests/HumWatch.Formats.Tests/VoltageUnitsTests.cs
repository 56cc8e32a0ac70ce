using System.Text;

namespace HumWatch.Formats.Tests;

public sealed class VoltageUnitsTests
{
    [Theory]
    // SI Brochure, 9th edition (BIPM 2019), table 7: milli = 1e-3, micro = 1e-6, nano = 1e-9; so 1 mV = 1000 µV, 1 V = 1e6 µV, 1 nV = 1e-3 µV.
    [InlineData("uV", 1.0)] // EDF specification (Kemp et al. 1992): "uV" is the usual physical dimension of EEG signals
    [InlineData("\u00B5V", 1.0)] // U+00B5 MICRO SIGN
    [InlineData("\u03BCV", 1.0)] // U+03BC GREEK SMALL LETTER MU, which Unicode treats as the same symbol
    [InlineData(" UV ", 1.0)]
    [InlineData("mV", 1e3)]
    [InlineData("V", 1e6)]
    [InlineData("nV", 1e-3)]
    public void Voltage_units_convert_to_microvolts_by_their_SI_prefix(string unit, double factorToUv)
    {
        Assert.True(VoltageUnits.TryGetFactorToUv(unit, out var factor));
        Assert.Equal(factorToUv, factor, 12);
    }

    [Fact]
    public void A_UTF8_micro_sign_read_byte_per_character_still_means_micro()
    {
        // µ (U+00B5) is the UTF-8 bytes C2 B5 (Unicode standard, table 3-6); read as Latin-1 they are "Âµ".
        var misread = Encoding.Latin1.GetString(Encoding.UTF8.GetBytes("\u00B5V"));

        Assert.Equal("\u00C2\u00B5V", misread);
        Assert.True(VoltageUnits.TryGetFactorToUv(misread, out var factor));
        Assert.Equal(1.0, factor);
    }

    [Theory]
    [InlineData("degC")] // a temperature channel
    [InlineData("%")] // an oxygen saturation channel
    [InlineData("mmHg")]
    [InlineData("")]
    [InlineData("kV")]
    public void Units_that_are_not_a_voltage_are_refused(string unit)
    {
        Assert.False(VoltageUnits.TryGetFactorToUv(unit, out var factor));
        Assert.True(double.IsNaN(factor));
    }
}
