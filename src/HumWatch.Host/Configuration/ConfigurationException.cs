namespace HumWatch.Host.Configuration;

/// <summary>Configuration that cannot be used; the message names the file or key (one line per problem).</summary>
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
