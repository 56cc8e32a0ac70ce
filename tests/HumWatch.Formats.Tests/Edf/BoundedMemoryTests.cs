using System.Diagnostics;
using HumWatch.Formats.Edf;
using HumWatch.Formats.Tests.Support;
using Xunit.Abstractions;

namespace HumWatch.Formats.Tests.Edf;

public sealed class BoundedMemoryTests(ITestOutputHelper output)
{
    private const int Channels = 32;
    private const int RateHz = 256;

    [Fact]
    [Trait("Category", "Integration")]
    public void Reading_a_200_MB_edf_keeps_the_managed_heap_small()
    {
        using var folder = new TempFolder();
        var path = folder.File("big.edf");
        const long targetBytes = 200L * 1024 * 1024;
        var recordBytes = Channels * RateHz * 2;
        var records = (int)(targetBytes / recordBytes);

        var signals = new EdfWriterSignal[Channels];
        for (var c = 0; c < Channels; c++)
        {
            signals[c] = EdfWriterSignal.Edf16("E" + c, RateHz, 500);
        }

        var record = new float[Channels * RateHz];
        for (var i = 0; i < record.Length; i++)
        {
            record[i] = (float)(40 * Math.Sin(2 * Math.PI * 50 * (i % RateHz) / RateHz));
        }

        var writeWatch = Stopwatch.StartNew();
        using (var writer = new EdfWriter(path, new EdfWriterOptions { Kind = EdfFileKind.Edf, Signals = signals }))
        {
            for (var r = 0; r < records; r++)
            {
                writer.WriteRecord(record);
            }
        }

        writeWatch.Stop();
        var fileBytes = new FileInfo(path).Length;
        var baseline = GC.GetTotalMemory(forceFullCollection: true);
        var allocatedBefore = GC.GetAllocatedBytesForCurrentThread();
        var peakLive = 0L;
        long samples = 0;
        var chunks = 0;
        var watch = Stopwatch.StartNew();
        using (var reader = RecordingReader.Open(path))
        {
            foreach (var (_, chunk) in reader.ReadChunks(2.0))
            {
                samples += chunk.SamplesPerChannel;
                chunks++;
                if (chunks % 1000 == 0)
                {
                    // Live memory mid-stream, after a full collection: only what the reader still holds.
                    peakLive = Math.Max(peakLive, GC.GetTotalMemory(forceFullCollection: true) - baseline);
                }
            }
        }

        watch.Stop();
        var allocatedPerRecord = (GC.GetAllocatedBytesForCurrentThread() - allocatedBefore) / (double)records;
        var floatBytesPerRecord = Channels * RateHz * sizeof(float);
        output.WriteLine($"file {fileBytes / 1e6:0.0} MB, {records} records, written in {writeWatch.Elapsed.TotalSeconds:0.00} s, read in {watch.Elapsed.TotalSeconds:0.00} s = {fileBytes / 1e6 / watch.Elapsed.TotalSeconds:0} MB/s; live heap growth {peakLive / 1e6:0.00} MB; allocated {allocatedPerRecord:0} B/record ({floatBytesPerRecord} B of µV samples)");

        Assert.Equal((long)records * RateHz, samples);
        Assert.True(peakLive < 8_000_000, $"live heap grew by {peakLive} bytes while reading a {fileBytes} byte file");

        // The chunk's own float buffer is the only per-record allocation; no per-sample garbage.
        Assert.True(allocatedPerRecord < (floatBytesPerRecord * 1.05) + 512, $"{allocatedPerRecord} bytes allocated per record");
    }
}
