using System.Globalization;
using System.Runtime.Intrinsics;
using HumWatch.Core.Spectra;
using HumWatch.Core.Spectra.Fft;

namespace HumWatch.Bench;

/// <summary>
/// Where the kernel's time goes, per group of four channels and segment length: the complex FFT stages alone versus the
/// whole periodogram (gather + detrend + window, FFT, split step, scaling, scatter). Medians of interleaved rounds.
/// </summary>
internal sealed class KernelSection : IBenchmarkSection
{
    private static readonly int[] Lengths = [1000, 1024, 2000, 2048, 4000, 4096, 8192];

    public string Name => "kernel";

    public string Description => "periodogram kernel per 4-channel group: FFT stages alone vs the whole Compute, per segment length";

    public int Run(string[] args)
    {
        const int rounds = 7;
        const int channels = 4;
        Console.WriteLine($"kernel: one Vector256 group (4 channels), µs per call ({(ThreadClock.IsCpuTime ? "thread CPU time" : "wall time")}), median of {rounds} rounds; GFlop/s counts 5·M·log2(M) per complex FFT lane");
        Console.WriteLine($"{"N",6} {"radices",-16} {"FFT µs",9} {"Compute µs",11} {"FFT share",10} {"FFT GFlop/s",12}");
        var rng = new Random(5);
        foreach (var n in Lengths)
        {
            var kernel = new FftPeriodogramKernel(n, 1000);
            var samples = new double[channels * n];
            for (var i = 0; i < samples.Length; i++)
            {
                samples[i] = rng.NextDouble() - 0.5;
            }

            var psd = new double[channels * kernel.BinCount];
            var plan = ComplexFftPlan.Get(n / 2);
            var re = new Vector256<double>[n / 2];
            var im = new Vector256<double>[n / 2];
            for (var i = 0; i < re.Length; i++)
            {
                re[i] = Vector256.Create(rng.NextDouble());
                im[i] = Vector256.Create(rng.NextDouble());
            }

            var iterations = Math.Max(20, 4_000_000 / n);
            var fft = new double[rounds];
            var compute = new double[rounds];
            for (var round = -1; round < rounds; round++)
            {
                var start = ThreadClock.NowSeconds();
                for (var i = 0; i < iterations; i++)
                {
                    // Data grows by a bounded factor per pass; the loop reuses it as is (timing only).
                    plan.Forward<Vector256Lanes, Vector256<double>, double>(re, im);
                    re[0] = Vector256.Create(0.5);
                }

                var fftUs = (ThreadClock.NowSeconds() - start) * 1e6 / iterations;
                start = ThreadClock.NowSeconds();
                for (var i = 0; i < iterations; i++)
                {
                    kernel.Compute(samples, channels, n, psd);
                }

                var computeUs = (ThreadClock.NowSeconds() - start) * 1e6 / iterations;
                if (round >= 0)
                {
                    fft[round] = fftUs;
                    compute[round] = computeUs;
                }

                // Keep values bounded between passes (the FFT is unscaled).
                for (var i = 0; i < re.Length; i++)
                {
                    re[i] = Vector256.Create(rng.NextDouble());
                    im[i] = Vector256.Create(rng.NextDouble());
                }
            }

            Array.Sort(fft);
            Array.Sort(compute);
            var m = n / 2;
            var fftMedian = fft[rounds / 2];
            var computeMedian = compute[rounds / 2];
            var flops = 4 * 5.0 * m * Math.Log2(m);
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{n,6} {string.Join('·', plan.Radices.ToArray()),-16} {fftMedian,9:F1} {computeMedian,11:F1} {fftMedian / computeMedian,10:P0} {flops / fftMedian / 1e3,12:F2}"));
        }

        return 0;
    }
}
