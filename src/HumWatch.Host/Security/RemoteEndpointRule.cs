namespace HumWatch.Host.Security;

/// <summary>The one wording of the refusal of an off-host socket without CURVE keys, shared by ingest and publishing.</summary>
internal static class RemoteEndpointRule
{
    /// <summary>The start-up error: names the endpoint, the setting that adds keys, and the flag that accepts the risk.</summary>
    public static string Refusal(string addressKey, string address, string keySetting, string insecureSetting) =>
        $"{addressKey} '{address}' is reachable from other hosts but has no CURVE keys, so its traffic would be unencrypted and unauthenticated. " +
        $"Set {keySetting} to a key pair file (make one with `humwatch keys new FILE`), " +
        $"or set {insecureSetting} = true to accept that risk on a trusted network; or use a loopback address (127.0.0.1).";
}
