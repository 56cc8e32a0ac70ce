namespace HumWatch.Host.Notify;

/// <summary>How a webhook address is shown in logs and messages: without user info, query or fragment (which may hold secrets); a query or fragment shows as "?…".</summary>
internal static class WebhookAddress
{
    public static string Redact(string? url)
    {
        if (!Uri.TryCreate(url, UriKind.Absolute, out var uri))
        {
            // Not an address: show its start only, in case it is a pasted token.
            var text = url ?? "";
            return text.Length <= 24 ? text : text[..24] + "…";
        }

        var shown = uri.GetComponents(UriComponents.Scheme | UriComponents.Host | UriComponents.Port | UriComponents.Path, UriFormat.UriEscaped);
        return uri.Query.Length > 0 || uri.Fragment.Length > 0 ? shown + "?…" : shown;
    }
}
