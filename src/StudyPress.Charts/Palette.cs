using StudyPress.Charts.Rendering;

namespace StudyPress.Charts;

/// <summary>Shape of a point marker; the charts pair colours with shapes so they read in grey.</summary>
internal enum MarkerShape
{
    Circle,
    Square,
    Triangle,
    Diamond,
    TriangleDown,
    Plus,
    Cross,
}

/// <summary>
/// Colour-blind-safe colours: the eight-colour set of Okabe, M., &amp; Ito, K. (2008). Color
/// Universal Design (CUD): How to make figures and presentations that are friendly to colorblind
/// people. Ordered for drawing on white (yellow last), each series also gets its own marker shape
/// and dash pattern so charts read in black and white.
/// </summary>
internal static class Palette
{
    public const string Black = "#000000";
    public const string Orange = "#E69F00";
    public const string SkyBlue = "#56B4E9";
    public const string BluishGreen = "#009E73";
    public const string Yellow = "#F0E442";
    public const string Blue = "#0072B2";
    public const string Vermillion = "#D55E00";
    public const string ReddishPurple = "#CC79A7";

    public const string Ink = "#222222";
    public const string Axis = "#444444";
    public const string Grid = "#E6E6E6";
    public const string Muted = "#888888";

    private static readonly string[] SeriesColours =
        [Blue, Vermillion, BluishGreen, ReddishPurple, Orange, SkyBlue, Black, Yellow];

    private static readonly MarkerShape[] Shapes =
        [MarkerShape.Circle, MarkerShape.Triangle, MarkerShape.Square, MarkerShape.Diamond,
         MarkerShape.TriangleDown, MarkerShape.Plus, MarkerShape.Cross];

    private static readonly double[][] Dashes =
        [[], [6, 3], [2, 2], [8, 3, 2, 3], [1, 3], [10, 4], [4, 2, 1, 2, 1, 2]];

    public static string Colour(int series) => SeriesColours[series % SeriesColours.Length];

    public static MarkerShape Shape(int series) => Shapes[series % Shapes.Length];

    public static IReadOnlyList<double> Dash(int series) => Dashes[series % Dashes.Length];

    /// <summary>A marker of the given shape and radius at a point.</summary>
    public static Element Marker(MarkerShape shape, Pt c, double r, string colour, bool filled, string? cls = null)
    {
        var paint = new Paint(colour, filled ? colour : "#FFFFFF", 1.2);
        double x = c.X, y = c.Y;
        switch (shape)
        {
            case MarkerShape.Circle:
                return new CircleEl(c, r, paint, cls);
            case MarkerShape.Square:
                double s = r * 0.9;
                return new RectEl(x - s, y - s, 2 * s, 2 * s, paint, cls);
            case MarkerShape.Triangle:
                return new PolygonEl([new(x, y - (r * 1.15)), new(x + r, y + (r * 0.75)), new(x - r, y + (r * 0.75))], paint, cls);
            case MarkerShape.TriangleDown:
                return new PolygonEl([new(x, y + (r * 1.15)), new(x + r, y - (r * 0.75)), new(x - r, y - (r * 0.75))], paint, cls);
            case MarkerShape.Diamond:
                return new PolygonEl([new(x, y - (r * 1.25)), new(x + r, y), new(x, y + (r * 1.25)), new(x - r, y)], paint, cls);
            case MarkerShape.Plus:
                var plus = Paint.StrokeOnly(colour, 1.6);
                return new GroupEl([new LineEl(new(x - r, y), new(x + r, y), plus), new LineEl(new(x, y - r), new(x, y + r), plus)], cls);
            default:
                var cross = Paint.StrokeOnly(colour, 1.6);
                double d = r * 0.85;
                return new GroupEl([new LineEl(new(x - d, y - d), new(x + d, y + d), cross), new LineEl(new(x - d, y + d), new(x + d, y - d), cross)], cls);
        }
    }
}
