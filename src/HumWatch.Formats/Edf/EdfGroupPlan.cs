using HumWatch.Core.Signals;

namespace HumWatch.Formats.Edf;

/// <summary>Precomputed per-group decoding: where each channel sits in a record and its digital → µV line.</summary>
internal sealed class EdfGroupPlan
{
    public EdfGroupPlan(StreamLayout layout, EdfSignalHeader[] signals)
    {
        Layout = layout;
        SamplesPerRecord = signals[0].SamplesPerRecord;
        ByteOffsets = new int[signals.Length];
        ScaleUv = new double[signals.Length];
        OffsetUv = new double[signals.Length];
        for (var c = 0; c < signals.Length; c++)
        {
            var s = signals[c];
            var factor = s.PhysicalDimension.Length == 0 ? 1.0 : EdfRecordingReader.UnitFactor(s.PhysicalDimension);
            var gain = s.Gain;
            ByteOffsets[c] = (int)s.ByteOffsetInRecord;
            ScaleUv[c] = gain * factor;
            OffsetUv[c] = (s.PhysicalMin - (s.DigitalMin * gain)) * factor;
        }
    }

    public StreamLayout Layout { get; }

    public int SamplesPerRecord { get; }

    public int[] ByteOffsets { get; }

    public double[] ScaleUv { get; }

    public double[] OffsetUv { get; }
}
