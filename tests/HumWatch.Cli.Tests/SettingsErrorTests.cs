using System.Text.Json;
using Xunit;

namespace HumWatch.Cli.Tests;

/// <summary>Bad settings and arguments as a person meets them: each names the key, file, line and column, or the help to read.</summary>
public sealed class SettingsErrorTests : IDisposable
{
    private readonly TempFolder _work = new();

    public void Dispose() => _work.Dispose();

    [Fact]
    public async Task A_misspelt_section_and_a_misspelt_key_stop_run_with_the_known_name_and_the_file()
    {
        var site = Write("site.json", """{ "Alert": { "RaiseAfterFrames": 3 }, "Alerts": { "RaiseAftreFrames": 2 } }""");

        var (code, output, error) = await Run("run", "--data", "data", "--config", site);

        Assert.Equal(2, code);
        Assert.Contains("humwatch run: configuration is not valid:", error, StringComparison.Ordinal);
        Assert.Contains($"unknown setting 'Alert:RaiseAfterFrames' — did you mean 'Alerts:RaiseAfterFrames'? ({site})", error, StringComparison.Ordinal);
        Assert.Contains($"unknown setting 'Alerts:RaiseAftreFrames' — did you mean 'Alerts:RaiseAfterFrames'? ({site})", error, StringComparison.Ordinal);
        Assert.DoesNotContain("BinderOptions", error, StringComparison.Ordinal);
        Assert.False(Directory.Exists(Path.Combine(_work.Path, "data")), "bad settings stop the start before anything is made");
        Assert.DoesNotContain("   at ", output + error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_misspelt_key_in_the_working_directory_file_stops_check_too()
    {
        Write("appsettings.json", """{ "Check": { "FailLineUvRm": 3 } }""");

        var (code, _, error) = await Run("check", "any.edf");

        Assert.Equal(2, code);
        Assert.Contains("unknown setting 'Check:FailLineUvRm' — did you mean 'Check:FailLineUvRms'?", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Invalid_JSON_names_the_file_the_line_and_the_column()
    {
        // Line 3 lacks its comma, so line 4's first character, the quote in column 5, is where the parser stops.
        var site = Write("site.json", "{\n  \"Check\": {\n    \"WarnLineUvRms\": 1\n    \"FailLineUvRms\": 5\n  }\n}\n");

        var (code, _, error) = await Run("check", "any.edf", "--config", site);

        Assert.Equal(2, code);
        Assert.Contains($"{site}: not valid JSON at line 4, column 5: ", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Check_json_with_bad_settings_prints_an_error_report_per_file_on_stdout_and_exits_2()
    {
        var site = Write("site.json", "{ \"Check\": { \"WarnLineUvRms\": 1, } , }x");

        var one = await Run("check", "a.edf", "--json", "--set", "Alerts:RaiseAftreFrames=2");
        var two = await Run("check", "a.edf", "b.edf", "--json", "--config", site);

        Assert.Equal(2, one.ExitCode);
        using (var json = JsonDocument.Parse(one.Output))
        {
            Assert.Equal("a.edf", json.RootElement.GetProperty("file").GetString());
            Assert.Equal("error", json.RootElement.GetProperty("verdict").GetString());
            Assert.Contains("unknown setting 'Alerts:RaiseAftreFrames' — did you mean 'Alerts:RaiseAfterFrames'?", json.RootElement.GetProperty("error").GetString(), StringComparison.Ordinal);
        }

        Assert.Contains("unknown setting 'Alerts:RaiseAftreFrames'", one.Error, StringComparison.Ordinal);

        Assert.Equal(2, two.ExitCode);
        // One report per line (JSON Lines), as for readable files.
        var documents = two.Output.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(l => JsonDocument.Parse(l)).ToList();
        try
        {
            var reports = documents.Select(d => d.RootElement).ToList();
            Assert.Equal(["a.edf", "b.edf"], reports.Select(r => r.GetProperty("file").GetString()));
            Assert.All(reports, r => Assert.Equal("error", r.GetProperty("verdict").GetString()));
            Assert.All(reports, r => Assert.Contains($"{site}: not valid JSON at line 1", r.GetProperty("error").GetString(), StringComparison.Ordinal));
        }
        finally
        {
            documents.ForEach(d => d.Dispose());
        }
    }

    [Fact]
    public async Task A_bad_mains_value_says_what_it_takes_and_points_to_the_check_help()
    {
        var text = await Run("check", "a.edf", "--mains", "55");
        var json = await Run("check", "a.edf", "--mains", "fifty", "--json");

        Assert.Equal(2, text.ExitCode);
        Assert.Contains("humwatch check: --mains takes 50 or 60, the mains frequency of the site in Hz (got '55').", text.Error, StringComparison.Ordinal);
        Assert.Contains("Try 'humwatch check --help'.", text.Error, StringComparison.Ordinal);

        Assert.Equal(2, json.ExitCode);
        using var document = JsonDocument.Parse(json.Output);
        Assert.Equal("error", document.RootElement.GetProperty("verdict").GetString());
        Assert.Contains("--mains takes 50 or 60", document.RootElement.GetProperty("error").GetString(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task An_unknown_option_of_a_command_points_to_that_command_s_help()
    {
        var (code, _, error) = await Run("simulate", "x.json", "--colour", "red");

        Assert.Equal(2, code);
        Assert.Contains("Try 'humwatch simulate --help'.", error, StringComparison.Ordinal);
    }

    private Task<(int ExitCode, string Output, string Error)> Run(params string[] arguments) =>
        CliRunner.RunInAsync(_work.Path, new Dictionary<string, string>(), arguments);

    private string Write(string name, string text)
    {
        var path = Path.Combine(_work.Path, name);
        File.WriteAllText(path, text);
        return path;
    }
}
