namespace HumWatch.Cli;

internal static class Program
{
    private static int Main(string[] args)
    {
        Console.Error.WriteLine("humwatch: commands are being wired up.");
        return args.Length == 0 ? 2 : 2;
    }
}
