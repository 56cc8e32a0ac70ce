namespace HumWatch.Formats.Wire;

/// <summary>The header fields of protocol v1, in the order <see cref="WireHeaderReader"/> knows them.</summary>
internal enum WireField
{
    Version,
    Stream,
    Rate,
    Channels,
    Unit,
    Index,
    Start,
}

/// <summary>What one header said: each field's value, which fields were present, and the first field problem.</summary>
internal struct WireHeaderFields
{
    private int _present;

    public long Version;
    public string? VersionText;
    public string? StreamId;
    public double SampleRateHz;
    public List<string>? Channels;
    public WireUnit Unit;
    public long Index;
    public DateTimeOffset? StartUtc;
    public WireRejectReason? ErrorReason;
    public string? ErrorMessage;

    /// <summary>Marks a field present; false (and nothing changes) when it already was, i.e. the header repeats it.</summary>
    public bool TryMarkPresent(WireField field)
    {
        var bit = 1 << (int)field;
        if ((_present & bit) != 0)
        {
            return false;
        }

        _present |= bit;
        return true;
    }

    public readonly bool Has(WireField field) => (_present & (1 << (int)field)) != 0;

    /// <summary>Keeps the first field problem; the version is checked before it is reported.</summary>
    public void FieldError(WireRejectReason reason, string message)
    {
        if (ErrorReason is null)
        {
            ErrorReason = reason;
            ErrorMessage = message;
        }
    }
}
