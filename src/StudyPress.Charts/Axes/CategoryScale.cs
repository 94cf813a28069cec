namespace StudyPress.Charts.Axes;

/// <summary>
/// Equal bands, one per category, in input order. A scale of crossed cells may have two tiers:
/// <see cref="Names"/> are then the inner labels (the last factor's level, drawn under each band),
/// <see cref="Outer"/> the outer label of each band (the other factors' levels, drawn once under
/// each run of bands that share it), and <see cref="Full"/> the whole cell names (the labels'
/// tooltips and the chart's description).
/// </summary>
internal sealed class CategoryScale
{
    private double p0;
    private double p1 = 1;

    public CategoryScale(IReadOnlyList<string> names)
    {
        Names = names;
        Full = names;
    }

    /// <summary>A two-tier scale; falls back to one tier of <paramref name="full"/> names unless every band has both tiers and each outer label's bands are adjacent.</summary>
    public CategoryScale(IReadOnlyList<string> full, IReadOnlyList<string?> inner, IReadOnlyList<string?> outer)
    {
        Full = full;
        Names = full;
        if (full.Count > 1 && inner.Count == full.Count && outer.Count == full.Count
            && inner.All(n => n is not null) && outer.All(n => n is not null) && Adjacent(outer!))
        {
            Names = [.. inner!];
            Outer = [.. outer!];
        }
    }

    /// <summary>The labels drawn under each band.</summary>
    public IReadOnlyList<string> Names { get; }

    /// <summary>The whole name of each band.</summary>
    public IReadOnlyList<string> Full { get; }

    /// <summary>The outer tier's label of each band, or null for a one-tier scale.</summary>
    public IReadOnlyList<string>? Outer { get; }

    public int Count => Names.Count;

    /// <summary>The runs of bands that share an outer label: the label and the first and last band.</summary>
    public IEnumerable<(string Label, int First, int Last)> OuterRuns()
    {
        if (Outer is null)
        {
            yield break;
        }

        int first = 0;
        for (int i = 1; i <= Outer.Count; i++)
        {
            if (i == Outer.Count || !string.Equals(Outer[i], Outer[first], StringComparison.Ordinal))
            {
                yield return (Outer[first], first, i - 1);
                first = i;
            }
        }
    }

    public void SetPixels(double start, double end)
    {
        p0 = start;
        p1 = end;
    }

    /// <summary>Width of one band in pixels (signed like the pixel range).</summary>
    public double Band => Count == 0 ? p1 - p0 : (p1 - p0) / Count;

    /// <summary>Pixel at the centre of band <paramref name="index"/>.</summary>
    public double Centre(int index) => p0 + ((index + 0.5) * Band);

    /// <summary>True when equal labels only occur in one run each.</summary>
    private static bool Adjacent(IReadOnlyList<string> outer)
    {
        var seen = new HashSet<string>(StringComparer.Ordinal);
        for (int i = 0; i < outer.Count; i++)
        {
            if ((i == 0 || !string.Equals(outer[i], outer[i - 1], StringComparison.Ordinal)) && !seen.Add(outer[i]))
            {
                return false;
            }
        }

        return true;
    }
}
