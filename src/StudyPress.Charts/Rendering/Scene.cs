namespace StudyPress.Charts.Rendering;

/// <summary>A point in chart pixels (origin top left, y down).</summary>
internal readonly record struct Pt(double X, double Y);

/// <summary>How a shape is stroked and filled. Colours are "#rrggbb"; null means none.</summary>
internal sealed record Paint(string? Stroke, string? Fill = null, double StrokeWidth = 1,
    IReadOnlyList<double>? Dash = null, double FillOpacity = 1)
{
    public static Paint StrokeOnly(string colour, double width = 1, IReadOnlyList<double>? dash = null) =>
        new(colour, null, width, dash);

    public static Paint FillOnly(string colour, double opacity = 1) => new(null, colour, 0, null, opacity);
}

internal enum Anchor
{
    Start,
    Middle,
    End,
}

/// <summary>One drawable item of a chart scene; <see cref="Class"/> becomes the SVG class attribute.</summary>
internal abstract record Element(string? Class);

internal sealed record LineEl(Pt A, Pt B, Paint Paint, string? Class = null) : Element(Class);

internal sealed record PolylineEl(IReadOnlyList<Pt> Points, Paint Paint, string? Class = null) : Element(Class);

internal sealed record PolygonEl(IReadOnlyList<Pt> Points, Paint Paint, string? Class = null) : Element(Class);

internal sealed record RectEl(double X, double Y, double Width, double Height, Paint Paint, string? Class = null)
    : Element(Class);

internal sealed record CircleEl(Pt Centre, double Radius, Paint Paint, string? Class = null) : Element(Class);

/// <summary>Text with its baseline at <see cref="At"/>, rotated by <see cref="Rotate"/> degrees
/// (clockwise) about that point; <see cref="Tooltip"/> becomes a child title (e.g. a full label).</summary>
internal sealed record TextEl(Pt At, string Text, double Size, string Colour, Anchor Anchor = Anchor.Start,
    double Rotate = 0, string? Tooltip = null, string? Class = null) : Element(Class);

/// <summary>A group of elements, an SVG g with an optional class and title.</summary>
internal sealed record GroupEl(IReadOnlyList<Element> Children, string? Class = null, string? Title = null)
    : Element(Class);

/// <summary>A complete chart picture in pixel coordinates.</summary>
internal sealed class Scene(int width, int height)
{
    public int Width { get; } = width;

    public int Height { get; } = height;

    public List<Element> Elements { get; } = [];

    public void Add(Element e) => Elements.Add(e);
}
