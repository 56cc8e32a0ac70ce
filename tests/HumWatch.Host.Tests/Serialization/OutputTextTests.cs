using System.Text;
using System.Text.Json;
using HumWatch.Host.Serialization;
using Xunit;

namespace HumWatch.Host.Tests.Serialization;

public sealed class OutputTextTests : IDisposable
{
    private readonly TempFolder _temp = new();

    public void Dispose() => _temp.Dispose();

    [Fact]
    public void Files_are_written_as_UTF8_without_a_byte_order_mark()
    {
        var path = _temp.File("out.json");

        OutputText.WriteFile(path, "{\"unit\":\"µV\"}");

        var bytes = File.ReadAllBytes(path);

        // RFC 8259 section 8.1: no byte-order mark; µ (U+00B5) is C2 B5 in UTF-8 (Unicode standard, table 3-6).
        Assert.Equal("{\"unit\":\""u8.ToArray().Concat(new byte[] { 0xC2, 0xB5, (byte)'V', (byte)'"', (byte)'}' }), bytes);
        Assert.Empty(OutputText.Utf8.GetPreamble());
    }

    [Fact]
    public void JSON_writes_characters_as_themselves_and_escapes_only_what_JSON_requires()
    {
        using var stream = new MemoryStream();
        using (var writer = new Utf8JsonWriter(stream, OutputText.WriterOptions(indented: false)))
        {
            writer.WriteStringValue("+ × µ ' — \" \\ \u0001");
        }

        var text = Encoding.UTF8.GetString(stream.ToArray());

        // RFC 8259 section 7: quotation mark, reverse solidus and control characters must be escaped; others may stay.
        Assert.Equal("\"+ × µ ' — \\\" \\\\ \\u0001\"", text);
        Assert.Equal("+ × µ ' — \" \\ \u0001", JsonSerializer.Deserialize<string>(text));
    }
}
