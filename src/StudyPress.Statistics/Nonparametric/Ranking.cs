namespace StudyPress.Statistics.Nonparametric;

/// <summary>Mid-ranks of pooled groups, shared by the rank procedures of this folder.</summary>
internal static class Ranking
{
    /// <summary>
    /// Ranks all observations of all groups together, 1..N, giving tied values the mean of the
    /// ranks they occupy (mid-ranks). Returns the ranks in the shape of the groups and the tie
    /// sum Σ (t³ - t) over the runs of tied values (t = run length).
    /// </summary>
    public static (double[][] Ranks, double TieSum) MidRanks(IReadOnlyList<double[]> groups)
    {
        var n = Groups.Count(groups);
        var value = new double[n];
        var group = new int[n];
        var pos = new int[n];
        var k = 0;
        for (var g = 0; g < groups.Count; g++)
        {
            for (var i = 0; i < groups[g].Length; i++)
            {
                var v = groups[g][i];
                if (!double.IsFinite(v))
                {
                    throw new ArgumentException("a value is not finite", nameof(groups));
                }

                value[k] = v;
                group[k] = g;
                pos[k] = i;
                k++;
            }
        }

        var order = Enumerable.Range(0, n).ToArray();
        Array.Sort(order, (a, b) => value[a].CompareTo(value[b]));
        var ranks = groups.Select(g => new double[g.Length]).ToArray();
        double tieSum = 0;
        var start = 0;
        while (start < n)
        {
            var end = start + 1;
            while (end < n && value[order[end]] == value[order[start]])
            {
                end++;
            }

            // Positions start..end-1 hold ranks start+1..end; their mean is (start + 1 + end) / 2.
            var mid = (start + 1 + end) / 2.0;
            for (var j = start; j < end; j++)
            {
                ranks[group[order[j]]][pos[order[j]]] = mid;
            }

            double t = end - start;
            tieSum += (t * t * t) - t;
            start = end;
        }

        return (ranks, tieSum);
    }
}
