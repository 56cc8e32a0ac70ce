using System.Globalization;

namespace HumWatch.SoakHarness;

/// <summary>
/// `dotnet run -c Release --project tests/HumWatch.SoakHarness -- [--minutes M] [--rooms R] [--channels C] [--rate HZ]
/// [--speed X] [--sample-seconds S] [--warm-up-minutes W] [--seed N] [--work DIR]`: the soak of docs/reliability.md.
/// Exit code 0 when every check passed, 1 when one failed, 2 on bad arguments.
/// </summary>
internal static class Program
{
    public static async Task<int> Main(string[] args)
    {
        SoakOptions options;
        try
        {
            options = Parse(args);
        }
        catch (Exception ex) when (ex is FormatException or ArgumentException or OverflowException)
        {
            await Console.Error.WriteLineAsync($"soak harness: {ex.Message}");
            await Console.Error.WriteLineAsync("usage: --minutes M (120) --rooms R (50) --channels C (32) --rate HZ (500) --speed X (1) --sample-seconds S (30) --warm-up-minutes W (20) --seed N (17) --work DIR (a new temp folder)");
            return 2;
        }

        var work = options.WorkFolder ?? Path.Combine(Path.GetTempPath(), "humwatch-soak-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(work);
        var curveCsv = Path.Combine(work, "soak-curve.csv");
        Console.Out.WriteLine($"soak harness: {options.Rooms} rooms × {options.Channels} ch × {options.SampleRateHz} Hz for {options.Minutes:0.#} min at speed {options.Speed:0.##}; work folder {work}");
        var outcome = await new SoakRun(options, Console.Out).PlayAsync(Path.Combine(work, "data"), curveCsv, CancellationToken.None);
        var report = SoakReport.Check(options, outcome);
        var curveSvg = Path.Combine(work, "soak-curve.svg");
        await File.WriteAllTextAsync(curveSvg, SoakCurve.Svg(outcome.Samples, options.WarmUpMinutes, $"humwatch run, {options.Rooms} rooms × {options.Channels} ch × {options.SampleRateHz} Hz, speed {options.Speed:0.##}"));
        Console.Out.Write(report.ToString());
        Console.Out.WriteLine($"curve: {curveCsv} and {curveSvg}");
        return report.Passed ? 0 : 1;
    }

    private static SoakOptions Parse(string[] args)
    {
        var options = new SoakOptions();
        for (var i = 0; i < args.Length; i++)
        {
            var value = i + 1 < args.Length ? args[i + 1] : throw new ArgumentException($"{args[i]} needs a value.");
            options = args[i] switch
            {
                "--minutes" => options with { Minutes = Number(value) },
                "--rooms" => options with { Rooms = int.Parse(value, CultureInfo.InvariantCulture) },
                "--channels" => options with { Channels = int.Parse(value, CultureInfo.InvariantCulture) },
                "--rate" => options with { SampleRateHz = int.Parse(value, CultureInfo.InvariantCulture) },
                "--speed" => options with { Speed = Number(value) },
                "--sample-seconds" => options with { SampleSeconds = Number(value) },
                "--warm-up-minutes" => options with { WarmUpMinutes = Number(value) },
                "--seed" => options with { Seed = int.Parse(value, CultureInfo.InvariantCulture) },
                "--work" => options with { WorkFolder = value },
                _ => throw new ArgumentException($"unknown option {args[i]}."),
            };
            i++;
        }

        if (!(options.Minutes > 0) || options.Rooms < 1 || options.Channels < 1 || options.SampleRateHz < 1 || !(options.Speed > 0) || !(options.SampleSeconds > 0) || options.WarmUpMinutes < 0)
        {
            throw new ArgumentException("--minutes, --speed and --sample-seconds must be above 0, --rooms, --channels and --rate at least 1, --warm-up-minutes not negative.");
        }

        return options;
    }

    private static double Number(string value) => double.Parse(value, NumberStyles.Float, CultureInfo.InvariantCulture);
}
