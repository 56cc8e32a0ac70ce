using System.Collections;
using System.ComponentModel;
using System.Globalization;
using System.Reflection;
using Microsoft.Extensions.Configuration;

namespace HumWatch.Host.Configuration;

/// <summary>
/// Every setting key HumWatch knows, read by reflection off the options classes <see cref="BoundSettings"/> binds (its
/// public properties are the sections), so the list cannot drift from what is bound. Checks a layered configuration
/// before binding: unknown sections and keys (with the nearest known key as a suggestion) and values the key's type
/// cannot take, one line each.
/// </summary>
internal static class SettingsSchema
{
    private static readonly Lazy<Node> KnownRoot = new(() => Build(typeof(BoundSettings)));

    /// <summary>The known keys, lists written with "*" for the index (Ingest:Endpoints:*:Address), ordered.</summary>
    public static IReadOnlyList<string> KnownKeys()
    {
        var keys = new List<string>();
        Collect(KnownRoot.Value, "", keys);
        keys.Sort(StringComparer.OrdinalIgnoreCase);
        return keys;
    }

    /// <summary>Whether <paramref name="name"/> is a top-level section (any case).</summary>
    public static bool IsSection(string name) => KnownRoot.Value.Children.ContainsKey(name);

    /// <summary>
    /// One line per problem among the keys of <paramref name="configuration"/>, with the top-level sections that hold
    /// unknown keys and those that hold values of the wrong type (binding those would only repeat the same problem in
    /// the binder's words).
    /// </summary>
    /// <param name="configuration">The layered settings.</param>
    /// <param name="sourceOf">Names where a key was set (a file, an environment variable, --set), or null when unknown.</param>
    public static SchemaCheck Check(IConfiguration configuration, Func<string, string?>? sourceOf = null)
    {
        ArgumentNullException.ThrowIfNull(configuration);
        var errors = new List<(string Key, string Text)>();
        var unknownSections = new HashSet<string>(StringComparer.OrdinalIgnoreCase);
        var badValueSections = new HashSet<string>(StringComparer.OrdinalIgnoreCase);

        // Several keys below one unknown section are one mistake: report the section once.
        var unknown = new Dictionary<string, List<string>>(StringComparer.OrdinalIgnoreCase);
        var unknownOrder = new List<string>();
        foreach (var (key, value) in Leaves(configuration))
        {
            var segments = key.Split(ConfigurationPath.KeyDelimiter);
            var (node, depth) = Walk(KnownRoot.Value, segments);
            if (node is null)
            {
                var prefix = string.Join(ConfigurationPath.KeyDelimiter, segments.Take(depth + 1));
                if (!unknown.TryGetValue(prefix, out var keys))
                {
                    unknown[prefix] = keys = [];
                    unknownOrder.Add(prefix);
                }

                keys.Add(key);
                unknownSections.Add(segments[0]);
                continue;
            }

            if (ValueProblem(key, node, value) is { } problem)
            {
                errors.Add((key, problem));
                badValueSections.Add(segments[0]);
            }
        }

        foreach (var prefix in unknownOrder)
        {
            var keys = unknown[prefix];
            var source = sourceOf?.Invoke(keys[0]) is { } s ? $" ({s})" : "";
            if (keys.Count == 1)
            {
                var key = keys[0];
                var suggestion = Suggest(prefix) is { } near ? near + key[prefix.Length..] : null;
                errors.Add((prefix, suggestion is null
                    ? $"unknown setting '{key}'{KnownHere(prefix)}{source}"
                    : $"unknown setting '{key}' — did you mean '{suggestion}'?{source}"));
            }
            else
            {
                var suggestion = Suggest(prefix);
                errors.Add((prefix, suggestion is null
                    ? $"unknown section '{prefix}' ({keys.Count} settings){KnownHere(prefix)}{source}"
                    : $"unknown section '{prefix}' ({keys.Count} settings) — did you mean '{suggestion}'?{source}"));
            }
        }

        // In key order, so the lines about one section stand together.
        // Each key has one line (an unknown prefix or a bad value), so the sort needs no stability.
        errors.Sort(static (a, b) => StringComparer.OrdinalIgnoreCase.Compare(a.Key, b.Key));
        var ordered = new List<string>(errors.Count);
        foreach (var (_, text) in errors)
        {
            ordered.Add(text);
        }

        return new SchemaCheck(ordered, unknownSections, badValueSections);
    }

