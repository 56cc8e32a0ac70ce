using HumWatch.Bench;

// Tiny dispatcher: one class per benchmark section, chosen by the first argument.
IBenchmarkSection[] sections = [new WelchSection(), new KernelSection(), new FrameSection(), new CheckSection(), new StreamsSection(), new FrameAllocSection(), new PeersSection(), new DatasetSection(), new WebSection()];

// Hidden: one check run in a fresh process, started by the check section so its peak working set is the check's own.
if (args.Length > 0 && args[0] == CheckSection.ChildName)
{
    return CheckSection.RunChild(args.AsSpan(1).ToArray());
}

// Hidden: writes one of the sections' EDF files (64 ch × 1000 Hz, 16-bit, 1 s records) to profile a check outside the bench,
// e.g. `write-edf room.edf 600 23` is the dataset section's 77 MB file.
if (args.Length == 4 && args[0] == "write-edf")
{
    var (_, bytes) = CheckSection.WriteEdf(args[1], long.Parse(args[2], System.Globalization.CultureInfo.InvariantCulture), int.Parse(args[3], System.Globalization.CultureInfo.InvariantCulture));
    Console.WriteLine($"{args[1]}: {bytes} bytes");
    return 0;
}

if (args.Length == 0 || args[0] is "-h" or "--help")
{
    Console.WriteLine("usage: HumWatch.Bench <section> [options]");
    foreach (var s in sections)
    {
        Console.WriteLine($"  {s.Name,-8} {s.Description}");
    }

    return args.Length == 0 ? 2 : 0;
}

foreach (var section in sections)
{
    if (string.Equals(section.Name, args[0], StringComparison.OrdinalIgnoreCase))
    {
        Console.WriteLine(MachineInfo.Describe());
        return section.Run(args.AsSpan(1).ToArray());
    }
}

Console.Error.WriteLine($"Unknown section '{args[0]}'. Known: {string.Join(", ", Array.ConvertAll(sections, s => s.Name))}.");
return 2;
