using HumWatch.Core.Attribution;
using HumWatch.Core.Lines;
using Xunit;

namespace HumWatch.Core.Tests.Attribution;

public sealed class LineAttributorTests
{
    private const double BinHz = 0.25;

    // Folding f_a = |f − k·fs|, k = round(f/fs) (sampling theorem, common practice; values computed).
    [Theory]
    [InlineData(150, 250, 100)]
    [InlineData(200, 250, 50)]
    [InlineData(250, 250, 0)]
    [InlineData(300, 250, 50)]
    [InlineData(350, 250, 100)]
    [InlineData(180, 250, 70)]
    [InlineData(240, 250, 10)]
    [InlineData(150, 256, 106)]
    [InlineData(200, 256, 56)]
    [InlineData(250, 256, 6)]
    [InlineData(300, 256, 44)]
    [InlineData(360, 256, 104)]
    [InlineData(120, 200, 80)]
    [InlineData(240, 200, 40)]
    [InlineData(300, 512, 212)]
    [InlineData(420, 500, 80)]
    [InlineData(144, 256, 112)]
    public void Fold_matches_the_published_alias_table(double frequencyHz, double sampleRateHz, double expectedHz)
    {
        Assert.Equal(expectedHz, LineAttributor.Fold(frequencyHz, sampleRateHz), 9);
    }

    [Fact]
    public void Aliased_mains_harmonics_at_256_Hz_are_named_with_their_harmonic_and_alias_flag()
    {
        var attributor = new LineAttributor(new SourceCatalogOptions(), 256, BinHz);
        var lines = Lines((50.02, 10), (106, 2), (56, 1.5), (6, 1), (44, 0.8));

        var mains = attributor.Attribute(lines);

        Assert.Equal(50.02, mains, 9);

        // Folding f_a = |f − k·fs| (computed): fs = 256: 150 → 106, 200 → 56, 250 → 6, 300 → 44 Hz.
        AssertSource(lines[0], SourceKind.Mains, 1, aliased: false);
        AssertSource(lines[1], SourceKind.Mains, 3, aliased: true);
        AssertSource(lines[2], SourceKind.Mains, 4, aliased: true);
        AssertSource(lines[3], SourceKind.Mains, 5, aliased: true);
        AssertSource(lines[4], SourceKind.Mains, 6, aliased: true);
        Assert.Equal(Fold(3 * 50.02, 256), lines[1].Source.ExpectedHz, 9);
    }

    [Fact]
    public void At_250_Hz_the_fundamental_lists_neither_its_own_aliased_harmonics_nor_a_display_whose_fundamental_is_absent()
    {
        var attributor = new LineAttributor(new SourceCatalogOptions { MainsHz = 50 }, 250, BinHz);
        var lines = Lines((50, 10));

        attributor.Attribute(lines);

        // Folding f_a = |f − k·fs| (sampling theorem; computed): at fs = 250, 200 → 50 and 300 → 50 Hz land on the
        // fundamental, and a 100 Hz display's 2nd harmonic (200 Hz) too; but 4× and 6× mains are the source already
        // named, and a 100 Hz display would show its in-band fundamental, which is absent.
        AssertSource(lines[0], SourceKind.Mains, 1, aliased: false);
        Assert.Empty(lines[0].AlsoPossible.ToArray());
    }

    [Fact]
    public void Line_at_150_Hz_is_mains_when_50_Hz_is_present_and_75_Hz_is_not()
    {
        var catalog = new SourceCatalogOptions { DisplayRatesHz = [75] };
        var attributor = new LineAttributor(catalog, 500, BinHz);
        var lines = Lines((50, 5), (150, 2));

        attributor.Attribute(lines);

        // 150 Hz = mains ×3 and display 75 Hz ×2 (EN 50160 50 Hz grid; VESA DMT 75 Hz); at fs = 500 also mains ×7
        // folded from 350 Hz (f_a = |f − k·fs|, computed). Neither is listed: the display's in-band 75 Hz fundamental is
        // absent, and the 7th is the source already named.
        AssertSource(lines[1], SourceKind.Mains, 3, aliased: false);
        Assert.Empty(lines[1].AlsoPossible.ToArray());
    }

    [Fact]
    public void Line_at_150_Hz_keeps_the_75_Hz_display_as_an_alternative_when_both_fundamentals_are_present()
    {
        var catalog = new SourceCatalogOptions { DisplayRatesHz = [75] };
        var attributor = new LineAttributor(catalog, 500, BinHz);
        var lines = Lines((50, 5), (75.01, 2), (150, 2));

        attributor.Attribute(lines);

        // 3 × 50 = 2 × 75 = 150 Hz (EN 50160 50 Hz grid; VESA DMT 75 Hz): the frame alone cannot tell them apart.
        AssertSource(lines[2], SourceKind.Mains, 3, aliased: false);
        Assert.Contains(lines[2].AlsoPossible.ToArray(), m => m.Kind == SourceKind.Display && m.Harmonic == 2);
    }

    [Fact]
    public void Line_at_150_Hz_is_the_display_when_75_Hz_is_present_and_50_Hz_is_not()
    {
        var catalog = new SourceCatalogOptions { DisplayRatesHz = [75] };
        var attributor = new LineAttributor(catalog, 500, BinHz);
        var lines = Lines((75.02, 5), (150.04, 2));

        var mains = attributor.Attribute(lines);

        Assert.True(double.IsNaN(mains));
        AssertSource(lines[1], SourceKind.Display, 2, aliased: false);
        Assert.Equal("display 75 Hz", lines[1].Source.Name);

        // Mains ×3 would need its 50 Hz fundamental, which is absent.
        Assert.DoesNotContain(lines[1].AlsoPossible.ToArray(), m => m.Kind == SourceKind.Mains);
    }

