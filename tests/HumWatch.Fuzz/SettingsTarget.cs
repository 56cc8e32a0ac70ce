using HumWatch.Host.Configuration;

namespace HumWatch.Fuzz;

/// <summary>
/// The settings loader: the input becomes a --config file layered and bound by <see cref="SettingsBuilder.Build"/>
/// (isolated from ./appsettings.json and the environment), as every command loads its settings. A
/// <see cref="ConfigurationException"/> is the accepted rejection.
/// </summary>
internal sealed class SettingsTarget : IFuzzTarget
{
    // The configuration providers keep every key and value as strings in dictionaries, after a first parse into a
    // JSON document; 64 bytes per input byte bounds both, 8 MiB the schema and binder's own tables.
    private const long FixedAllowanceBytes = 8L << 20;
    private const int AllowancePerInputByte = 64;

    private readonly string _path = Path.Combine(FuzzScratch.Folder, "settings.json");

    public string Name => "settings";

    public string Execute(byte[] input)
    {
        File.WriteAllBytes(_path, input);
        var budget = AllocationBudget.Start(input.Length, FixedAllowanceBytes, AllowancePerInputByte);
        string outcome;
        try
        {
            var settings = SettingsBuilder.Build(SettingsSources.Isolated(configFiles: [_path]));
            outcome = "accepted: site '" + settings.Site.Name + "'";
        }
        catch (ConfigurationException ex)
        {
            if (string.IsNullOrWhiteSpace(ex.Message))
            {
                throw new FuzzCheckFailedException("configuration rejected without a message");
            }

            outcome = "rejected: " + ex.Message;
        }

        budget.Check("loading the settings");
        return outcome;
    }
}
