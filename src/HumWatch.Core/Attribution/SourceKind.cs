namespace HumWatch.Core.Attribution;

/// <summary>What a narrowband line most likely comes from.</summary>
public enum SourceKind
{
    /// <summary>No catalogued source explains the line.</summary>
    Unidentified = 0,

    /// <summary>The power grid's fundamental or one of its harmonics.</summary>
    Mains,

    /// <summary>A display's refresh rate or one of its harmonics.</summary>
    Display,

    /// <summary>A tone the site declared (a pump, a stimulator, a ventilation drive …).</summary>
    SiteTone,
}
