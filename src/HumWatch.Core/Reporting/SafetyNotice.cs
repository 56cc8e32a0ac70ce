namespace HumWatch.Core.Reporting;

/// <summary>The caution that accompanies every cause or remedy HumWatch suggests.</summary>
public static class SafetyNotice
{
    public const string Text =
        "HumWatch is a recording-quality aid, not a medical device, and makes no diagnosis. " +
        "Its hints concern the recording setup only; any change to mains wiring or to medical electrical " +
        "equipment is for qualified staff, following local codes and the equipment's instructions.";
}
