namespace HumWatch.Formats.Wire;

/// <summary>Physical unit of the samples on the wire; the decoder converts to µV.</summary>
public enum WireUnit
{
    /// <summary>Microvolts, header value "uV" (or "µV"); scale 1.</summary>
    Microvolts,

    /// <summary>Millivolts, header value "mV"; scale 1000.</summary>
    Millivolts,

    /// <summary>Volts, header value "V"; scale 1e6.</summary>
    Volts,
}
