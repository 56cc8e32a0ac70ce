using System.Text;
using Spectre.Console;

namespace HumWatch.Cli.Dataset;

/// <summary>
/// A text writer that passes whole lines to a Spectre console, so report text written while a progress line is live
/// appears above it instead of through it.
/// </summary>
internal sealed class LiveConsoleWriter(IAnsiConsole console) : TextWriter
{
    private readonly StringBuilder _line = new();

    public override Encoding Encoding => Encoding.UTF8;

    public override void Write(char value)
    {
        if (value == '\n')
        {
            console.Write(new Text(_line.ToString().TrimEnd('\r') + "\n"));
            _line.Clear();
        }
        else
        {
            _line.Append(value);
        }
    }

    public override void Write(string? value)
    {
        foreach (var c in value ?? "")
        {
            Write(c);
        }
    }

    public override void WriteLine(string? value)
    {
        Write(value);
        Write('\n');
    }
}
