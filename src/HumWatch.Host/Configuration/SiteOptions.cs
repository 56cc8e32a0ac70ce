namespace HumWatch.Host.Configuration;

/// <summary>Where the service runs. Bound from section "Site".</summary>
public sealed class SiteOptions
{
    /// <summary>Shown in summaries. The default is "HumWatch site".</summary>
    public string Name { get; set; } = "HumWatch site";

    /// <summary>IANA time zone of the site: recording start times in EDF headers are local, and days roll over at local midnight. The default is "UTC".</summary>
    public string TimeZone { get; set; } = "UTC";

    public TimeZoneInfo ResolveTimeZone() => TimeZoneInfo.FindSystemTimeZoneById(TimeZone);

    public IReadOnlyList<string> Validate(string prefix = "Site")
    {
        var errors = new List<string>();
        try
        {
            _ = ResolveTimeZone();
        }
        // A name that is a folder of the zone database ("Europe") or an unreadable file comes back as a SecurityException.
        catch (Exception ex) when (ex is TimeZoneNotFoundException or InvalidTimeZoneException or ArgumentException or System.Security.SecurityException)
        {
            errors.Add($"{prefix}:TimeZone \"{TimeZone}\" is not a known IANA time zone (e.g. Europe/Berlin, America/New_York, UTC).");
        }

        return errors;
    }
}
