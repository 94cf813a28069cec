using System.Globalization;
using System.Text;

namespace StudyPress.Charts.Rendering;

/// <summary>
/// Writes a scene as one inline SVG element. Deterministic: invariant-culture numbers rounded to
/// two decimals, no ids, no timestamps, attributes in a fixed order. Uses presentation attributes
/// only (no style attribute), so a strict Content-Security-Policy accepts it.
/// </summary>
internal static class SvgRenderer
{
    public static string Render(Scene scene, string title, string description)
    {
        var sb = new StringBuilder(8192);
        Render(sb, scene, title, description);
        return sb.ToString();
    }

    /// <summary>Appends what <see cref="Render(Scene, string, string)"/> returns to <paramref name="sb"/>.</summary>
    public static void Render(StringBuilder sb, Scene scene, string title, string description)
    {
        sb.Append("<svg xmlns=\"http://www.w3.org/2000/svg\" class=\"studypress-chart\" role=\"img\" width=\"")
          .AppendN(scene.Width).Append("\" height=\"").AppendN(scene.Height)
          .Append("\" viewBox=\"0 0 ").AppendN(scene.Width).Append(' ').AppendN(scene.Height)
          .Append("\" font-family=\"").Append(ChartFont.FamilyName).Append("\">\n");
        sb.Append("<title>").Append(Esc(BidiText.Isolate(title))).Append("</title>\n");
        sb.Append("<desc>").Append(Esc(BidiText.Isolate(description))).Append("</desc>\n");
        foreach (var e in scene.Elements)
        {
            Write(sb, e, 0);
        }

        sb.Append("</svg>\n");
    }

    private static void Write(StringBuilder sb, Element e, int depth)
    {
        sb.Append(' ', depth);
        switch (e)
        {
            case LineEl l:
                sb.Append("<line");
                Cls(sb, l.Class);
                sb.Append(" x1=\"").AppendN(l.A.X).Append("\" y1=\"").AppendN(l.A.Y)
                  .Append("\" x2=\"").AppendN(l.B.X).Append("\" y2=\"").AppendN(l.B.Y).Append('"');
                PaintAttrs(sb, l.Paint with { Fill = null });
                sb.Append("/>\n");
                break;
            case PolylineEl p:
                sb.Append("<polyline");
                Cls(sb, p.Class);
                Points(sb, p.Points);
                PaintAttrs(sb, p.Paint with { Fill = null });
                sb.Append("/>\n");
                break;
            case PolygonEl p:
                sb.Append("<polygon");
                Cls(sb, p.Class);
                Points(sb, p.Points);
                PaintAttrs(sb, p.Paint);
                sb.Append("/>\n");
                break;
            case RectEl r:
                sb.Append("<rect");
                Cls(sb, r.Class);
                sb.Append(" x=\"").AppendN(r.X).Append("\" y=\"").AppendN(r.Y)
                  .Append("\" width=\"").AppendN(r.Width).Append("\" height=\"").AppendN(r.Height).Append('"');
                PaintAttrs(sb, r.Paint);
                sb.Append("/>\n");
                break;
            case CircleEl c:
                sb.Append("<circle");
                Cls(sb, c.Class);
                sb.Append(" cx=\"").AppendN(c.Centre.X).Append("\" cy=\"").AppendN(c.Centre.Y)
                  .Append("\" r=\"").AppendN(c.Radius).Append('"');
                PaintAttrs(sb, c.Paint);
                sb.Append("/>\n");
                break;
            case TextEl t:
                sb.Append("<text");
                Cls(sb, t.Class);
                sb.Append(" x=\"").AppendN(t.At.X).Append("\" y=\"").AppendN(t.At.Y)
                  .Append("\" font-size=\"").AppendN(t.Size).Append("\" fill=\"").Append(t.Colour).Append('"');
                if (t.Anchor != Anchor.Start)
                {
                    sb.Append(" text-anchor=\"").Append(t.Anchor == Anchor.Middle ? "middle" : "end").Append('"');
                }

                if (t.Rotate != 0)
                {
                    sb.Append(" transform=\"rotate(").AppendN(t.Rotate).Append(' ').AppendN(t.At.X).Append(' ')
                      .AppendN(t.At.Y).Append(")\"");
                }

                sb.Append('>');
                if (t.Tooltip is not null)
                {
                    sb.Append("<title>").Append(Esc(BidiText.Isolate(t.Tooltip))).Append("</title>");
                }

                sb.Append(Esc(BidiText.Isolate(t.Text))).Append("</text>\n");
                break;
            case GroupEl g:
                sb.Append("<g");
                Cls(sb, g.Class);
                sb.Append(">\n");
                if (g.Title is not null)
                {
                    sb.Append(' ', depth + 1).Append("<title>").Append(Esc(BidiText.Isolate(g.Title))).Append("</title>\n");
                }

                foreach (var child in g.Children)
                {
                    Write(sb, child, depth + 1);
                }

                sb.Append(' ', depth).Append("</g>\n");
                break;
            default:
                throw new InvalidOperationException("Unknown scene element " + e.GetType().Name);
        }
    }

    private static void Cls(StringBuilder sb, string? cls)
    {
        if (cls is not null)
        {
            sb.Append(" class=\"").Append(Esc(cls)).Append('"');
        }
    }

    private static void Points(StringBuilder sb, IReadOnlyList<Pt> pts)
    {
        sb.Append(" points=\"");
        for (int i = 0; i < pts.Count; i++)
        {
            if (i > 0)
            {
                sb.Append(' ');
            }

            sb.AppendN(pts[i].X).Append(',').AppendN(pts[i].Y);
        }

        sb.Append('"');
    }

    private static void PaintAttrs(StringBuilder sb, Paint p)
    {
        sb.Append(" fill=\"").Append(p.Fill ?? "none").Append('"');
        if (p.Fill is not null && p.FillOpacity < 1)
        {
            sb.Append(" fill-opacity=\"").AppendN(p.FillOpacity).Append('"');
        }

        if (p.Stroke is not null && p.StrokeWidth > 0)
        {
            sb.Append(" stroke=\"").Append(p.Stroke).Append("\" stroke-width=\"").AppendN(p.StrokeWidth).Append('"');
            if (p.Dash is { Count: > 0 })
            {
                sb.Append(" stroke-dasharray=\"").AppendJoin(' ', p.Dash.Select(N)).Append('"');
            }
        }
    }

    /// <summary>Invariant number rounded to 2 decimals, no trailing zeros, no negative zero.</summary>
    internal static string N(double v) => Rounded(v).ToString("0.##", CultureInfo.InvariantCulture);

    /// <summary>Appends <see cref="N"/>'s text, formatted straight into the builder (no string of its own).</summary>
    private static StringBuilder AppendN(this StringBuilder sb, double v) =>
        sb.Append(CultureInfo.InvariantCulture, $"{Rounded(v):0.##}");

    private static double Rounded(double v)
    {
        double r = Math.Round(v, 2, MidpointRounding.AwayFromZero);
        return r == 0 ? 0 : r;
    }

    private static string Esc(string s) =>
        s.Replace("&", "&amp;", StringComparison.Ordinal).Replace("<", "&lt;", StringComparison.Ordinal)
         .Replace(">", "&gt;", StringComparison.Ordinal).Replace("\"", "&quot;", StringComparison.Ordinal);
}
