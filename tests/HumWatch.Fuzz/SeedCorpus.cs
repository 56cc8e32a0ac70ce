using System.Buffers.Binary;
using System.Globalization;
using System.Text;
using System.Text.Json;

namespace HumWatch.Fuzz;

/// <summary>
/// Writes the committed seed corpora (FOLDER/&lt;target&gt;/) and afl-fuzz dictionaries (FOLDER/&lt;target&gt;.dict):
/// small valid inputs of every flavour each reader takes, and near-valid ones one field away from a rejection. All
/// data is invented here: sine samples, made-up labels and annotation texts.
/// </summary>
internal static class SeedCorpus
{
    public static void WriteAll(string folder)
    {
        WriteRecordingSeeds(Path.Combine(folder, "edf"), isBdf: false);
        WriteRecordingSeeds(Path.Combine(folder, "bdf"), isBdf: true);
        WriteCsvSeeds(Path.Combine(folder, "csv"));
        WriteWireSeeds(Path.Combine(folder, "wire"));
        WriteSettingsSeeds(Path.Combine(folder, "settings"));
        WriteDictionaries(folder);
    }

    private static void WriteRecordingSeeds(string folder, bool isBdf)
    {
        var seeds = new SeedFolder(folder);
        var kind = isBdf ? "BDF" : "EDF";
        var annotations = isBdf ? "BDF Annotations" : "EDF Annotations";

        // 256 Hz in 0.125 s records: 32 samples per record and signal.
        var plain = new RawRecording(isBdf) { Reserved = isBdf ? "24BIT" : "" };
        plain.Signals.Add(new RawRecordingSignal("Fp1", 32));
        plain.Signals.Add(new RawRecordingSignal("Cz", 32, Dimension: "mV", PhysMin: "3.2767", PhysMax: "-3.2768"));
        plain.AddRecords(2);
        seeds.Add("plain", plain.ToBytes());

        var continuous = new RawRecording(isBdf) { Reserved = kind + "+C" };
        continuous.Signals.Add(new RawRecordingSignal("EEG Fz-Ref", 32));
        continuous.Signals.Add(new RawRecordingSignal(annotations, 20, Dimension: ""));
        continuous.AddRecords(2, r => r == 0 ? "+0\u0014\u0014\0+0.05\u00150.5\u0014lamp on\u0014\0" : "+0.125\u0014\u0014\0");
        seeds.Add("plus_continuous", continuous.ToBytes());

        var discontinuous = new RawRecording(isBdf) { Reserved = kind + "+D" };
        discontinuous.Signals.Add(new RawRecordingSignal("O1", 32));
        discontinuous.Signals.Add(new RawRecordingSignal(annotations, 16, Dimension: ""));
        discontinuous.AddRecords(3, r => (r == 2 ? "+1.5" : "+" + (r * 0.125).ToString(CultureInfo.InvariantCulture)) + "\u0014\u0014\0");
        seeds.Add("plus_discontinuous_gap", discontinuous.ToBytes());

        var mixed = new RawRecording(isBdf) { RecordDuration = "1" };
        mixed.Signals.Add(new RawRecordingSignal("Fp2", 64));
        mixed.Signals.Add(new RawRecordingSignal("T4", 32));
        mixed.Signals.Add(new RawRecordingSignal("Status", 64, Dimension: "Boolean"));
        mixed.Signals.Add(new RawRecordingSignal("Temp", 1, Dimension: "degC"));
        mixed.Signals.Add(new RawRecordingSignal("Pz", 64, Dimension: ""));
        mixed.Signals.Add(new RawRecordingSignal("Resp", 8));
        mixed.AddRecords(2);
        seeds.Add("two_rates_and_skipped", mixed.ToBytes());

        var growing = new RawRecording(isBdf);
        growing.Signals.Add(new RawRecordingSignal("C3", 32));
        growing.AddRecords(2);
        var partial = growing.ToBytes("-1");
        seeds.Add("still_recording", [.. partial, .. new byte[10]]);

        seeds.Add("truncated", plain.ToBytes("3"));
        var badRange = new RawRecording(isBdf);
        badRange.Signals.Add(new RawRecordingSignal("F3", 32, DigMin: "100", DigMax: "-100"));
        badRange.AddRecords(1);
        seeds.Add("digital_range_reversed", badRange.ToBytes());
        var floaty = new RawRecording(isBdf) { RecordDuration = "0.0625", StartDate = "31.02.99" };
        floaty.Signals.Add(new RawRecordingSignal("F4", 16) { SamplesText = "16.0" });
        floaty.AddRecords(2);
        seeds.Add("odd_fields", floaty.ToBytes());
    }

