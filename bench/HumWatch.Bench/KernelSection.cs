using System.Globalization;
using System.Runtime.Intrinsics;
using HumWatch.Bench.Float32;
using HumWatch.Core.Spectra;
using HumWatch.Core.Spectra.Fft;

namespace HumWatch.Bench;

/// <summary>
/// Where the kernel's time goes, per vector group (float64: four channels; float32: eight) and segment length: the complex
/// FFT stages alone versus the whole periodogram (gather + detrend + window, FFT, split step, scaling, scatter). Medians of
/// interleaved rounds.
/// </summary>
internal sealed class KernelSection : IBenchmarkSection
{
    private static readonly int[] Lengths = [1000, 1024, 2000, 2048, 4000, 4096, 8192];

    public string Name => "kernel";

    public string Description => "periodogram kernel per vector group (float64 ×4, float32 ×8 channels): FFT stages alone vs the whole Compute, per segment length";

    public int Run(string[] args)
    {
        const int rounds = 7;
        Console.WriteLine($"kernel: one vector group per call — float64: Vector256<double>, 4 channels; float32: Vector256<float>, 8 channels — µs per call ({(ThreadClock.IsCpuTime ? "thread CPU time" : "wall time")}), median of {rounds} rounds, both precisions interleaved; GFlop/s counts 5·M·log2(M) per complex FFT lane");
        Console.WriteLine($"{"N",6} {"radices",-16} {"precision",-10} {"FFT µs",9} {"Compute µs",11} {"µs/channel",11} {"FFT share",10} {"FFT GFlop/s",12}");
        var rng = new Random(5);
        foreach (var n in Lengths)
        {
            var m = n / 2;
            var plan = ComplexFftPlan.Get(m);
            var kernel64 = new FftPeriodogramKernel(n, 1000);
            var kernel32 = new FftPeriodogramKernel32(n, 1000);
            var samples64 = new double[8 * n];
            var samples32 = new float[8 * n];
            for (var i = 0; i < samples64.Length; i++)
            {
                samples64[i] = rng.NextDouble() - 0.5;
                samples32[i] = (float)samples64[i];
            }

            var psd64 = new double[4 * kernel64.BinCount];
            var psd32 = new float[8 * kernel32.BinCount];
            var re64 = new Vector256<double>[m];
            var im64 = new Vector256<double>[m];
            var re32 = new Vector256<float>[m];
            var im32 = new Vector256<float>[m];
            var iterations = Math.Max(20, 4_000_000 / n);
            var fft64 = new double[rounds];
            var compute64 = new double[rounds];
            var fft32 = new double[rounds];
            var compute32 = new double[rounds];
            for (var round = -1; round < rounds; round++)
            {
                // Fresh bounded values each pass (the FFT is unscaled and the loop reuses its output as input).
                for (var i = 0; i < m; i++)
                {
                    re64[i] = Vector256.Create(rng.NextDouble());
                    im64[i] = Vector256.Create(rng.NextDouble());
                    re32[i] = Vector256.Create((float)re64[i][0]);
                    im32[i] = Vector256.Create((float)im64[i][0]);
                }

                var start = ThreadClock.NowSeconds();
                for (var i = 0; i < iterations; i++)
                {
                    // Values grow (to ∞ eventually) across passes; AVX arithmetic costs the same on them (timing only).
                    plan.Forward<Vector256Lanes<double>, Vector256<double>, double>(re64, im64);
                    re64[0] = Vector256.Create(0.5);
                }

                var fft64Us = (ThreadClock.NowSeconds() - start) * 1e6 / iterations;
                start = ThreadClock.NowSeconds();
                for (var i = 0; i < iterations; i++)
                {
                    kernel64.Compute(samples64, 4, n, psd64);
                }

                var compute64Us = (ThreadClock.NowSeconds() - start) * 1e6 / iterations;
                start = ThreadClock.NowSeconds();
                for (var i = 0; i < iterations; i++)
                {
                    plan.Forward<Vector256Lanes<float>, Vector256<float>, float>(re32, im32);
                    re32[0] = Vector256.Create(0.5f);
                }

                var fft32Us = (ThreadClock.NowSeconds() - start) * 1e6 / iterations;
                start = ThreadClock.NowSeconds();
                for (var i = 0; i < iterations; i++)
                {
                    kernel32.Compute(samples32, 8, n, psd32);
                }

                var compute32Us = (ThreadClock.NowSeconds() - start) * 1e6 / iterations;
                if (round >= 0)
                {
                    fft64[round] = fft64Us;
                    compute64[round] = compute64Us;
                    fft32[round] = fft32Us;
                    compute32[round] = compute32Us;
                }
            }

            var radices = string.Join('·', plan.Radices.ToArray());
            Print(n, radices, "float64", 4, fft64, compute64);
            Print(n, radices, "float32", 8, fft32, compute32);
        }

        return 0;
    }

    private static void Print(int n, string radices, string precision, int lanes, double[] fft, double[] compute)
    {
        Array.Sort(fft);
        Array.Sort(compute);
        var m = n / 2;
        var fftMedian = fft[fft.Length / 2];
        var computeMedian = compute[compute.Length / 2];
        var flops = lanes * 5.0 * m * Math.Log2(m);
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{n,6} {radices,-16} {precision,-10} {fftMedian,9:F1} {computeMedian,11:F1} {computeMedian / lanes,11:F2} {fftMedian / computeMedian,10:P0} {flops / fftMedian / 1e3,12:F2}"));
    }
}