    [Fact]
    public void At_a_60_Hz_site_60_Hz_is_mains_with_the_60_Hz_display_also_possible()
    {
        var catalog = new SourceCatalogOptions { MainsHz = 60 };
        var attributor = new LineAttributor(catalog, 500, BinHz);
        var lines = Lines((60.01, 5), (120.02, 1), (180.03, 2));

        var mains = attributor.Attribute(lines);

        Assert.Equal(60.01, mains, 9);
        AssertSource(lines[0], SourceKind.Mains, 1, aliased: false);
        Assert.Contains(lines[0].AlsoPossible.ToArray(), m => m.Kind == SourceKind.Display && m.Name == "display 60 Hz");

        // 120 Hz: mains ×2 explains the frame's other lines too; the 120 Hz display is kept as an alternative.
        AssertSource(lines[1], SourceKind.Mains, 2, aliased: false);
        Assert.Contains(lines[1].AlsoPossible.ToArray(), m => m.Kind == SourceKind.Display && m.Name == "display 120 Hz" && m.Harmonic == 1);
        AssertSource(lines[2], SourceKind.Mains, 3, aliased: false);
    }

    [Fact]
    public void Line_that_no_source_explains_is_unidentified()
    {
        var attributor = new LineAttributor(new SourceCatalogOptions(), 500, BinHz);
        var lines = Lines((33.3, 3));

        attributor.Attribute(lines);

        Assert.False(lines[0].Source.IsIdentified);
        Assert.Equal(SourceKind.Unidentified, lines[0].Source.Kind);
        Assert.Empty(lines[0].AlsoPossible.ToArray());
    }

    [Theory]
    [InlineData(49.5, true)] // EN 50160: 50 Hz ±1 % → 49.5 Hz edge
    [InlineData(50.5, true)] // EN 50160: 50 Hz ±1 % → 50.5 Hz edge
    [InlineData(49.3, false)] // outside ±1 % plus half a bin of resolution
    [InlineData(50.7, false)]
    public void Mains_fundamental_window_is_EN_50160_plus_or_minus_one_percent(double frequencyHz, bool isMains)
    {
        // fs = 1000 Hz so that no harmonic up to the 10th folds back near 50 Hz.
        var catalog = new SourceCatalogOptions { DisplayRatesHz = [] };
        var attributor = new LineAttributor(catalog, 1000, BinHz);
        var lines = Lines((frequencyHz, 4));

        var mains = attributor.Attribute(lines);

        Assert.Equal(isMains, lines[0].Source.Kind == SourceKind.Mains);
        Assert.Equal(isMains, !double.IsNaN(mains));
    }

    [Fact]
    public void Harmonics_follow_the_estimated_fundamental_in_a_tight_window()
    {
        var attributor = new LineAttributor(new SourceCatalogOptions { DisplayRatesHz = [] }, 1000, BinHz);

        // Grid at 49.8 Hz: the 5th harmonic is at 249.0 Hz; 250.0 would fit the nominal ±1 % window but not h·f̂₀.
        var lines = Lines((49.8, 5), (249.0, 1), (250.0, 1));

        attributor.Attribute(lines);

        AssertSource(lines[1], SourceKind.Mains, 5, aliased: false);
        Assert.Equal(249.0, lines[1].Source.ExpectedHz, 6);
        Assert.False(lines[2].Source.IsIdentified);
    }

    [Fact]
    public void Site_tone_is_named_by_the_site()
    {
        var catalog = new SourceCatalogOptions { SiteTones = [new SiteToneOptions { Name = "pump room drive", FrequencyHz = 16.7, MaxHarmonic = 2 }] };
        var attributor = new LineAttributor(catalog, 500, BinHz);
        var lines = Lines((16.7, 3), (33.4, 1));

        attributor.Attribute(lines);

        Assert.Equal(SourceKind.SiteTone, lines[0].Source.Kind);
        Assert.Equal("pump room drive", lines[0].Source.Name);
        Assert.Equal(2, lines[1].Source.Harmonic);
    }

    [Fact]
    public void Attribute_allocates_nothing_once_warm()
    {
        var attributor = new LineAttributor(new SourceCatalogOptions(), 500, BinHz);
        var lines = Lines((50.01, 5), (100.02, 1), (150.03, 2), (75, 1), (33.3, 1));
        attributor.Attribute(lines);

        var before = GC.GetAllocatedBytesForCurrentThread();
        attributor.Attribute(lines);

        Assert.Equal(0, GC.GetAllocatedBytesForCurrentThread() - before);
    }

    private static double Fold(double f, double fs) => Math.Abs(f - (Math.Round(f / fs) * fs));

    private static FrameLine[] Lines(params (double FrequencyHz, double AmplitudeUvRms)[] lines) =>
        lines.Select(l => new FrameLine { FrequencyHz = l.FrequencyHz, AmplitudeUvRms = l.AmplitudeUvRms }).ToArray();

    private static void AssertSource(FrameLine line, SourceKind kind, int harmonic, bool aliased)
    {
        Assert.Equal(kind, line.Source.Kind);
        Assert.Equal(harmonic, line.Source.Harmonic);
        Assert.Equal(aliased, line.Source.Aliased);
    }
}
