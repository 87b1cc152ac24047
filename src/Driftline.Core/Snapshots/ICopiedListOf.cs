namespace Driftline.Core.Snapshots;

/// <summary>How <see cref="CopiedListConverter{TList, TItem}"/> makes a <typeparamref name="TList"/> of a list it read.</summary>
internal interface ICopiedListOf<TList, TItem>
    where TList : CopiedList<TItem>
{
    /// <summary>The items of <paramref name="list"/>.</summary>
    static abstract TList Of(List<TItem> list);
}
