using System.Globalization;

namespace HumWatch.KillHarness;

/// <summary>
/// `dotnet run -c Release --project tests/HumWatch.KillHarness -- [--kills N] [--seed S] [--rooms R] [--speed X] [--work DIR]`:
/// the kill -9 harness of docs/reliability.md. Exit code 0 when every check passed, 1 when one failed, 2 on bad arguments.
/// </summary>
internal static class Program
{
    public static async Task<int> Main(string[] args)
    {
        KillOptions options;
        try
        {
            options = Parse(args);
        }
        catch (Exception ex) when (ex is FormatException or ArgumentException or OverflowException)
        {
            await Console.Error.WriteLineAsync($"kill harness: {ex.Message}");
            await Console.Error.WriteLineAsync("usage: --kills N (default 50) --seed S (13) --rooms R (3) --speed X (10) --work DIR (a new temp folder)");
            return 2;
        }

        var report = await Harness.RunAsync(options, Console.Out, CancellationToken.None);
        Console.Out.Write(report.ToString());
        return report.Passed ? 0 : 1;
    }

    private static KillOptions Parse(string[] args)
    {
        var options = new KillOptions();
        for (var i = 0; i < args.Length; i++)
        {
            var value = i + 1 < args.Length ? args[i + 1] : throw new ArgumentException($"{args[i]} needs a value.");
            options = args[i] switch
            {
                "--kills" => options with { Kills = int.Parse(value, CultureInfo.InvariantCulture) },
                "--seed" => options with { Seed = int.Parse(value, CultureInfo.InvariantCulture) },
                "--rooms" => options with { Rooms = int.Parse(value, CultureInfo.InvariantCulture) },
                "--speed" => options with { Speed = double.Parse(value, CultureInfo.InvariantCulture) },
                "--work" => options with { WorkFolder = value },
                _ => throw new ArgumentException($"unknown option {args[i]}."),
            };
            i++;
        }

        if (options.Kills < 1 || options.Rooms < 1 || !(options.Speed > 0))
        {
            throw new ArgumentException("--kills and --rooms must be at least 1 and --speed above 0.");
        }

        return options;
    }
}

/// <summary>Both runs and the checks.</summary>
internal static class Harness
{
    public static async Task<KillReport> RunAsync(KillOptions options, TextWriter progress, CancellationToken cancel)
    {
        var plan = KillPlan.Create(options);
        var work = options.WorkFolder ?? Path.Combine(Path.GetTempPath(), "humwatch-kill-" + Guid.NewGuid().ToString("N"));
        var run = new KillRun(plan, progress);
        progress.WriteLine($"kill harness: {options.Kills} kills, seed {options.Seed}, {plan.StreamSeconds:0} s of stream time, work folder {work}");
        progress.WriteLine("reference run (no kill)");
        var reference = await run.PlayAsync(Path.Combine(work, "reference"), withKills: false, cancel);
        progress.WriteLine("killed run");
        var killed = await run.PlayAsync(Path.Combine(work, "killed"), withKills: true, cancel);
        return KillChecks.Check(plan, killed, reference);
    }
}
