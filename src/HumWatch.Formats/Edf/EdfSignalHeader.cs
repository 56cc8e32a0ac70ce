namespace HumWatch.Formats.Edf;

/// <summary>One signal's part of an EDF/BDF header, parsed and checked; the fields of <see cref="EdfHeader.SignalFields"/> in their order.</summary>
/// <param name="Index">Position of the signal in the header, from 0.</param>
/// <param name="ByteOffsetInRecord">Byte offset of this signal's samples inside a data record.</param>
/// <param name="IsAnnotation">True for an "EDF Annotations"/"BDF Annotations" signal (bytes carry TALs, not samples).</param>
internal sealed record EdfSignalHeader(
    int Index,
    string Label,
    string Transducer,
    string PhysicalDimension,
    double PhysicalMin,
    double PhysicalMax,
    int DigitalMin,
    int DigitalMax,
    string Prefiltering,
    int SamplesPerRecord,
    long ByteOffsetInRecord,
    bool IsAnnotation)
{
    /// <summary>Physical value per digital step (EDF gain), in the signal's own unit.</summary>
    public double Gain => (PhysicalMax - PhysicalMin) / ((double)DigitalMax - DigitalMin);
}
