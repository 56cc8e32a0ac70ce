using HumWatch.Fuzz;

// humwatch fuzz harness (docs/reliability.md, "Fuzzing"); fuzz.sh is the one command that drives it.
//   run TARGET                 under afl-fuzz: one input per execution on stdin (SharpFuzz out-of-process server)
//   replay TARGET PATH...      each file (or every file of each folder) once, printing the outcome; exit 1 on a crash
//   seeds FOLDER               writes the seed corpora and dictionaries, FOLDER/<target>/…
if (args.Length == 0)
{
    return Usage();
}

switch (args[0])
{
    case "run" when args.Length == 2 && FuzzTargets.Find(args[1]) is { } target:
        SharpFuzz.Fuzzer.OutOfProcess.Run(stream => target.Execute(InputBytes.ReadAll(stream)));
        return 0;
    case "replay" when args.Length >= 3 && FuzzTargets.Find(args[1]) is { } target:
        return Replay.Run(target, args[2..]);
    case "seeds" when args.Length == 2:
        SeedCorpus.WriteAll(args[1]);
        return 0;
    default:
        return Usage();
}

static int Usage()
{
    Console.Error.WriteLine("usage: HumWatch.Fuzz run TARGET | replay TARGET PATH... | seeds FOLDER");
    Console.Error.WriteLine("targets: " + string.Join(", ", FuzzTargets.All.Select(t => t.Name)));
    return 2;
}
