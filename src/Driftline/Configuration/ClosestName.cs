namespace Driftline.Configuration;

/// <summary>The "did you mean" guess for a misspelt name.</summary>
internal static class ClosestName
{
    /// <summary>
    /// The candidate nearest to <paramref name="given"/> by edit distance (Levenshtein 1966,
    /// ignoring case), or null when none is within a third of the name's length (at least 2):
    /// a guess further off than that is more often wrong than helpful (common practice).
    /// </summary>
    public static string? Find(string given, IEnumerable<string> candidates)
    {
        int limit = Math.Max(2, given.Length / 3);
        string? best = null;
        int bestDistance = int.MaxValue;
        foreach (var candidate in candidates)
        {
            int d = Distance(given.ToUpperInvariant(), candidate.ToUpperInvariant());
            if (d < bestDistance)
            {
                (best, bestDistance) = (candidate, d);
            }
        }
        return bestDistance <= limit ? best : null;
    }

    /// <summary>Edits (insert, delete, substitute) that turn <paramref name="a"/> into <paramref name="b"/>.</summary>
    public static int Distance(string a, string b)
    {
        var previous = new int[b.Length + 1];
        var current = new int[b.Length + 1];
        for (int j = 0; j <= b.Length; j++)
        {
            previous[j] = j;
        }
        for (int i = 1; i <= a.Length; i++)
        {
            current[0] = i;
            for (int j = 1; j <= b.Length; j++)
            {
                int substitute = previous[j - 1] + (a[i - 1] == b[j - 1] ? 0 : 1);
                current[j] = Math.Min(substitute, Math.Min(previous[j], current[j - 1]) + 1);
            }
            (previous, current) = (current, previous);
        }
        return previous[b.Length];
    }
}
