using System.Text.Json;
using System.Text.Json.Serialization;
using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Core.Reporting;
using HumWatch.Core.Summaries;

namespace HumWatch.Host.Serialization;

/// <summary>
/// Writes a Core value as its one text form (and reads it back), so JSON carries the same strings as the store,
/// messages and logs while the value stays typed inside the process.
/// </summary>
internal abstract class TextFormConverter<T> : JsonConverter<T>
{
    public override T Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
    {
        var text = reader.TokenType == JsonTokenType.String ? reader.GetString() : null;
        return TryParse(text, out var value)
            ? value
            : throw new JsonException($"'{text ?? reader.TokenType.ToString()}' is not a {Describe} value.");
    }

    public override void Write(Utf8JsonWriter writer, T value, JsonSerializerOptions options)
    {
        ArgumentNullException.ThrowIfNull(writer);
        writer.WriteStringValue(ToText(value));
    }

    /// <summary>What the value is, for the error message.</summary>
    protected abstract string Describe { get; }

    protected abstract string ToText(T value);

    protected abstract bool TryParse(string? text, out T value);
}

/// <summary>"pass", "warn", "fail", "error".</summary>
internal sealed class VerdictJsonConverter : TextFormConverter<Verdict>
{
    protected override string Describe => "verdict (pass, warn, fail, error)";

    protected override string ToText(Verdict value) => value.ToText();

    protected override bool TryParse(string? text, out Verdict value) => VerdictText.TryParse(text, out value);
}

/// <summary>"no data", "pass", "warn", "fail".</summary>
internal sealed class DayVerdictJsonConverter : TextFormConverter<DayVerdict>
{
    protected override string Describe => "day verdict (no data, pass, warn, fail)";

    protected override string ToText(DayVerdict value) => value.ToText();

    protected override bool TryParse(string? text, out DayVerdict value) => DayVerdictText.TryParse(text, out value);
}

/// <summary>"none", "minor", "marked", "severe".</summary>
internal sealed class AlertSeverityJsonConverter : TextFormConverter<AlertSeverity>
{
    protected override string Describe => "severity (none, minor, marked, severe)";

    protected override string ToText(AlertSeverity value) => value.ToText();

    protected override bool TryParse(string? text, out AlertSeverity value) => AlertSeverityText.TryParse(text, out value);
}

/// <summary>"all", "mains", "display", "site-tone", "unidentified", "fault".</summary>
internal sealed class FindingCategoryJsonConverter : TextFormConverter<FindingCategory>
{
    protected override string Describe => "source category (all, mains, display, site-tone, unidentified, fault)";

    protected override string ToText(FindingCategory value) => value.ToText();

    protected override bool TryParse(string? text, out FindingCategory value) => FindingCategoryText.TryParse(text, out value);
}

/// <summary>A finding key as its text form, e.g. "mains/h1".</summary>
internal sealed class FindingKeyJsonConverter : TextFormConverter<FindingKey>
{
    protected override string Describe => "finding key";

    protected override string ToText(FindingKey value) => value.ToString();

    protected override bool TryParse(string? text, out FindingKey value)
    {
        value = string.IsNullOrEmpty(text) ? default : FindingKey.Parse(text);
        return !string.IsNullOrEmpty(text);
    }
}
