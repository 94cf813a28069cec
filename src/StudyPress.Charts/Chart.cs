using StudyPress.Charts.Rendering;

namespace StudyPress.Charts;

/// <summary>Pixel size of a chart (CSS pixels; the PNG has twice as many in each direction).</summary>
public sealed record ChartSize(int Width, int Height)
{
    /// <summary>640 × 400.</summary>
    public static ChartSize Default { get; } = new(640, 400);
}

/// <summary>Title (the SVG title and visible heading; may be empty) and axis titles (may be empty).</summary>
public sealed record ChartLabels(string Title, string XAxis, string YAxis)
{
    /// <summary>How the chart writes the numbers in its labels and description (the report's rules; ticks keep their own decimals but the same minus sign).</summary>
    public NumberText Numbers { get; init; } = NumberText.Current;
}

/// <summary>
/// A finished chart. <see cref="ToSvg"/> and <see cref="ToPng"/> give the same picture; both are
/// byte-for-byte deterministic and independent of the fonts installed on the machine.
/// </summary>
public sealed class Chart
{
    private readonly Scene scene;

    internal Chart(Scene scene, string title, string description, Plot plot)
    {
        this.scene = scene;
        Title = title;
        Description = description;
        Plot = plot;
    }

    /// <summary>The accessible name (SVG title).</summary>
    public string Title { get; }

    /// <summary>The text description for screen readers (SVG desc): what is plotted, key numbers.</summary>
    public string Description { get; }

    public int Width => scene.Width;

    public int Height => scene.Height;

    /// <summary>The frame and its axis mappings (for tests).</summary>
    internal Plot Plot { get; }

    /// <summary>
    /// An inline SVG element (role="img", title, desc, viewBox, width/height), text as text elements
    /// in font-family "StudyPress Sans" (embed <see cref="ChartFont.CssFontFace"/> in the page).
    /// </summary>
    public string ToSvg() => SvgRenderer.Render(scene, Title, Description);

    /// <summary>Appends <see cref="ToSvg"/>'s text to <paramref name="into"/> (no string of its own: a report writes its charts straight into the page).</summary>
    public void WriteSvg(System.Text.StringBuilder into)
    {
        ArgumentNullException.ThrowIfNull(into);
        SvgRenderer.Render(into, scene, Title, Description);
    }

    /// <summary>A PNG of 2·Width × 2·Height pixels drawn with the embedded font.</summary>
    public byte[] ToPng() => PngRenderer.Render(scene);
}
