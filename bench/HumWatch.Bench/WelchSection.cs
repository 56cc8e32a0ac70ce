using System.Diagnostics;
using System.Globalization;
using HumWatch.Core.Spectra;
using HumWatch.Core.Spectra.Fft;

namespace HumWatch.Bench;

/// <summary>
/// Welch throughput on one thread: 64 channels × 60 s × 1000 Hz, nperseg 4096, 50 % overlap, Hann, density, constant
/// detrend — our FFT kernel (variants), the MathNet kernel and scipy.signal.welch on the same block, interleaved rounds, medians.
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

    public string Description => "Welch PSD throughput, 64 ch × 60 s × 1000 Hz, nperseg 4096: FFT kernel vs MathNet vs scipy [--rounds N (≥ 5, default 7)]";

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
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"welch: {Channels} ch × {Seconds} s × {SampleRateHz} Hz = {(long)Channels * Samples:N0} float64 samples; nperseg {SegmentLength}, noverlap {OverlapSamples} ({segments} segments/ch); hann, density, constant detrend; {rounds} interleaved rounds, medians; one thread"));

        var bins = (SegmentLength / 2) + 1;
        Contender[] contenders =
        [
            new("fft Vector256, channels batched", new FftPeriodogramKernel(SegmentLength, SampleRateHz, true, 0), ChannelsBatched: true),
            new("fft Vector256, scratch +8 B off 64-B line", new FftPeriodogramKernel(SegmentLength, SampleRateHz, true, 8), ChannelsBatched: true),
            new("fft Vector256, segments batched", new FftPeriodogramKernel(SegmentLength, SampleRateHz, true, 0), ChannelsBatched: false),
            new("fft scalar fallback", new FftPeriodogramKernel(SegmentLength, SampleRateHz, false, 0), ChannelsBatched: true),
            new("MathNet 5.0.0 kernel", PeriodogramKernels.CreateReference(SegmentLength, SampleRateHz), ChannelsBatched: true),
        ];
        var scratch = new double[Math.Max(Channels, segments) * bins];
        var psds = new double[contenders.Length][];
        for (var i = 0; i < contenders.Length; i++)
        {
            psds[i] = new double[Channels * bins];
            RunWelch(contenders[i], data, step, segments, scratch, psds[i]); // warm-up and result
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
                scipy.RunOnce(); // warm-up
            }

            var seconds = new double[contenders.Length + 1][];
            var wallSeconds = new double[contenders.Length + 1][];
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
                    RunWelch(contenders[i], data, step, segments, scratch, psds[i]);
                    wallSeconds[i][round] = Stopwatch.GetElapsedTime(start).TotalSeconds;
                    allocated[i] = GC.GetAllocatedBytesForCurrentThread() - bytesBefore;
                    seconds[i][round] = ThreadClock.NowSeconds() - cpuStart;
                }

                if (scipy is not null)
                {
                    (seconds[contenders.Length][round], wallSeconds[contenders.Length][round]) = scipy.RunOnce();
                }
            }

            var samplesTotal = (double)Channels * Samples;
            var reference = Median(seconds[0]);
            // Throughput and ratios use thread CPU time: on a shared machine wall time mostly measures the other tenants.
            Console.WriteLine($"times: {(ThreadClock.IsCpuTime ? "thread CPU time (/proc/thread-self/schedstat; Python time.thread_time)" : "wall time (no per-thread CPU clock)")}; wall-time medians alongside");
            Console.WriteLine($"{"contender",-44} {"cpu ms",9} {"Msamples/s",11} {"cpu ÷ fft",10} {"wall ms",9} {"alloc/run",12}");
            for (var i = 0; i < contenders.Length; i++)
            {
                var m = Median(seconds[i]);
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{contenders[i].Name,-44} {m * 1e3,9:F1} {samplesTotal / m / 1e6,11:F1} {m / reference,10:F2} {Median(wallSeconds[i]) * 1e3,9:F1} {allocated[i] / 1024.0,9:F0} kB"));
            }

            if (scipy is not null)
            {
                var m = Median(seconds[contenders.Length]);
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{"scipy.signal.welch (" + scipy.Versions + ")",-44} {m * 1e3,9:F1} {samplesTotal / m / 1e6,11:F1} {m / reference,10:F2} {Median(wallSeconds[contenders.Length]) * 1e3,9:F1} {"n/a",12}"));
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"ratios: fft kernel is {Median(seconds[4]) / reference:F1}× faster than MathNet and {m / reference:F1}× faster than scipy (median time ratios)"));
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"agreement: fft vs scipy max relative error {MaxRelativeError(ReadPsd(scipyPsdPath), psds[0]):E2}, fft vs MathNet {MaxRelativeError(psds[4], psds[0]):E2} (bins above 1e-12·max)"));
            }
            else
            {
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"ratios: fft kernel is {Median(seconds[4]) / reference:F1}× faster than MathNet (median time ratio); scipy not measured"));
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"agreement: fft vs MathNet max relative error {MaxRelativeError(psds[4], psds[0]):E2} (bins above 1e-12·max)"));
            }

            return 0;
        }
        finally
        {
            File.Delete(dataPath);
            File.Delete(scipyPsdPath);
        }
    }

    /// <summary>Mean of the segment periodograms per channel into <paramref name="psd"/> (channel c at c·bins).</summary>
    private static void RunWelch(Contender contender, double[] data, int step, int segments, double[] scratch, double[] psd)
    {
        var kernel = contender.Kernel;
        var bins = kernel.BinCount;
        Array.Clear(psd);
        if (contender.ChannelsBatched)
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

    private static void Accumulate(ReadOnlySpan<double> source, Span<double> sum)
    {
        for (var i = 0; i < source.Length; i++)
        {
            sum[i] += source[i];
        }
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
                data[(c * Samples) + i] = offsetUv + (0.05 * t) + (10 * (rng.NextDouble() - 0.5))
                    + (lineUv * Math.Sin(2 * Math.PI * 50 * t)) + (c % 5 == 0 ? Math.Sin(2 * Math.PI * 60 * t) : 0);
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

    private static double MaxRelativeError(double[] expected, double[] actual)
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
            if (Math.Abs(expected[i]) > 1e-12 * max)
            {
                worst = Math.Max(worst, Math.Abs(actual[i] - expected[i]) / Math.Abs(expected[i]));
            }
        }

        return worst;
    }

    private static double Median(double[] values)
    {
        var sorted = (double[])values.Clone();
        Array.Sort(sorted);
        var mid = sorted.Length / 2;
        return sorted.Length % 2 == 1 ? sorted[mid] : 0.5 * (sorted[mid - 1] + sorted[mid]);
    }

    private sealed record Contender(string Name, IPeriodogramKernel Kernel, bool ChannelsBatched);
}
