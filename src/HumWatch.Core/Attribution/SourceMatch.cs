namespace HumWatch.Core.Attribution;

/// <summary>One explanation of a line: a catalogued source, which harmonic, and whether it was folded below Nyquist.</summary>
/// <param name="Kind">Source family.</param>
/// <param name="Name">Catalogue name, e.g. "mains", "display 75 Hz", or a site tone's own name. Taken from the catalogue (no allocation).</param>
/// <param name="FundamentalHz">The source's fundamental (nominal, or estimated for mains when the fundamental is seen).</param>
/// <param name="Harmonic">1 = fundamental.</param>
/// <param name="Aliased">True when Harmonic × FundamentalHz lies above Nyquist and reached the observed frequency by folding, |f − m·fs|.</param>
/// <param name="ExpectedHz">Where this explanation puts the line after folding.</param>
/// <param name="ErrorHz">Observed minus expected frequency.</param>
public readonly record struct SourceMatch(SourceKind Kind, string Name, double FundamentalHz, int Harmonic, bool Aliased, double ExpectedHz, double ErrorHz)
{
    public static SourceMatch None => new(SourceKind.Unidentified, "unidentified", 0, 0, false, 0, 0);

    public bool IsIdentified => Kind != SourceKind.Unidentified;
}
