namespace HumWatch.Core.Text;

/// <summary>
/// The one text form of each value of an enum, held as one table that both directions read, so writing and parsing
/// cannot drift apart. Texts compare ordinally: case matters, as every output writes them in lower case.
/// </summary>
/// <typeparam name="TEnum">The enum whose values are written as text.</typeparam>
public sealed class TextForms<TEnum>
    where TEnum : struct, Enum
{
    private readonly TEnum[] _values;
    private readonly string[] _texts;
    private readonly TEnum _fallback;
    private readonly string _fallbackText;

    /// <param name="fallback">
    /// What a value outside the table is written as, and what a failed parse leaves in its out value; it must be in
    /// the table.
    /// </param>
    /// <param name="forms">Each value with its text, in the order <see cref="Texts"/> lists them; no value or text twice.</param>
    public TextForms(TEnum fallback, params ReadOnlySpan<(TEnum Value, string Text)> forms)
    {
        _values = new TEnum[forms.Length];
        _texts = new string[forms.Length];
        for (var i = 0; i < forms.Length; i++)
        {
            var (value, text) = forms[i];
            ArgumentException.ThrowIfNullOrWhiteSpace(text, nameof(forms));
            if (Array.IndexOf(_values, value, 0, i) >= 0 || Array.IndexOf(_texts, text, 0, i) >= 0)
            {
                throw new ArgumentException($"{typeof(TEnum).Name}: {value} or \"{text}\" is in the table twice.", nameof(forms));
            }

            _values[i] = value;
            _texts[i] = text;
        }

        var fallbackAt = Array.IndexOf(_values, fallback);
        if (fallbackAt < 0)
        {
            throw new ArgumentException($"{typeof(TEnum).Name}: the fallback {fallback} has no text in the table.", nameof(fallback));
        }

        _fallback = fallback;
        _fallbackText = _texts[fallbackAt];
        Texts = _texts;
    }

    /// <summary>Every text form, in table order (for messages that list what is accepted).</summary>
    public IReadOnlyList<string> Texts { get; }

    /// <summary>The value's text form; a value outside the table gets the fallback's.</summary>
    public string ToText(TEnum value)
    {
        var at = Array.IndexOf(_values, value);
        return at >= 0 ? _texts[at] : _fallbackText;
    }

    /// <summary>The value of a text form; unknown text (or null) gives false and the fallback.</summary>
    public bool TryParse(string? text, out TEnum value)
    {
        var at = text is null ? -1 : Array.IndexOf(_texts, text);
        value = at >= 0 ? _values[at] : _fallback;
        return at >= 0;
    }
}
