using System.Reflection;
using System.Text.Json;
using System.Text.Json.Nodes;
using System.Text.Json.Serialization;
using System.Text.Json.Serialization.Metadata;
using HumWatch.Host.Configuration;
using HumWatch.Host.Serialization;

namespace HumWatch.Host.Web;

/// <summary>
/// The settings in force, section by section under their configuration names, with secrets removed: a value whose key
/// names a password, secret, token, credential, API key or hash is replaced by "(hidden)" when set, and an http(s) URL
/// shows only its scheme, host and port (webhook addresses often carry a secret in their path or query). The rule goes
/// by names and shapes so that settings added later are covered too.
/// </summary>
internal static class SettingsView
{
    /// <summary>What stands in for a removed value.</summary>
    public const string Hidden = "(hidden)";

    private static readonly string[] SecretWords = ["password", "secret", "token", "credential", "apikey", "hash"];

    // Reflection over the options classes: they are plain settings objects, and this runs once per request.
    private static readonly JsonSerializerOptions Options = new()
    {
        Encoder = OutputText.JsonEncoder,
        TypeInfoResolver = new DefaultJsonTypeInfoResolver(),
        Converters = { new JsonStringEnumConverter() },
        NumberHandling = JsonNumberHandling.AllowNamedFloatingPointLiterals,
        WriteIndented = true,
    };

    /// <summary>The bound settings as JSON, secrets removed.</summary>
    public static byte[] Of(BoundSettings settings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        var root = new JsonObject();
        foreach (var section in typeof(BoundSettings).GetProperties(BindingFlags.Public | BindingFlags.Instance))
        {
            var value = section.GetValue(settings);
            root[section.Name] = value is null ? null : JsonSerializer.SerializeToNode(value, section.PropertyType, Options);
        }

        Redact(root);
        return JsonSerializer.SerializeToUtf8Bytes(root, Options);
    }

    /// <summary>Whether a setting of this name holds a secret.</summary>
    internal static bool IsSecretName(string name)
    {
        foreach (var word in SecretWords)
        {
            if (name.Contains(word, StringComparison.OrdinalIgnoreCase))
            {
                return true;
            }
        }

        return false;
    }

    private static void Redact(JsonNode? node)
    {
        switch (node)
        {
            case JsonObject obj:
                foreach (var (name, child) in obj.ToList())
                {
                    if (IsSecretName(name) && child is JsonValue v && v.TryGetValue<string>(out var secret))
                    {
                        obj[name] = secret.Length == 0 ? "" : Hidden;
                    }
                    else if (IsSecretName(name) && child is not null and not JsonObject and not JsonArray)
                    {
                        obj[name] = Hidden;
                    }
                    else
                    {
                        Redact(child);
                        if (child is JsonValue text && text.TryGetValue<string>(out var s) && WithoutUrlSecrets(s) is { } cleaned)
                        {
                            obj[name] = cleaned;
                        }
                    }
                }

                break;
            case JsonArray array:
                for (var i = 0; i < array.Count; i++)
                {
                    Redact(array[i]);
                    if (array[i] is JsonValue text && text.TryGetValue<string>(out var s) && WithoutUrlSecrets(s) is { } cleaned)
                    {
                        array[i] = cleaned;
                    }
                }

                break;
            default:
                break;
        }
    }

    /// <summary>An http(s) URL cut to "scheme://host:port/…"; null when <paramref name="text"/> is no such URL or has nothing after the host.</summary>
    internal static string? WithoutUrlSecrets(string text)
    {
        if (!Uri.TryCreate(text, UriKind.Absolute, out var uri) || (uri.Scheme != Uri.UriSchemeHttp && uri.Scheme != Uri.UriSchemeHttps)
            || (uri.UserInfo.Length == 0 && uri.Query.Length == 0 && uri.AbsolutePath is "/" or ""))
        {
            return null;
        }

        return uri.GetComponents(UriComponents.SchemeAndServer, UriFormat.UriEscaped) + "/…";
    }
}
