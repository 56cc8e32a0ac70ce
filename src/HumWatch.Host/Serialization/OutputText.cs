using System.Text;
using System.Text.Encodings.Web;
using System.Text.Json;

namespace HumWatch.Host.Serialization;

/// <summary>
/// How text leaves HumWatch: files are UTF-8 without a byte-order mark (a BOM makes strict readers such as Python's
/// json.load refuse the file), and JSON writes every character as itself except what JSON itself requires escaped.
/// </summary>
/// <remarks>
/// System.Text.Json's default encoder escapes HTML-sensitive and non-ASCII characters (<c>+</c> as <c>\u002B</c>,
/// <c>×</c>, <c>µ</c>, <c>'</c>, <c>—</c>) so that JSON can be pasted into a web page safely. HumWatch's JSON goes to
/// files, sockets, the SQLite store and the console, never into HTML or a script, so the relaxed encoder is safe: it
/// still escapes quotes, backslashes and control characters, which is all JSON needs.
/// </remarks>
internal static class OutputText
{
    /// <summary>UTF-8 without a byte-order mark.</summary>
    public static UTF8Encoding Utf8 { get; } = new(encoderShouldEmitUTF8Identifier: false);

    /// <summary>Escapes only what JSON requires (quotes, backslash, control characters).</summary>
    public static JavaScriptEncoder JsonEncoder => JavaScriptEncoder.UnsafeRelaxedJsonEscaping;

    /// <summary>A copy of a source-generated context's options that writes characters as themselves.</summary>
    public static JsonSerializerOptions JsonOptions(JsonSerializerOptions generated) =>
        new(generated) { Encoder = JsonEncoder, TypeInfoResolver = null };

    /// <summary>Writer options for hand-written JSON (key files).</summary>
    public static JsonWriterOptions WriterOptions(bool indented) => new() { Indented = indented, Encoder = JsonEncoder };

    /// <summary>Writes <paramref name="text"/> to <paramref name="path"/> as UTF-8 without a byte-order mark.</summary>
    public static void WriteFile(string path, string text) => File.WriteAllText(path, text, Utf8);
}
