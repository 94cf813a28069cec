namespace StudyPress.Charts.Axes;

/// <summary>Equal bands, one per category, in input order.</summary>
internal sealed class CategoryScale(IReadOnlyList<string> names)
{
    private double p0;
    private double p1 = 1;

    public IReadOnlyList<string> Names { get; } = names;

    public int Count => Names.Count;

    public void SetPixels(double start, double end)
    {
        p0 = start;
        p1 = end;
    }

    /// <summary>Width of one band in pixels (signed like the pixel range).</summary>
    public double Band => Count == 0 ? p1 - p0 : (p1 - p0) / Count;

    /// <summary>Pixel at the centre of band <paramref name="index"/>.</summary>
    public double Centre(int index) => p0 + ((index + 0.5) * Band);
}
