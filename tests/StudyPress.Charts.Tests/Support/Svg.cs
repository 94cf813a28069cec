using System.Globalization;
using System.Xml.Linq;

namespace StudyPress.Charts.Tests.Support;

/// <summary>Reads chart SVG with System.Xml.Linq.</summary>
internal static class Svg
{
    public static readonly XNamespace Ns = "http://www.w3.org/2000/svg";

    public static XElement Parse(string svg) => XElement.Parse(svg);

    /// <summary>Elements whose class list contains <paramref name="cls"/>.</summary>
    public static List<XElement> ByClass(XElement root, string cls) =>
        root.Descendants().Where(e => ((string?)e.Attribute("class"))?.Split(' ').Contains(cls, StringComparer.Ordinal) == true).ToList();

    public static double D(XElement e, string attribute) =>
        double.Parse((string?)e.Attribute(attribute) ?? throw new InvalidOperationException("missing " + attribute), CultureInfo.InvariantCulture);

    public static List<(double X, double Y)> Points(XElement e) =>
        ((string)e.Attribute("points")!).Split(' ').Select(p =>
        {
            var xy = p.Split(',');
            return (double.Parse(xy[0], CultureInfo.InvariantCulture), double.Parse(xy[1], CultureInfo.InvariantCulture));
        }).ToList();

    /// <summary>Centre of a marker: circle, rect, polygon (centroid of bounding box), or group of lines.</summary>
    public static (double X, double Y) Centre(XElement e)
    {
        switch (e.Name.LocalName)
        {
            case "circle":
                return (D(e, "cx"), D(e, "cy"));
            case "rect":
                return (D(e, "x") + (D(e, "width") / 2), D(e, "y") + (D(e, "height") / 2));
            case "polygon":
                var pts = Points(e);
                return ((pts.Min(p => p.X) + pts.Max(p => p.X)) / 2, (pts.Min(p => p.Y) + pts.Max(p => p.Y)) / 2);
            default:
                var lines = e.Elements(Ns + "line").ToList();
                return ((D(lines[0], "x1") + D(lines[0], "x2")) / 2, (D(lines[0], "y1") + D(lines[0], "y2")) / 2);
        }
    }
}