    private static void WriteCsvSeeds(string folder)
    {
        var seeds = new SeedFolder(folder);
        seeds.Add("comma_seconds", Rows("time,Fp1,Cz", ',', 8, i => F(i * 0.004), i => F(Wave(i)), i => F(-Wave(i))));
        seeds.Add("semicolon_decimal_comma", Rows("time;Fp1 [uV];Cz (mV)", ';', 8, i => F(i / 256.0).Replace('.', ','), i => F(Wave(i)).Replace('.', ','), i => F(Wave(i) / 1000).Replace('.', ',')));
        seeds.Add("tab_milliseconds", Rows("time_ms\tO1\tO2\tTemp [degC]", '\t', 8, i => F(i * 2.0), i => F(Wave(i)), i => i == 3 ? "NaN" : F(Wave(i + 1)), _ => "36.6"));
        seeds.Add("unnamed_time_column", Rows("Zeit (s),\"Fp1\",C4 [nV]", ',', 6, i => F(i * 0.01), i => F(Wave(i)), i => F(Wave(i) * 1000)));
        seeds.Add("bom_and_blank_lines", [.. Encoding.UTF8.Preamble, .. Encoding.UTF8.GetBytes("\r\ntime [s],Oz\r\n0,1\r\n\r\n0.02,2\r\n0.04,3\r\n")]);
        seeds.Add("ragged_row", Encoding.UTF8.GetBytes("time,Fp1,Fp2\n0,1,2\n0.004,1\n0.008,1,2\n"));
        seeds.Add("uneven_steps", Encoding.UTF8.GetBytes("t,Cz\n0,1\n0.004,1\n0.009,1\n0.012,1\n"));
    }

    private static void WriteWireSeeds(string folder)
    {
        var seeds = new SeedFolder(folder);

        // The worked example of docs/protocol.md, then its next chunk.
        seeds.Add("worked_example", Messages(
            ("""{"v":1,"stream":"room-a","fs":250,"channels":["Fz","Cz"],"unit":"uV","index":500,"t0":"2025-03-01T08:00:02.000Z"}""", [1, 2, 3, -1, 0.5f, 0]),
            ("""{"v":1,"stream":"room-a","fs":250,"channels":["Fz","Cz"],"unit":"uV","index":503,"t0":"2025-03-01T08:00:02.012Z"}""", [4, 5, 6, 1, 1, 1])));
        seeds.Add("millivolts_offset_time", Messages(
            ("""{"stream":"ward-3.bed_2","v":1,"unit":"mV","channels":["O1","O2","Pz"],"fs":512.5,"index":0,"t0":"2025-06-30T23:59:59.9+02:00"}""", [0.01f, 0.02f, -0.03f, 0.04f, 0.05f, 0.06f])));
        seeds.Add("volts_two_streams", Messages(
            ("""{"v":1,"stream":"a","fs":1000,"channels":["X"],"unit":"V","index":9007199254740993,"t0":null,"note":{"x":[1]}}""", [1e-5f, 2e-5f]),
            ("""{"v":1,"stream":"b","fs":1000,"channels":["X"],"unit":"µV","index":0}""", [7]),
            ("""{"v":1,"stream":"a","fs":1000,"channels":["Y"],"unit":"V","index":2}""", [3e-6f])));
        seeds.Add("non_finite_sample", Messages(("""{"v":1,"stream":"s","fs":100,"channels":["A","B"],"unit":"uV","index":0}""", [1, float.NaN, 2, 3])));
        seeds.Add("duplicate_label", Messages(("""{"v":1,"stream":"s","fs":100,"channels":["A","A"],"unit":"uV","index":0}""", [1, 2])));
        seeds.Add("version_two", Messages(("""{"v":2,"stream":"s","fs":100,"channels":["A"],"unit":"uV","index":0}""", [1])));
    }

