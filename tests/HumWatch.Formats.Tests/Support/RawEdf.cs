using System.Globalization;
using System.Text;

namespace HumWatch.Formats.Tests.Support;

/// <summary>
/// Writes EDF bytes field by field straight from the EDF spec layout (Kemp et al. 1992; EDF+ 2003 §2), independent
/// of the product's writer, so header parsing is checked against the spec rather than against ourselves.
/// </summary>
public sealed class RawEdf
{
    public string Reserved { get; init; } = "";

    public string RecordDuration { get; init; } = "1";

    public string StartDate { get; init; } = "14.03.24";

    public string StartTime { get; init; } = "09.26.53";

    public List<RawSignal> Signals { get; } = [];

    public List<byte[]> Records { get; } = [];

    public byte[] ToBytes(string? recordCount = null)
    {
        var ns = Signals.Count;
        var sb = new StringBuilder();
        void Put(string s, int width) => sb.Append(s.PadRight(width)[..width]);
        Put("0", 8);
        Put("X X X X", 80);
        Put("Startdate 14-MAR-2024 X X X", 80);
        Put(StartDate, 8);
        Put(StartTime, 8);
        Put((256 * (ns + 1)).ToString(CultureInfo.InvariantCulture), 8);
        Put(Reserved, 44);
        Put(recordCount ?? Records.Count.ToString(CultureInfo.InvariantCulture), 8);
        Put(RecordDuration, 8);
        Put(ns.ToString(CultureInfo.InvariantCulture), 4);
        foreach (var s in Signals) Put(s.Label, 16);
        foreach (var _ in Signals) Put("", 80);
        foreach (var s in Signals) Put(s.Dimension, 8);
        foreach (var s in Signals) Put(s.PhysMin, 8);
        foreach (var s in Signals) Put(s.PhysMax, 8);
        foreach (var s in Signals) Put(s.DigMin, 8);
        foreach (var s in Signals) Put(s.DigMax, 8);
        foreach (var _ in Signals) Put("", 80);
        foreach (var s in Signals) Put(s.SamplesPerRecord.ToString(CultureInfo.InvariantCulture), 8);
        foreach (var _ in Signals) Put("", 32);

        var header = Encoding.ASCII.GetBytes(sb.ToString());
        Assert.Equal(256 * (ns + 1), header.Length);
        using var ms = new MemoryStream();
        ms.Write(header);
        foreach (var r in Records)
        {
            ms.Write(r);
        }

        return ms.ToArray();
    }

    /// <summary>One record: 16-bit samples per EEG signal, then an annotation signal filled with <paramref name="tals"/> (zero-padded).</summary>
    public byte[] Record(short[][] samples, string tals)
    {
        var bytes = new List<byte>();
        var eeg = 0;
        foreach (var s in Signals)
        {
            if (s.Label == "EDF Annotations")
            {
                var ann = new byte[s.SamplesPerRecord * 2];
                var text = Encoding.UTF8.GetBytes(tals);
                Assert.True(text.Length <= ann.Length);
                text.CopyTo(ann, 0);
                bytes.AddRange(ann);
            }
            else
            {
                var values = samples[eeg++];
                Assert.Equal(s.SamplesPerRecord, values.Length);
                foreach (var v in values)
                {
                    bytes.Add((byte)v);
                    bytes.Add((byte)(v >> 8));
                }
            }
        }

        return [.. bytes];
    }
}

public sealed record RawSignal(string Label, int SamplesPerRecord, string Dimension = "uV", string PhysMin = "-3276.8", string PhysMax = "3276.7", string DigMin = "-32768", string DigMax = "32767")
{
    public static RawSignal Annotations(int samples = 30) => new("EDF Annotations", samples, "", "-1", "1", "-32768", "32767");
}
