using System.Diagnostics;
using HumWatch.Formats.Edf;
using HumWatch.Formats.Tests.Support;

namespace HumWatch.Formats.Tests.Edf;

/// <summary>Files from our writer, read by libedf 1.23 (tests/fixtures/edf/libedf_dump.c compiled on the fly).</summary>
public sealed class EdfWriterLibedfTests(LibedfDumper dumper) : IClassFixture<LibedfDumper>
{
    [LibedfTheory]
    [InlineData(EdfFileKind.Edf)]
    [InlineData(EdfFileKind.EdfPlusC)]
    [InlineData(EdfFileKind.Bdf)]
    [InlineData(EdfFileKind.BdfPlusC)]
    [Trait("Category", "Integration")]
    public void Libedf_reads_our_files_with_the_values_and_annotations_we_wrote(EdfFileKind kind)
    {
        var executable = dumper.Executable ?? throw new InvalidOperationException(LibedfDumper.WhyUnavailable ?? "libedf_dump was not built");
        using var folder = new TempFolder();

        var bdf = kind is EdfFileKind.Bdf or EdfFileKind.BdfPlusC;
        var plus = kind is EdfFileKind.EdfPlusC or EdfFileKind.BdfPlusC;
        var path = folder.File(bdf ? "w.bdf" : "w.edf");
        var options = new EdfWriterOptions
        {
            Kind = kind,
            RecordDurationSeconds = 0.5,
            StartLocal = new DateTime(2024, 5, 6, 7, 8, 9),
            Signals = [bdf ? EdfWriterSignal.Bdf24("Fp1", 128) : EdfWriterSignal.Edf16("Fp1", 128), new EdfWriterSignal("O2", 50, -2, 2, -2048, 2047) { PhysicalDimension = "mV" }],
        };
        var written = new List<float>();
        var random = new Random(42);
        using (var writer = new EdfWriter(path, options))
        {
            if (plus)
            {
                writer.AddAnnotation(0.25, 1.5, "Tür zu");
                writer.AddAnnotation(1.0, null, "Licht aus");
            }

            var record = new float[writer.SamplesPerRecord];
            for (var r = 0; r < 3; r++)
            {
                for (var i = 0; i < record.Length; i++)
                {
                    record[i] = i < 128 ? (float)((random.NextDouble() * 3000) - 1500) : (float)((random.NextDouble() * 3.8) - 1.9);
                }

                written.AddRange(record);
                writer.WriteRecord(record);
            }
        }

        LibedfDumper.Run(executable, path, folder.Path);
        var dump = LibedfDump.Load(path + ".libedf.txt"); // libedf 1.23 edfopen_file_readonly / edfread_physical_samples
        Assert.Equal(new DateTime(2024, 5, 6, 7, 8, 9), dump.Start);
        Assert.Equal(3, dump.DataRecords);
        Assert.Equal(5_000_000, dump.RecordDuration100Ns);
        Assert.Equal(["Fp1", "O2"], dump.Signals.Select(s => s.Label));

        var fp1HalfStep = 0.5 * (options.Signals[0].PhysicalMax - options.Signals[0].PhysicalMin) / (options.Signals[0].DigitalMax - options.Signals[0].DigitalMin);
        var o2HalfStep = 0.5 * 4.0 / 4095;
        for (var r = 0; r < 3; r++)
        {
            for (var i = 0; i < 128; i++)
            {
                Assert.Equal(written[(r * 178) + i], dump.Signals[0].Values[(r * 128) + i], fp1HalfStep * 1.001);
            }

            for (var i = 0; i < 50; i++)
            {
                Assert.Equal(written[(r * 178) + 128 + i], dump.Signals[1].Values[(r * 50) + i], o2HalfStep * 1.001);
            }
        }

        if (plus)
        {
            // libedf 1.23 edf_get_annotation: onset in 100 ns units, duration as written.
            Assert.Equal([new LibedfAnnotation(2_500_000, "1.5", "Tür zu"), new LibedfAnnotation(10_000_000, null, "Licht aus")], dump.Annotations);
        }
        else
        {
            Assert.Empty(dump.Annotations);
        }
    }

}

/// <summary>Compiles tests/fixtures/edf/libedf_dump.c once per test class when gcc and libedf-dev are present.</summary>
public sealed class LibedfDumper : IDisposable
{
    private readonly TempFolder _folder = new();

    /// <summary>Why the outside reader cannot be built here, or null when gcc and Debian's libedf-dev are installed.</summary>
    public static string? WhyUnavailable =>
        File.Exists("/usr/bin/gcc") && File.Exists("/usr/include/edflib.h")
            ? null
            : "needs gcc and Debian libedf-dev 1.23 (edflib.h, -ledf) to build the outside reader";

    public LibedfDumper()
    {
        if (WhyUnavailable is null)
        {
            var exe = _folder.File("libedf_dump");
            Run("/usr/bin/gcc", $"-O2 -o {exe} {Fixtures.Edf("libedf_dump.c")} -ledf -lm", _folder.Path);
            Executable = exe;
        }
    }

    public string? Executable { get; }

    public void Dispose() => _folder.Dispose();

    public static void Run(string exe, string arguments, string workingDirectory)
    {
        using var process = Process.Start(new ProcessStartInfo(exe, arguments)
        {
            WorkingDirectory = workingDirectory,
            RedirectStandardError = true,
            RedirectStandardOutput = true,
        })!;
        var stderr = process.StandardError.ReadToEndAsync();
        _ = process.StandardOutput.ReadToEnd();
        Assert.True(process.WaitForExit(120_000), $"{exe} did not finish");
        Assert.True(process.ExitCode == 0, $"{exe} {arguments} exited {process.ExitCode}: {stderr.Result}");
    }
}

/// <summary>
/// A theory checked by libedf, skipped when <see cref="LibedfDumper.WhyUnavailable"/> says it cannot be built. Decided
/// when tests are discovered, and the reason is put into the test's name, because `dotnet test` at its default verbosity
/// prints a skipped test's name but not its skip reason.
/// </summary>
[AttributeUsage(AttributeTargets.Method)]
public sealed class LibedfTheoryAttribute : TheoryAttribute
{
    public LibedfTheoryAttribute([System.Runtime.CompilerServices.CallerMemberName] string method = "", [System.Runtime.CompilerServices.CallerFilePath] string file = "")
    {
        if (LibedfDumper.WhyUnavailable is { } reason)
        {
            Skip = reason;
            DisplayName = $"{Path.GetFileNameWithoutExtension(file)}.{method} (skipped: {reason})";
        }
    }
}
