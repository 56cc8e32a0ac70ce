using HumWatch.Core.Text;

namespace HumWatch.Core.Reporting;

/// <summary>Outcome of checking a recording: against <see cref="CheckLimits"/>, or an error when it could not be read. Worse outcomes compare greater.</summary>
public enum Verdict
{
    /// <summary>Nothing at or above the warn limits.</summary>
    Pass = 0,

    /// <summary>Contamination or channel faults below the fail limits.</summary>
    Warn,

    /// <summary>Contamination or channel faults at or above the fail limits.</summary>
    Fail,

    /// <summary>The input could not be read or held nothing to analyse.</summary>
    Error,
}

/// <summary>Text forms of <see cref="Verdict"/>: the `check` report's "verdict".</summary>
public static class VerdictText
{
    /// <summary>The table: "pass", "warn", "fail", "error" (an undefined value is written "error").</summary>
    public static TextForms<Verdict> Forms { get; } = new(
        Verdict.Error,
        (Verdict.Pass, "pass"),
        (Verdict.Warn, "warn"),
        (Verdict.Fail, "fail"),
        (Verdict.Error, "error"));

    /// <summary>"pass", "warn", "fail" or "error".</summary>
    public static string ToText(this Verdict verdict) => Forms.ToText(verdict);

    /// <summary>Parses the text form; unknown text gives false.</summary>
    public static bool TryParse(string? text, out Verdict verdict) => Forms.TryParse(text, out verdict);
}
