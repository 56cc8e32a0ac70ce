using System.Diagnostics;
using System.Globalization;
using HumWatch.Bench.Float32;
using HumWatch.Core.Spectra;
using HumWatch.Core.Spectra.Fft;

namespace HumWatch.Bench;

/// <summary>
/// Welch throughput on one thread: 64 channels × 60 s × 1000 Hz, nperseg 4096, 50 % overlap, Hann, density, constant
/// detrend — our FFT kernels in float64 and float32 (variants), the MathNet kernel and scipy.signal.welch in float64 and
/// float32 on the same block, interleaved rounds, medians.
/// </summary>
internal sealed class WelchSection : IBenchmarkSection
{
    private const int Channels = 64;
    private const int SampleRateHz = 1000;
    private const int Seconds = 60;
    private const int Samples = SampleRateHz * Seconds;
    private const int SegmentLength = 4096;
    private const int OverlapSamples = SegmentLength / 2;
    private const int DefaultRounds = 7;

    public string Name => "welch";

    public string Description => "Welch PSD throughput, 64 ch × 60 s × 1000 Hz, nperseg 4096: FFT kernels float64/float32 vs MathNet vs scipy float64/float32 [--rounds N (≥ 5, default 7)]";

    public int Run(string[] args)
    {
        var rounds = DefaultRounds;
        if (args.Length == 2 && args[0] == "--rounds" && int.TryParse(args[1], NumberStyles.None, CultureInfo.InvariantCulture, out var r) && r >= 5)
        {
            rounds = r;
        }
        else if (args.Length != 0)
        {
            Console.Error.WriteLine("welch: options are --rounds N with N ≥ 5.");
            return 2;
        }

        var data = MakeBlock();
        var step = SegmentLength - OverlapSamples;
        var segments = ((Samples - SegmentLength) / step) + 1;
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"welch: {Channels} ch × {Seconds} s × {SampleRateHz} Hz = {(long)Channels * Samples:N0} samples (float32 values, as float64 and as float32); nperseg {SegmentLength}, noverlap {OverlapSamples} ({segments} segments/ch); hann, density, constant detrend; {rounds} interleaved rounds, medians; one thread"));

        var bins = (SegmentLength / 2) + 1;
        var data32 = new float[data.Length];
        for (var i = 0; i < data.Length; i++)
        {
            data32[i] = (float)data[i];
        }

        Contender[] contenders =
        [
            new("fft64 Vector256, channels batched", new FftPeriodogramKernel(SegmentLength, SampleRateHz, true, 0), null, ChannelsBatched: true),
            new("fft64 Vector256, scratch +8 B off 64-B line", new FftPeriodogramKernel(SegmentLength, SampleRateHz, true, 8), null, ChannelsBatched: true),
            new("fft64 Vector256, segments batched", new FftPeriodogramKernel(SegmentLength, SampleRateHz, true, 0), null, ChannelsBatched: false),
            new("fft64 scalar fallback", new FftPeriodogramKernel(SegmentLength, SampleRateHz, false, 0), null, ChannelsBatched: true),
            new("MathNet 5.0.0 kernel (float64)", PeriodogramKernels.CreateReference(SegmentLength, SampleRateHz), null, ChannelsBatched: true),
            new("fft32 Vector256<float>, channels batched", null, new FftPeriodogramKernel32(SegmentLength, SampleRateHz, true, 0), ChannelsBatched: true),
            new("fft32 Vector256<float>, segments batched", null, new FftPeriodogramKernel32(SegmentLength, SampleRateHz, true, 0), ChannelsBatched: false),
            new("fft32 scalar fallback", null, new FftPeriodogramKernel32(SegmentLength, SampleRateHz, false, 0), ChannelsBatched: true),
        ];
        const int Fft64 = 0;
        const int MathNet = 4;
        const int Fft32 = 5;
        var scratch = new double[Math.Max(Channels, segments) * bins];
        var scratch32 = new float[scratch.Length];
        var psds = new double[contenders.Length][];
        var psds32 = new float[contenders.Length][];
        for (var i = 0; i < contenders.Length; i++)
        {
            psds[i] = new double[Channels * bins];
            psds32[i] = new float[Channels * bins];
            Run(contenders[i], data, data32, step, segments, scratch, scratch32, psds[i], psds32[i]); // warm-up and result
        }

        var dataPath = Path.Combine(Path.GetTempPath(), $"humwatch-bench-welch-{Environment.ProcessId}.f64");
        var scipyPsdPath = dataPath + ".psd";
        try
        {
            WriteBlock(dataPath, data);
            using var scipy = ScipyWelchProcess.TryStart(dataPath, scipyPsdPath, Channels, Samples, SampleRateHz, SegmentLength, OverlapSamples, out var reason);
            if (scipy is null)
            {
                Console.WriteLine($"scipy: not measured — {reason}.");
            }
            else
            {
                scipy.RunOnce(single: false); // warm-up
                scipy.RunOnce(single: true);
            }

            // Rows: our contenders, then scipy float64 and scipy float32.
            var scipy64 = contenders.Length;
            var scipy32 = contenders.Length + 1;
            var seconds = new double[contenders.Length + 2][];
            var wallSeconds = new double[contenders.Length + 2][];
            var allocated = new long[contenders.Length];
            for (var i = 0; i < seconds.Length; i++)
            {
                seconds[i] = new double[rounds];
                wallSeconds[i] = new double[rounds];
            }

            for (var round = 0; round < rounds; round++)
            {
                for (var i = 0; i < contenders.Length; i++)
                {
                    var cpuStart = ThreadClock.NowSeconds();
                    var bytesBefore = GC.GetAllocatedBytesForCurrentThread();
                    var start = Stopwatch.GetTimestamp();
                    Run(contenders[i], data, data32, step, segments, scratch, scratch32, psds[i], psds32[i]);
                    wallSeconds[i][round] = Stopwatch.GetElapsedTime(start).TotalSeconds;
                    allocated[i] = GC.GetAllocatedBytesForCurrentThread() - bytesBefore;
                    seconds[i][round] = ThreadClock.NowSeconds() - cpuStart;
                }

                if (scipy is not null)
                {
                    (seconds[scipy64][round], wallSeconds[scipy64][round]) = scipy.RunOnce(single: false);
                    (seconds[scipy32][round], wallSeconds[scipy32][round]) = scipy.RunOnce(single: true);
                }
            }

            var samplesTotal = (double)Channels * Samples;
            var reference = Median(seconds[Fft64]);
            var scipy64Median = scipy is null ? double.NaN : Median(seconds[scipy64]);
            var scipy32Median = scipy is null ? double.NaN : Median(seconds[scipy32]);

            // Throughput and ratios use thread CPU time: on a shared machine wall time mostly measures the other tenants.
            Console.WriteLine($"times: {(ThreadClock.IsCpuTime ? "thread CPU time (/proc/thread-self/schedstat; Python time.thread_time)" : "wall time (no per-thread CPU clock)")}; wall-time medians alongside");
            Console.WriteLine("cpu ÷ fft64: time over our float64 kernel's; scipy ÷ cpu: scipy of the same precision over this row's time (> 1 = faster than scipy)");
            Console.WriteLine($"{"contender",-56} {"cpu ms",9} {"Msamples/s",11} {"cpu ÷ fft64",12} {"scipy ÷ cpu",12} {"wall ms",9} {"alloc/run",12}");
            for (var i = 0; i < contenders.Length; i++)
            {
                var m = Median(seconds[i]);
                var scipySame = contenders[i].Kernel32 is null ? scipy64Median : scipy32Median;
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{contenders[i].Name,-56} {m * 1e3,9:F1} {samplesTotal / m / 1e6,11:F1} {m / reference,12:F2} {scipySame / m,12:F2} {Median(wallSeconds[i]) * 1e3,9:F1} {allocated[i] / 1024.0,9:F0} kB"));
            }

            if (scipy is not null)
            {
                foreach (var (row, label) in new[] { (scipy64, "float64"), (scipy32, "float32") })
                {
                    var m = Median(seconds[row]);
                    Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{"scipy.signal.welch " + label + " (" + scipy.Versions + ")",-56} {m * 1e3,9:F1} {samplesTotal / m / 1e6,11:F1} {m / reference,12:F2} {1.0,12:F2} {Median(wallSeconds[row]) * 1e3,9:F1} {"n/a",12}"));
                }

                var fft32Median = Median(seconds[Fft32]);
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"ratios float64: fft64 kernel is {Median(seconds[MathNet]) / reference:F1}× faster than MathNet and {scipy64Median / reference:F1}× faster than scipy float64 (median time ratios)"));
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"ratios float32: fft32 kernel is {scipy32Median / fft32Median:F1}× faster than scipy float32 and {reference / fft32Median:F2}× the speed of our fft64 kernel; scipy float32 is {scipy64Median / scipy32Median:F2}× the speed of scipy float64"));
                var scipyPsd = ReadPsd(scipyPsdPath);
                var scipyPsd32 = ReadPsd32(scipyPsdPath + "32");
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"agreement float64: fft64 vs scipy max relative error {MaxRelativeError(scipyPsd, psds[Fft64], 1e-12):E2}, fft64 vs MathNet {MaxRelativeError(psds[MathNet], psds[Fft64], 1e-12):E2} (bins above 1e-12·max)"));
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"agreement float32 vs scipy float64: fft32 {MaxRelativeError(scipyPsd, Widen(psds32[Fft32]), 1e-6):E2}, scipy float32 {MaxRelativeError(scipyPsd, Widen(scipyPsd32), 1e-6):E2}; fft32 vs scipy float32 {MaxRelativeError(Widen(scipyPsd32), Widen(psds32[Fft32]), 1e-6):E2} (bins above 1e-6·max)"));
            }
            else
            {
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"ratios: fft64 kernel is {Median(seconds[MathNet]) / reference:F1}× faster than MathNet, fft32 is {reference / Median(seconds[Fft32]):F2}× the speed of fft64 (median time ratios); scipy not measured"));
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"agreement: fft64 vs MathNet max relative error {MaxRelativeError(psds[MathNet], psds[Fft64], 1e-12):E2} (bins above 1e-12·max), fft32 vs MathNet {MaxRelativeError(psds[MathNet], Widen(psds32[Fft32]), 1e-6):E2} (bins above 1e-6·max)"));
            }

            return 0;
        }
        finally
        {
            File.Delete(dataPath);
            File.Delete(scipyPsdPath);
            File.Delete(scipyPsdPath + "32");
        }
    }

    private static void Run(Contender contender, double[] data, float[] data32, int step, int segments, double[] scratch, float[] scratch32, double[] psd, float[] psd32)
    {
        if (contender.Kernel is not null)
        {
            RunWelch(contender.Kernel, contender.ChannelsBatched, data, step, segments, scratch, psd);
        }
        else
        {
            RunWelch32(contender.Kernel32!, contender.ChannelsBatched, data32, step, segments, scratch32, psd32);
        }
    }

    /// <summary>Mean of the segment periodograms per channel into <paramref name="psd"/> (channel c at c·bins).</summary>
    private static void RunWelch(IPeriodogramKernel kernel, bool channelsBatched, double[] data, int step, int segments, double[] scratch, double[] psd)
    {
        var bins = kernel.BinCount;
        Array.Clear(psd);
        if (channelsBatched)
        {
            // As the streaming path does: one call per segment position, all channels at once (stride = channel length).
            for (var s = 0; s < segments; s++)
            {
                kernel.Compute(data.AsSpan(s * step), Channels, Samples, scratch);
                Accumulate(scratch.AsSpan(0, Channels * bins), psd);
            }
        }
        else
        {
            // As WelchPsd does: one call per channel, its overlapping segments as the batch (stride = step).
            for (var c = 0; c < Channels; c++)
            {
                kernel.Compute(data.AsSpan(c * Samples, Samples), segments, step, scratch);
                var row = psd.AsSpan(c * bins, bins);
                for (var s = 0; s < segments; s++)
                {
                    Accumulate(scratch.AsSpan(s * bins, bins), row);
                }
            }
        }

        var inverse = 1.0 / segments;
        for (var i = 0; i < psd.Length; i++)
        {
            psd[i] *= inverse;
        }
    }

    /// <summary>The float32 twin of <see cref="RunWelch"/>: float32 samples, periodograms and mean.</summary>
    private static void RunWelch32(IPeriodogramKernel32 kernel, bool channelsBatched, float[] data, int step, int segments, float[] scratch, float[] psd)
    {
        var bins = kernel.BinCount;
        Array.Clear(psd);
        if (channelsBatched)
        {
            for (var s = 0; s < segments; s++)
            {
                kernel.Compute(data.AsSpan(s * step), Channels, Samples, scratch);
                Accumulate(scratch.AsSpan(0, Channels * bins), psd);
            }
        }
        else
        {
            for (var c = 0; c < Channels; c++)
            {
                kernel.Compute(data.AsSpan(c * Samples, Samples), segments, step, scratch);
                var row = psd.AsSpan(c * bins, bins);
                for (var s = 0; s < segments; s++)
                {
                    Accumulate(scratch.AsSpan(s * bins, bins), row);
                }
            }
        }

        var inverse = 1.0f / segments;
        for (var i = 0; i < psd.Length; i++)
        {
            psd[i] *= inverse;
        }
    }

    private static void Accumulate(ReadOnlySpan<double> source, Span<double> sum)
    {
        for (var i = 0; i < source.Length; i++)
        {
            sum[i] += source[i];
        }
    }

    private static void Accumulate(ReadOnlySpan<float> source, Span<float> sum)
    {
        for (var i = 0; i < source.Length; i++)
        {
            sum[i] += source[i];
        }
    }

    private static double[] Widen(float[] values)
    {
        var wide = new double[values.Length];
        for (var i = 0; i < values.Length; i++)
        {
            wide[i] = values[i];
        }

        return wide;
    }

    /// <summary>Invented EEG-like block: seeded noise, per-channel offset and drift, a 50 Hz line and a 60 Hz line on some channels.</summary>
    private static double[] MakeBlock()
    {
        var rng = new Random(20240611);
        var data = new double[Channels * Samples];
        for (var c = 0; c < Channels; c++)
        {
            var offsetUv = 20 * (rng.NextDouble() - 0.5);
            var lineUv = c % 3 == 0 ? 4.0 : 0.5;
            for (var i = 0; i < Samples; i++)
            {
                var t = (double)i / SampleRateHz;
                // Rounded to float32 (recordings carry float32 µV), so the float64 and float32 contenders see the same values.
                data[(c * Samples) + i] = (float)(offsetUv + (0.05 * t) + (10 * (rng.NextDouble() - 0.5))
                    + (lineUv * Math.Sin(2 * Math.PI * 50 * t)) + (c % 5 == 0 ? Math.Sin(2 * Math.PI * 60 * t) : 0));
            }
        }

        return data;
    }

    private static void WriteBlock(string path, double[] data)
    {
        using var file = File.Create(path);
        var bytes = new byte[8 * 4096];
        for (var i = 0; i < data.Length; i += 4096)
        {
            var count = Math.Min(4096, data.Length - i);
            for (var j = 0; j < count; j++)
            {
                BitConverter.TryWriteBytes(bytes.AsSpan(8 * j), data[i + j]);
            }

            file.Write(bytes, 0, 8 * count);
        }
    }

    private static double[] ReadPsd(string path)
    {
        var bytes = File.ReadAllBytes(path);
        var psd = new double[bytes.Length / 8];
        for (var i = 0; i < psd.Length; i++)
        {
            psd[i] = BitConverter.ToDouble(bytes, 8 * i);
        }

        return psd;
    }

    private static double MaxRelativeError(double[] expected, double[] actual, double floorFraction)
    {
        if (expected.Length != actual.Length)
        {
            return double.NaN;
        }

        double max = 0;
        foreach (var v in expected)
        {
            max = Math.Max(max, Math.Abs(v));
        }

        double worst = 0;
        for (var i = 0; i < expected.Length; i++)
        {
            if (Math.Abs(expected[i]) > floorFraction * max)
            {
                worst = Math.Max(worst, Math.Abs(actual[i] - expected[i]) / Math.Abs(expected[i]));
            }
        }

        return worst;
    }

    private static float[] ReadPsd32(string path)
    {
        var bytes = File.ReadAllBytes(path);
        var psd = new float[bytes.Length / 4];
        for (var i = 0; i < psd.Length; i++)
        {
            psd[i] = BitConverter.ToSingle(bytes, 4 * i);
        }

        return psd;
    }

    private static double Median(double[] values)
    {
        var sorted = (double[])values.Clone();
        Array.Sort(sorted);
        var mid = sorted.Length / 2;
        return sorted.Length % 2 == 1 ? sorted[mid] : 0.5 * (sorted[mid - 1] + sorted[mid]);
    }

    /// <summary>One row: a float64 kernel (<paramref name="Kernel"/>) or a float32 one (<paramref name="Kernel32"/>).</summary>
    private sealed record Contender(string Name, IPeriodogramKernel? Kernel, IPeriodogramKernel32? Kernel32, bool ChannelsBatched);
}