    private static void WriteSettingsSeeds(string folder)
    {
        var seeds = new SeedFolder(folder);
        seeds.Add("site_only", Encoding.UTF8.GetBytes("""{ "Site": { "Name": "Ward 4 sleep room", "TimeZone": "UTC" } }"""));
        seeds.Add("sources_and_tones", Encoding.UTF8.GetBytes("""
            // a 60 Hz site with a pump
            {
              "Analysis": { "Sources": { "MainsHz": 60, "DisplayRatesHz": [ 60, 75, 144 ],
                "SiteTones": [ { "Name": "pump", "FrequencyHz": 28.5, "ToleranceHz": 0.2, "MaxHarmonic": 3 }, ] } },
              "Alerts": { "RaiseAfterFrames": 4 },
            }
            """));
        seeds.Add("ingest_endpoints", Encoding.UTF8.GetBytes("""
            { "Ingest": { "MaxChannels": 64, "MaxHeaderBytes": 4096, "Endpoints": [
                { "Address": "tcp://127.0.0.1:5810" },
                { "Address": "ipc:///tmp/humwatch-b", "Mode": "Connect", "SocketType": "Sub", "SubscribePrefix": "{\"v\":1" } ] },
              "Publish": { "Endpoint": "tcp://127.0.0.1:5811" } }
            """));
        seeds.Add("wrong_type", Encoding.UTF8.GetBytes("""{ "Monitor": { "MaxStreams": "many" }, "Alerts": { "RaiseAfterFramez": 2 } }"""));
        seeds.Add("not_an_object", Encoding.UTF8.GetBytes("[ 1, 2 ]"));
        if (FindUpwards("appsettings.example.json") is { } example)
        {
            seeds.Add("example", File.ReadAllBytes(example));
        }
    }

    private static void WriteDictionaries(string folder)
    {
        string[] recording =
        [
            "0       ", "\u00ffBIOSEMI", "EDF+C", "EDF+D", "BDF+C", "BDF+D", "24BIT", "EDF Annotations", "BDF Annotations",
            "Status", "Trigger", "uV      ", "mV", "nV", "V", "degC", "-1      ", "0       ", "-32768  ", "32767   ",
            "-8388608", "8388607 ", "1e-300  ", "+0\x14\x14\0", "\x15", "\x14", "Startdate ",
        ];
        WriteDictionary(Path.Combine(folder, "edf.dict"), recording);
        WriteDictionary(Path.Combine(folder, "bdf.dict"), recording);
        WriteDictionary(Path.Combine(folder, "csv.dict"),
            ["time", "time_ms", "t", "seconds", "[uV]", "(mV)", "[ms]", "(s)", "NaN", "Infinity", ";", "\t", ",", "\r\n", "\"", "e-3", "1e308", "\xef\xbb\xbf"]);
        WriteDictionary(Path.Combine(folder, "wire.dict"),
            ["\"v\":1", "\"stream\":\"", "\"fs\":", "\"channels\":[", "\"unit\":\"uV\"", "\"mV\"", "\"V\"", "\"index\":", "\"t0\":",
             "\"2025-03-01T08:00:00Z\"", "+14:00", "null", "\\u0000", "\\ud800", "\\\"", "1e308", "-0", "9223372036854775807", "\x00\x00\xc0\x7f"]);
        var keys = new SortedSet<string>(StringComparer.Ordinal);
        if (FindUpwards("appsettings.example.json") is { } example)
        {
            using var document = JsonDocument.Parse(File.ReadAllBytes(example), new JsonDocumentOptions { CommentHandling = JsonCommentHandling.Skip, AllowTrailingCommas = true });
            CollectNames(document.RootElement, keys);
        }

        WriteDictionary(Path.Combine(folder, "settings.dict"), [.. keys.Select(k => "\"" + k + "\":"), "//", "/*", "*/", "null", "true", "[", "{", "1e400", "\"\\u0000\""]);
    }

