using HumWatch.Bench;

// Tiny dispatcher: one class per benchmark section, chosen by the first argument.
IBenchmarkSection[] sections = [new WelchSection(), new KernelSection(), new FrameSection(), new CheckSection(), new StreamsSection(), new FrameAllocSection(), new PeersSection(), new DatasetSection(), new WebSection()];

// Hidden: one check run in a fresh process, started by the check section so its peak working set is the check's own.
if (args.Length > 0 && args[0] == CheckSection.ChildName)
{
    return CheckSection.RunChild(args.AsSpan(1).ToArray());
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
