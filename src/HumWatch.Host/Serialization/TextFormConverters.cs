using System.Text.Json;
using System.Text.Json.Serialization;
using HumWatch.Core.Alerts;
using HumWatch.Core.Findings;
using HumWatch.Core.Reporting;
using HumWatch.Core.Summaries;
using HumWatch.Core.Text;

namespace HumWatch.Host.Serialization;

/// <summary>Reads a text form: true with the value, or false for text that is not one.</summary>
internal delegate bool TextFormParser<T>(string? text, out T value);

/// <summary>
/// Writes a Core value as its one text form (and reads it back), so JSON carries the same strings as the store,
/// messages and logs while the value stays typed inside the process. The closed types below exist only because a
/// source-generated JSON context names its converters by type and makes them without arguments.
/// </summary>
/// <param name="describe">What the value is, for the error message.</param>
internal class TextFormJsonConverter<T>(string describe, Func<T, string> toText, TextFormParser<T> tryParse) : JsonConverter<T>
{
    public override T Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
    {
        var text = reader.TokenType == JsonTokenType.String ? reader.GetString() : null;
        return tryParse(text, out var value)
            ? value
            : throw new JsonException($"'{text ?? reader.TokenType.ToString()}' is not a {describe} value.");
    }

    public override void Write(Utf8JsonWriter writer, T value, JsonSerializerOptions options)
    {
        ArgumentNullException.ThrowIfNull(writer);
        writer.WriteStringValue(toText(value));
    }
}

/// <summary>An enum written through its <see cref="TextForms{TEnum}"/> table.</summary>
internal class EnumTextJsonConverter<TEnum>(string name, TextForms<TEnum> forms)
    : TextFormJsonConverter<TEnum>($"{name} ({string.Join(", ", forms.Texts)})", forms.ToText, forms.TryParse)
    where TEnum : struct, Enum;

/// <summary>"pass", "warn", "fail", "error".</summary>
internal sealed class VerdictJsonConverter() : EnumTextJsonConverter<Verdict>("verdict", VerdictText.Forms);

/// <summary>"no data", "pass", "warn", "fail".</summary>
internal sealed class DayVerdictJsonConverter() : EnumTextJsonConverter<DayVerdict>("day verdict", DayVerdictText.Forms);

/// <summary>"none", "minor", "marked", "severe".</summary>
internal sealed class AlertSeverityJsonConverter() : EnumTextJsonConverter<AlertSeverity>("severity", AlertSeverityText.Forms);

/// <summary>"all", "mains", "display", "site-tone", "unidentified", "fault" (and "site", read from older files).</summary>
internal sealed class FindingCategoryJsonConverter() : TextFormJsonConverter<FindingCategory>(
    "source category (all, mains, display, site-tone, unidentified, fault)", c => c.ToText(), FindingCategoryText.TryParse);

/// <summary>A finding key as its text form, e.g. "mains/h1".</summary>
internal sealed class FindingKeyJsonConverter() : TextFormJsonConverter<FindingKey>("finding key", k => k.ToString(), TryParseKey)
{
    private static bool TryParseKey(string? text, out FindingKey value)
    {
        value = string.IsNullOrEmpty(text) ? default : FindingKey.Parse(text);
        return !string.IsNullOrEmpty(text);
    }
}