    private static void CollectNames(JsonElement element, SortedSet<string> into)
    {
        if (element.ValueKind == JsonValueKind.Object)
        {
            foreach (var property in element.EnumerateObject())
            {
                into.Add(property.Name);
                CollectNames(property.Value, into);
            }
        }
        else if (element.ValueKind == JsonValueKind.Array)
        {
            foreach (var item in element.EnumerateArray())
            {
                CollectNames(item, into);
            }
        }
    }

    /// <summary>afl-fuzz dictionary: one token a line, <c>name="value"</c> with \xNN for bytes outside printable ASCII.</summary>
    private static void WriteDictionary(string path, string[] tokens)
    {
        var text = new StringBuilder();
        for (var i = 0; i < tokens.Length; i++)
        {
            text.Append(CultureInfo.InvariantCulture, $"t{i}=\"");
            foreach (var b in Latin1OrUtf8(tokens[i]))
            {
                if (b is >= 0x20 and < 0x7f && b != '"' && b != '\\')
                {
                    text.Append((char)b);
                }
                else
                {
                    text.Append(CultureInfo.InvariantCulture, $"\\x{b:x2}");
                }
            }

            text.Append("\"\n");
        }

        File.WriteAllText(path, text.ToString());
    }

    // Tokens written with \xNN escapes in C# are single bytes; everything else is UTF-8 text.
    private static byte[] Latin1OrUtf8(string token) => token.All(c => c < 0x100) ? Encoding.Latin1.GetBytes(token) : Encoding.UTF8.GetBytes(token);

    private static byte[] Rows(string header, char separator, int rows, params Func<int, string>[] columns)
    {
        var text = new StringBuilder(header).Append('\n');
        for (var i = 0; i < rows; i++)
        {
            text.AppendJoin(separator, columns.Select(c => c(i))).Append('\n');
        }

        return Encoding.UTF8.GetBytes(text.ToString());
    }

    private static string F(double value) => value.ToString("0.######", CultureInfo.InvariantCulture);

    private static double Wave(int i) => Math.Round(40 * Math.Sin(2 * Math.PI * 50 * i / 256.0), 3);

    private static byte[] Messages(params (string Header, float[] Samples)[] messages)
    {
        var bytes = new List<byte>();
        foreach (var (header, samples) in messages)
        {
            var headerBytes = Encoding.UTF8.GetBytes(header);
            var sampleBytes = new byte[samples.Length * 4];
            for (var i = 0; i < samples.Length; i++)
            {
                BinaryPrimitives.WriteSingleLittleEndian(sampleBytes.AsSpan(i * 4), samples[i]);
            }

            foreach (var frame in new[] { headerBytes, sampleBytes })
            {
                bytes.Add((byte)frame.Length);
                bytes.Add((byte)(frame.Length >> 8));
                bytes.AddRange(frame);
            }
        }

        return [.. bytes];
    }

    private static string? FindUpwards(string fileName)
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
        {
            var candidate = Path.Combine(dir.FullName, fileName);
            if (File.Exists(candidate))
            {
                return candidate;
            }
        }

        return null;
    }

    private sealed class SeedFolder
    {
        private readonly string _folder;

        public SeedFolder(string folder)
        {
            _folder = folder;
            if (Directory.Exists(folder))
            {
                Directory.Delete(folder, recursive: true);
            }

            Directory.CreateDirectory(folder);
        }

        public void Add(string name, byte[] bytes) => File.WriteAllBytes(Path.Combine(_folder, name), bytes);
    }
}