    /// <summary>Edit distance with adjacent transpositions counted as one edit (optimal string alignment), ignoring case.</summary>
    internal static int Distance(string a, string b)
    {
        a = a.ToUpperInvariant();
        b = b.ToUpperInvariant();
        var d = new int[a.Length + 1, b.Length + 1];
        for (var i = 0; i <= a.Length; i++)
        {
            d[i, 0] = i;
        }

        for (var j = 0; j <= b.Length; j++)
        {
            d[0, j] = j;
        }

        for (var i = 1; i <= a.Length; i++)
        {
            for (var j = 1; j <= b.Length; j++)
            {
                var cost = a[i - 1] == b[j - 1] ? 0 : 1;
                d[i, j] = Math.Min(Math.Min(d[i - 1, j] + 1, d[i, j - 1] + 1), d[i - 1, j - 1] + cost);
                if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1])
                {
                    d[i, j] = Math.Min(d[i, j], d[i - 2, j - 2] + 1);
                }
            }
        }

        return d[a.Length, b.Length];
    }

    /// <summary>The nearest known key for an unknown one: a close sibling by edit distance, else the same name in another section.</summary>
    private static string? Suggest(string unknownPath)
    {
        var segments = unknownPath.Split(ConfigurationPath.KeyDelimiter);
        var last = segments[^1];
        var parentPath = segments[..^1];
        var (parent, _) = Walk(KnownRoot.Value, parentPath);
        if (parent is not null)
        {
            // Up to a third of the name may be wrong (at most 3 edits): "Alert" → "Alerts", "RaiseAftreFrames" → "RaiseAfterFrames".
            var limit = Math.Clamp(last.Length / 3, 1, 3);
            var best = parent.Children.Keys
                .Select(name => (Name: name, Distance: Distance(name, last)))
                .Where(c => c.Distance <= limit)
                .OrderBy(c => c.Distance)
                .ThenBy(c => c.Name, StringComparer.Ordinal)
                .FirstOrDefault();
            if (best.Name is not null)
            {
                return string.Join(ConfigurationPath.KeyDelimiter, [.. parentPath, best.Name]);
            }
        }

        // A right name in the wrong section: "Alerts:FailLineUvRms" → "Check:FailLineUvRms".
        var elsewhere = KnownKeys().Where(k => k.Split(ConfigurationPath.KeyDelimiter)[^1].Equals(last, StringComparison.OrdinalIgnoreCase)).ToList();
        return elsewhere.Count == 1 ? elsewhere[0] : null;
    }

    /// <summary>" (known here: A, B, C)" for the section an unknown key sits in, so the reader sees the choices.</summary>
    private static string KnownHere(string unknownPath)
    {
        var segments = unknownPath.Split(ConfigurationPath.KeyDelimiter);
        var (parent, _) = Walk(KnownRoot.Value, segments[..^1]);
        if (parent is null || parent.Children.Count == 0)
        {
            return "";
        }

        var where = segments.Length == 1 ? "known sections" : $"{string.Join(ConfigurationPath.KeyDelimiter, segments[..^1])} has";
        return $" ({where}: {string.Join(", ", parent.Children.Keys.Order(StringComparer.Ordinal))})";
    }

    private static string? ValueProblem(string key, Node node, string? value)
    {
        if (value is null)
        {
            return null; // an empty section or list in a file
        }

        if (node.LeafType is not { } type)
        {
            // "Alerts": 3 — a value where a section belongs; an empty string is how some sources write an empty section.
            return value.Length == 0 ? null
                : node.Item is not null ? $"{key} is a list: write it as [ … ] in a settings file, or as {key}:0=…, {key}:1=… (got \"{value}\")."
                : $"{key} is a section of settings, not a value (got \"{value}\").";
        }

        var target = Nullable.GetUnderlyingType(type) ?? type;
        if (value.Length == 0 && (target != type || target == typeof(string)))
        {
            return null;
        }

        try
        {
            // The conversion the configuration binder itself makes.
            _ = TypeDescriptor.GetConverter(target).ConvertFromInvariantString(value);
            return null;
        }
        catch (Exception ex) when (ex is FormatException or ArgumentException or NotSupportedException or OverflowException || ex.InnerException is FormatException or OverflowException)
        {
            return $"{key} must be {Expected(target)} (got \"{value}\").";
        }
    }

    private static string Expected(Type type)
    {
        if (type.IsEnum)
        {
            return "one of " + string.Join(", ", Enum.GetNames(type));
        }

        return Type.GetTypeCode(type) switch
        {
            TypeCode.Boolean => "true or false",
            TypeCode.Byte or TypeCode.SByte or TypeCode.Int16 or TypeCode.UInt16 or TypeCode.Int32 or TypeCode.UInt32 or TypeCode.Int64 or TypeCode.UInt64 => "a whole number",
            TypeCode.Single or TypeCode.Double or TypeCode.Decimal => "a number (with a point for decimals, e.g. 2.5)",
            _ when type == typeof(TimeSpan) => "a duration as hh:mm:ss, e.g. 00:00:10",
            _ => $"a {type.Name}",
        };
    }

    /// <summary>Keys that hold a value or are empty sections: every path that is not the parent of another, in key order.</summary>
    /// <remarks>
    /// Loops over reference types rather than LINQ over key-value pairs: every start of the program runs this, and
    /// generic framework code over value-type pairs has no ReadyToRun code, so it would be compiled at run time.
    /// </remarks>
    private static List<Leaf> Leaves(IConfiguration configuration)
    {
        var all = new List<Leaf>();
        var parents = new HashSet<string>(StringComparer.OrdinalIgnoreCase);
        foreach (var (key, value) in configuration.AsEnumerable())
        {
            all.Add(new Leaf(key, value));
            var colon = key.LastIndexOf(':');
            if (colon > 0)
            {
                parents.Add(key[..colon]);
            }
        }

        // Intermediate sections: every prefix of a key, not only its direct parent.
        foreach (var parent in parents.ToList())
        {
            for (var colon = parent.LastIndexOf(':'); colon > 0; colon = parent.LastIndexOf(':', colon - 1))
            {
                parents.Add(parent[..colon]);
            }
        }

        // Configuration keys are unique (ignoring case), so the sort needs no stability.
        all.RemoveAll(leaf => parents.Contains(leaf.Key));
        all.Sort(static (a, b) => StringComparer.OrdinalIgnoreCase.Compare(a.Key, b.Key));
        return all;
    }

    private sealed record Leaf(string Key, string? Value);

    /// <summary>Follows <paramref name="segments"/> down the tree; on a miss, the node is null and depth is the failing segment.</summary>
    private static (Node? Node, int Depth) Walk(Node root, string[] segments)
    {
        var node = root;
        for (var i = 0; i < segments.Length; i++)
        {
            Node? next;
            if (node.Item is { } item)
            {
                next = int.TryParse(segments[i], NumberStyles.None, CultureInfo.InvariantCulture, out _) ? item : null;
            }
            else
            {
                next = node.Children.GetValueOrDefault(segments[i]);
            }

            if (next is null)
            {
                return (null, i);
            }

            node = next;
        }

        return (node, segments.Length);
    }

    private static void Collect(Node node, string path, List<string> keys)
    {
        if (node.LeafType is not null)
        {
            keys.Add(path);
            return;
        }

        if (node.Item is { } item)
        {
            Collect(item, path + ":*", keys);
        }

        foreach (var (name, child) in node.Children)
        {
            Collect(child, path.Length == 0 ? name : $"{path}:{name}", keys);
        }
    }

    private static Node Build(Type type) => Build(type, []);

    private static Node Build(Type type, HashSet<Type> open)
    {
        if (IsLeaf(type))
        {
            return new Node { LeafType = type };
        }

        if (ElementType(type) is { } element)
        {
            return new Node { Item = Build(element, open) };
        }

        if (!open.Add(type))
        {
            throw new InvalidOperationException($"{type.Name} contains itself; settings cannot be listed.");
        }

        var node = new Node();
        foreach (var property in type.GetProperties(BindingFlags.Public | BindingFlags.Instance))
        {
            // What the configuration binder binds: public readable properties, set directly or, for sections and
            // lists without a public setter, filled in place.
            if (property.GetIndexParameters().Length > 0 || property.GetMethod is not { IsPublic: true })
            {
                continue;
            }

            var settable = property.SetMethod is { IsPublic: true };
            if (!settable && IsLeaf(property.PropertyType))
            {
                continue;
            }

            node.Children[property.Name] = Build(property.PropertyType, open);
        }

        open.Remove(type);
        return node;
    }

    private static bool IsLeaf(Type type)
    {
        var t = Nullable.GetUnderlyingType(type) ?? type;
        return t.IsPrimitive || t.IsEnum || t == typeof(string) || t == typeof(decimal) || t == typeof(TimeSpan)
            || t == typeof(DateTime) || t == typeof(DateTimeOffset) || t == typeof(Guid) || t == typeof(Uri);
    }

    private static Type? ElementType(Type type)
    {
        if (type.IsArray)
        {
            return type.GetElementType();
        }

        if (!typeof(IEnumerable).IsAssignableFrom(type) || !type.IsGenericType)
        {
            return null;
        }

        var arguments = type.GetGenericArguments();
        if (arguments.Length != 1)
        {
            throw new InvalidOperationException($"{type.Name}: only lists are supported among settings, not maps.");
        }

        return arguments[0];
    }

    /// <summary>What <see cref="Check"/> found.</summary>
    internal sealed record SchemaCheck(IReadOnlyList<string> Errors, IReadOnlySet<string> UnknownSections, IReadOnlySet<string> BadValueSections);

    private sealed class Node
    {
        public Dictionary<string, Node> Children { get; } = new(StringComparer.OrdinalIgnoreCase);

        /// <summary>For a list: the shape of every item (keys are indexes 0, 1, …).</summary>
        public Node? Item { get; init; }

        /// <summary>For a value: its type.</summary>
        public Type? LeafType { get; init; }
    }
}
