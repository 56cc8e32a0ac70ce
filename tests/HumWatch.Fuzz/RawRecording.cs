using System.Globalization;
using System.Text;

namespace HumWatch.Fuzz;

/// <summary>
/// EDF/BDF bytes laid out field by field after the EDF spec (Kemp et al. 1992; EDF+ Kemp &amp; Olivan 2003 §2), for
/// seeds the product's writer would refuse to make (EDF+D, odd fields, reversed ranges).
/// </summary>
internal sealed class RawRecording(bool isBdf)
{
    private readonly List<byte[]> _records = [];

    public string Reserved { get; init; } = "";

    public string RecordDuration { get; init; } = "0.125";

    public string StartDate { get; init; } = "14.03.24";

    public List<RawRecordingSignal> Signals { get; } = [];

    private int BytesPerSample => isBdf ? 3 : 2;

    /// <summary>Adds records of sine samples; annotation signals get <paramref name="tals"/>(record) zero-padded.</summary>
    public void AddRecords(int count, Func<int, string>? tals = null)
    {
        for (var r = 0; r < count; r++)
        {
            var record = new List<byte>();
            foreach (var s in Signals)
            {
                var bytes = new byte[s.SamplesPerRecord * BytesPerSample];
                if (s.Label.EndsWith("Annotations", StringComparison.Ordinal))
                {
                    var text = Encoding.UTF8.GetBytes(tals?.Invoke(r) ?? "+0\u0014\u0014\0");
                    text.AsSpan(0, Math.Min(text.Length, bytes.Length)).CopyTo(bytes);
                }
                else
                {
                    for (var i = 0; i < s.SamplesPerRecord; i++)
                    {
                        var digital = (int)Math.Round(1000 * Math.Sin(2 * Math.PI * ((r * s.SamplesPerRecord) + i) / 5.12));
                        for (var b = 0; b < BytesPerSample; b++)
                        {
                            bytes[(i * BytesPerSample) + b] = (byte)(digital >> (8 * b));
                        }
                    }
                }

                record.AddRange(bytes);
            }

            _records.Add([.. record]);
        }
    }

    public byte[] ToBytes(string? recordCount = null)
    {
        var ns = Signals.Count;
        var text = new StringBuilder();
        void Put(string s, int width) => text.Append(s.PadRight(width)[..width]);
        Put(isBdf ? "\u00ffBIOSEMI" : "0", 8);
        Put("X X X X", 80);
        Put("Startdate 14-MAR-2024 X X X", 80);
        Put(StartDate, 8);
        Put("09.26.53", 8);
        Put((256 * (ns + 1)).ToString(CultureInfo.InvariantCulture), 8);
        Put(Reserved, 44);
        Put(recordCount ?? _records.Count.ToString(CultureInfo.InvariantCulture), 8);
        Put(RecordDuration, 8);
        Put(ns.ToString(CultureInfo.InvariantCulture), 4);
        foreach (var s in Signals) Put(s.Label, 16);
        foreach (var _ in Signals) Put("AgAgCl electrode", 80);
        foreach (var s in Signals) Put(s.Dimension, 8);
        foreach (var s in Signals) Put(s.PhysMin, 8);
        foreach (var s in Signals) Put(s.PhysMax, 8);
        foreach (var s in Signals) Put(s.DigMin ?? (isBdf ? "-8388608" : "-32768"), 8);
        foreach (var s in Signals) Put(s.DigMax ?? (isBdf ? "8388607" : "32767"), 8);
        foreach (var _ in Signals) Put("HP:0.1Hz LP:70Hz", 80);
        foreach (var s in Signals) Put(s.SamplesText ?? s.SamplesPerRecord.ToString(CultureInfo.InvariantCulture), 8);
        foreach (var _ in Signals) Put("", 32);

        var bytes = new List<byte>(Encoding.Latin1.GetBytes(text.ToString()));
        foreach (var r in _records)
        {
            bytes.AddRange(r);
        }

        return [.. bytes];
    }
}

internal sealed record RawRecordingSignal(string Label, int SamplesPerRecord, string Dimension = "uV", string PhysMin = "-3276.8", string PhysMax = "3276.7", string? DigMin = null, string? DigMax = null)
{
    /// <summary>The samples-per-record field as written, when it is not the plain number.</summary>
    public string? SamplesText { get; init; }
}
