namespace HumWatch.Core.Lines;

/// <summary>
/// In-place sort with a struct comparer that is never boxed (MemoryExtensions.Sort boxes the comparer and wraps it in a
/// delegate on every call, which would allocate per frame). Insertion sort for short spans, heapsort otherwise.
/// </summary>
internal static class NoAllocSort
{
    private const int InsertionLimit = 16;

    public static void Sort<T, TComparer>(Span<T> items, TComparer comparer)
        where TComparer : struct, IComparer<T>
    {
        if (items.Length <= InsertionLimit)
        {
            InsertionSort(items, comparer);
            return;
        }

        for (var i = (items.Length / 2) - 1; i >= 0; i--)
        {
            SiftDown(items, i, items.Length, comparer);
        }

        for (var end = items.Length - 1; end > 0; end--)
        {
            (items[0], items[end]) = (items[end], items[0]);
            SiftDown(items, 0, end, comparer);
        }
    }

    private static void InsertionSort<T, TComparer>(Span<T> items, TComparer comparer)
        where TComparer : struct, IComparer<T>
    {
        for (var i = 1; i < items.Length; i++)
        {
            var item = items[i];
            var j = i - 1;
            while (j >= 0 && comparer.Compare(items[j], item) > 0)
            {
                items[j + 1] = items[j];
                j--;
            }

            items[j + 1] = item;
        }
    }

    private static void SiftDown<T, TComparer>(Span<T> items, int root, int length, TComparer comparer)
        where TComparer : struct, IComparer<T>
    {
        while (true)
        {
            var child = (2 * root) + 1;
            if (child >= length)
            {
                return;
            }

            if (child + 1 < length && comparer.Compare(items[child], items[child + 1]) < 0)
            {
                child++;
            }

            if (comparer.Compare(items[root], items[child]) >= 0)
            {
                return;
            }

            (items[root], items[child]) = (items[child], items[root]);
            root = child;
        }
    }
}
