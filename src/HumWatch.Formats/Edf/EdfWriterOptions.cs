namespace HumWatch.Formats;

/// <summary>Which flavour of file <see cref="EdfWriter"/> produces.</summary>
public enum EdfFileKind
{
    /// <summary>Plain EDF (1992): 16-bit samples, no annotation signal.</summary>
    Edf,

    /// <summary>EDF+ continuous: 16-bit samples plus an "EDF Annotations" signal (last).</summary>
    EdfPlusC,

    /// <summary>BDF: 24-bit samples, reserved field "24BIT".</summary>
    Bdf,

    /// <summary>BDF+ continuous: 24-bit samples plus a "BDF Annotations" signal (last).</summary>
    BdfPlusC,
}

/// <summary>One signal written by <see cref="EdfWriter"/>.</summary>
/// <param name="Label">Signal label, at most 16 ASCII characters.</param>
/// <param name="SamplesPerRecord">Samples of this signal in each data record (rate × record duration); at least 1.</param>
/// <param name="PhysicalMin">Physical value of <paramref name="DigitalMin"/>, in <see cref="PhysicalDimension"/> units (µV by default).</param>
/// <param name="PhysicalMax">Physical value of <paramref name="DigitalMax"/>; must differ from <paramref name="PhysicalMin"/>.</param>
/// <param name="DigitalMin">Lowest digital value; EDF ≥ −32768, BDF ≥ −8388608.</param>
/// <param name="DigitalMax">Highest digital value, above <paramref name="DigitalMin"/>; EDF ≤ 32767, BDF ≤ 8388607.</param>
public sealed record EdfWriterSignal(string Label, int SamplesPerRecord, double PhysicalMin, double PhysicalMax, int DigitalMin, int DigitalMax)
{
    /// <summary>Physical dimension written to the header. Default "uV".</summary>
    public string PhysicalDimension { get; init; } = "uV";

    /// <summary>Prefiltering text, e.g. "HP:0.1Hz LP:75Hz N:50Hz". Default empty.</summary>
    public string Prefiltering { get; init; } = "";

    /// <summary>Transducer type. Default empty.</summary>
    public string Transducer { get; init; } = "";

    /// <summary>A ±<paramref name="rangeUv"/> µV signal using the full EDF (16-bit) digital range.</summary>
    public static EdfWriterSignal Edf16(string label, int samplesPerRecord, double rangeUv = 3276.7) =>
        new(label, samplesPerRecord, -rangeUv, rangeUv, -32767, 32767);

    /// <summary>A ±<paramref name="rangeUv"/> µV signal using the full BDF (24-bit) digital range.</summary>
    public static EdfWriterSignal Bdf24(string label, int samplesPerRecord, double rangeUv = 262143.0) =>
        new(label, samplesPerRecord, -rangeUv, rangeUv, -8388607, 8388607);
}

/// <summary>Settings of a file written by <see cref="EdfWriter"/>.</summary>
public sealed class EdfWriterOptions
{
    /// <summary>File flavour. Default <see cref="EdfFileKind.EdfPlusC"/>.</summary>
    public EdfFileKind Kind { get; init; } = EdfFileKind.EdfPlusC;

    /// <summary>Duration of one data record in seconds. Default 1 s.</summary>
    public double RecordDurationSeconds { get; init; } = 1.0;

    /// <summary>Recording start, local time as written to the header. Default 2001-01-01 00:00:00.</summary>
    public DateTime StartLocal { get; init; } = new(2001, 1, 1, 0, 0, 0, DateTimeKind.Unspecified);

    /// <summary>Patient field (EDF+: "code sex birthdate name", X for unknown). Default "X X X X".</summary>
    public string PatientId { get; init; } = "X X X X";

    /// <summary>Free text after "Startdate dd-MMM-yyyy" in the recording field (EDF+: "admincode technician equipment"). Default "X X X".</summary>
    public string RecordingInfo { get; init; } = "X X X";

    /// <summary>Bytes reserved per data record for annotations (EDF+/BDF+ only). Default 120.</summary>
    public int AnnotationBytesPerRecord { get; init; } = 120;

    /// <summary>The signals, in file order (the annotation signal is added after them).</summary>
    public required IReadOnlyList<EdfWriterSignal> Signals { get; init; }
}
