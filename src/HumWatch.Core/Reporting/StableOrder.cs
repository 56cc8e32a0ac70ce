namespace HumWatch.Core.Reporting;

/// <summary>
/// Stable sorting without LINQ's ordered iterators: ThenBy goes through a generic virtual method, which a precompiled
/// program cannot hold and so compiles at run time — milliseconds that a one-shot check pays on every call.
/// </summary>
internal static class StableOrder
{
    /// <summary>A new list of <paramref name="items"/> in <paramref name="order"/>; items that compare equal keep their order.</summary>
    public static List<T> Sorted<T>(List<T> items, Comparison<T> order)
    {
        var indexed = new (T Item, int Index)[items.Count];
        for (var i = 0; i < indexed.Length; i++)
        {
            indexed[i] = (items[i], i);
        }

        Array.Sort(indexed, (a, b) =>
        {
            var byOrder = order(a.Item, b.Item);
            return byOrder != 0 ? byOrder : a.Index.CompareTo(b.Index);
        });
        var sorted = new List<T>(indexed.Length);
        foreach (var (item, _) in indexed)
        {
            sorted.Add(item);
        }

        return sorted;
    }
}
