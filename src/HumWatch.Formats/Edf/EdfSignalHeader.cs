namespace HumWatch.Formats.Edf;

/// <summary>One signal's part of an EDF/BDF header, parsed and checked.</summary>
internal sealed class EdfSignalHeader
{
    public required int Index { get; init; }

    public required string Label { get; init; }

    public required string Transducer { get; init; }

    public required string PhysicalDimension { get; init; }

    public required double PhysicalMin { get; init; }

    public required double PhysicalMax { get; init; }

    public required int DigitalMin { get; init; }

    public required int DigitalMax { get; init; }

    public required string Prefiltering { get; init; }

    public required int SamplesPerRecord { get; init; }

    /// <summary>Byte offset of this signal's samples inside a data record.</summary>
    public required long ByteOffsetInRecord { get; init; }

    /// <summary>True for an "EDF Annotations"/"BDF Annotations" signal (bytes carry TALs, not samples).</summary>
    public required bool IsAnnotation { get; init; }

    /// <summary>Physical value per digital step (EDF gain), in the signal's own unit.</summary>
    public double Gain => (PhysicalMax - PhysicalMin) / ((double)DigitalMax - DigitalMin);
}
