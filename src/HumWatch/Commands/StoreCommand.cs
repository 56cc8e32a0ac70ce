using System.CommandLine;
using System.Globalization;
using HumWatch.Host.Store;

namespace HumWatch.Cli.Commands;

/// <summary>
/// `humwatch store copy --from sqlite:PATH --to postgres:CONNSTR|postgres-file:PATH|sqlite:PATH`: moves a store's whole
/// history into an empty shared store and proves the copy (rows and a checksum per table, read back from both sides).
/// </summary>
internal static class StoreCommand
{
    public static Command Create()
    {
        var from = new Option<string>("--from") { Description = "The store to copy: sqlite:PATH (stop the instance that writes it first).", Required = true };
        var to = new Option<string>("--to")
        {
            Description = "The empty store to fill: postgres:CONNECTION-STRING, postgres-file:PATH (a file holding the connection string, so no password shows in the process list) or sqlite:PATH.",
            Required = true,
        };
        var copy = new Command("copy", "Copies every table of one store into an empty one of the same schema version, in one transaction, then compares row counts and a checksum per table.")
        {
            from,
            to,
        };
        copy.SetAction(parse => Copy(parse.GetValue(from)!, parse.GetValue(to)!, Console.Out, Console.Error));
        return new Command("store", "Works on HumWatch stores (see docs/fleet.md for moving a single box onto a shared PostgreSQL store).") { copy };
    }

    /// <summary>Runs the copy; returns the exit code: 0 when every table matches, 1 when one does not, 2 for bad arguments or a store that cannot be opened.</summary>
    internal static int Copy(string fromText, string toText, TextWriter stdout, TextWriter stderr)
    {
        const string Command = "humwatch store copy";
        if (!StoreAddress.TryParse(fromText, "--from", out var from, out var fromError))
        {
            stderr.WriteLine($"{Command}: {fromError}");
            return ExitCodes.BadInput;
        }

        if (!StoreAddress.TryParse(toText, "--to", out var to, out var toError))
        {
            stderr.WriteLine($"{Command}: {toError}");
            return ExitCodes.BadInput;
        }

        if (from.Provider != StoreAddress.Sqlite)
        {
            stderr.WriteLine($"{Command}: --from must be sqlite:PATH, the store of one box (got {from.Display}).");
            return ExitCodes.BadInput;
        }

        if (!File.Exists(from.Target))
        {
            stderr.WriteLine($"{Command}: --from {from.Display} does not exist.");
            return ExitCodes.BadInput;
        }

        if (to.Provider == StoreAddress.Sqlite && string.Equals(Path.GetFullPath(from.Target), Path.GetFullPath(to.Target), StringComparison.Ordinal))
        {
            stderr.WriteLine($"{Command}: --from and --to name the same file ({from.Display}).");
            return ExitCodes.BadInput;
        }

        try
        {
            var results = StoreCopyJob.Run(
                from,
                to,
                version => stdout.WriteLine(string.Create(CultureInfo.InvariantCulture, $"Copying {from.Display} into {to.Display} (schema version {version})")),
                (table, rows) => stdout.WriteLine(string.Create(CultureInfo.InvariantCulture, $"  copied {table}: {rows} row(s)")));
            return Report(results, stdout, stderr);
        }
        catch (Exception ex) when (ex is InvalidOperationException or IOException or UnauthorizedAccessException or System.Data.Common.DbException)
        {
            stderr.WriteLine($"{Command}: {ex.Message}");
            return ExitCodes.BadInput;
        }
    }

    private static int Report(IReadOnlyList<TableCopyResult> results, TextWriter stdout, TextWriter stderr)
    {
        var width = results.Max(r => r.Table.Length);
        stdout.WriteLine("Read back from both stores:");
        foreach (var r in results)
        {
            var outcome = r.Matches ? "equal" : "DIFFERENT";
            stdout.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"  {r.Table.PadRight(width)}  rows {r.SourceRows,9} → {r.TargetRows,9}  checksum {r.SourceChecksum[..16]}… {(r.SourceChecksum == r.TargetChecksum ? "=" : "≠")} {r.TargetChecksum[..16]}…  {outcome}"));
        }

        var different = results.Where(r => !r.Matches).Select(r => r.Table).ToArray();
        if (different.Length > 0)
        {
            stderr.WriteLine($"humwatch store copy: the copy differs from the source in {string.Join(", ", different)}; do not point instances at it. The source is unchanged.");
            return ExitCodes.Contaminated;
        }

        stdout.WriteLine(string.Create(CultureInfo.InvariantCulture, $"All {results.Count} tables equal ({results.Sum(r => r.SourceRows)} rows)."));
        return ExitCodes.Ok;
    }
}
