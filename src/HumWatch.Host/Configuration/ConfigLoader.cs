using HumWatch.Core.Analysis;
using HumWatch.Core.Reporting;
using Microsoft.Extensions.Configuration;

namespace HumWatch.Host.Configuration;

/// <summary>Builds configuration from embedded defaults, JSON files and overrides, and binds the core option classes.</summary>
public static class ConfigLoader
{
    /// <summary>Layers the given JSON files in order (later wins), then the in-memory overrides.</summary>
    /// <exception cref="ConfigurationException">A file is missing or is not valid JSON; the message names it.</exception>
    public static IConfigurationRoot Build(IEnumerable<string> jsonFiles, IDictionary<string, string?>? overrides = null)
    {
        ArgumentNullException.ThrowIfNull(jsonFiles);
        var builder = new ConfigurationBuilder();
        foreach (var file in jsonFiles)
        {
            var full = Path.GetFullPath(file);
            if (!File.Exists(full))
            {
                throw new ConfigurationException($"{file}: configuration file not found.");
            }

            builder.AddJsonFile(full, optional: false, reloadOnChange: false);
        }

        if (overrides is not null)
        {
            builder.AddInMemoryCollection(overrides);
        }

        try
        {
            return builder.Build();
        }
        catch (InvalidDataException ex)
        {
            throw new ConfigurationException($"configuration: {ex.Message}", ex);
        }
        catch (FormatException ex)
        {
            throw new ConfigurationException($"configuration: {ex.Message}", ex);
        }
    }

    /// <summary>Binds section "Analysis"; lists given in configuration replace the defaults rather than extend them.</summary>
    public static AnalysisOptions BindAnalysis(IConfiguration configuration)
    {
        ArgumentNullException.ThrowIfNull(configuration);
        var options = new AnalysisOptions();
        var section = configuration.GetSection("Analysis");
        var sources = section.GetSection("Sources");

        // The binder appends to a list that already has items; a configured list must replace the default one.
        if (sources.GetSection(nameof(options.Sources.DisplayRatesHz)).Exists())
        {
            options.Sources.DisplayRatesHz.Clear();
        }

        if (sources.GetSection(nameof(options.Sources.SiteTones)).Exists())
        {
            options.Sources.SiteTones.Clear();
        }

        BindStrict(section, options, "Analysis");
        return options;
    }

    /// <summary>Binds section "Check".</summary>
    public static CheckLimits BindCheckLimits(IConfiguration configuration)
    {
        ArgumentNullException.ThrowIfNull(configuration);
        var limits = new CheckLimits();
        BindStrict(configuration.GetSection("Check"), limits, "Check");
        return limits;
    }

    /// <summary>Binds, turning the binder's conversion errors into one line that names the key.</summary>
    public static void BindStrict(IConfigurationSection section, object target, string name)
    {
        ArgumentNullException.ThrowIfNull(section);
        try
        {
            section.Bind(target, o => o.ErrorOnUnknownConfiguration = true);
        }
        catch (InvalidOperationException ex)
        {
            throw new ConfigurationException($"{name}: {ex.Message}", ex);
        }
    }
}

/// <summary>Configuration that cannot be used; the message names the file or key.</summary>
public sealed class ConfigurationException : Exception
{
    public ConfigurationException(string message)
        : base(message)
    {
    }

    public ConfigurationException(string message, Exception inner)
        : base(message, inner)
    {
    }
}
