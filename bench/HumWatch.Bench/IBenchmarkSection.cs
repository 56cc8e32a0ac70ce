namespace HumWatch.Bench;

/// <summary>One benchmark section, selected by name on the command line.</summary>
internal interface IBenchmarkSection
{
    /// <summary>Name typed as the first argument (e.g. "welch").</summary>
    string Name { get; }

    /// <summary>One line for the usage text.</summary>
    string Description { get; }

    /// <summary>Runs the section with the remaining arguments; returns the process exit code.</summary>
    int Run(string[] args);
}
