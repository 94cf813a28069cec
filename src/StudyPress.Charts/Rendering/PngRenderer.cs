using System.Globalization;
using SkiaSharp;

namespace StudyPress.Charts.Rendering;

/// <summary>
/// Rasterises a scene with SkiaSharp's CPU backend at a fixed scale factor, with the embedded
/// typeface only, and encodes it as PNG (no time or text chunks).
/// </summary>
internal static class PngRenderer
{
    public const int Scale = 2;

    public static byte[] Render(Scene scene)
    {
        var info = new SKImageInfo(scene.Width * Scale, scene.Height * Scale, SKColorType.Rgba8888, SKAlphaType.Premul);
        using var surface = SKSurface.Create(info)
            ?? throw new InvalidOperationException("Could not create a raster surface.");
        var canvas = surface.Canvas;
        canvas.Clear(SKColors.White);
        canvas.Scale(Scale);
        foreach (var e in scene.Elements)
        {
            Draw(canvas, e);
        }

        canvas.Flush();
        using var image = surface.Snapshot();
        using var data = image.Encode(SKEncodedImageFormat.Png, 100);
        return data.ToArray();
    }

    private static void Draw(SKCanvas canvas, Element e)
    {
        switch (e)
        {
            case LineEl l:
                using (var paint = StrokePaint(l.Paint))
                {
                    if (paint is not null)
                    {
                        canvas.DrawLine(F(l.A.X), F(l.A.Y), F(l.B.X), F(l.B.Y), paint);
                    }
                }

                break;
            case PolylineEl p:
                using (var path = PathOf(p.Points, close: false))
                {
                    Stroke(canvas, path, p.Paint);
                }

                break;
            case PolygonEl p:
                using (var path = PathOf(p.Points, close: true))
                {
                    FillAndStroke(canvas, path, p.Paint);
                }

                break;
            case RectEl r:
                using (var path = new SKPath())
                {
                    path.AddRect(new SKRect(F(r.X), F(r.Y), F(r.X + r.Width), F(r.Y + r.Height)));
                    FillAndStroke(canvas, path, r.Paint);
                }

                break;
            case CircleEl c:
                using (var path = new SKPath())
                {
                    path.AddCircle(F(c.Centre.X), F(c.Centre.Y), F(c.Radius));
                    FillAndStroke(canvas, path, c.Paint);
                }

                break;
            case TextEl t:
                DrawText(canvas, t);
                break;
            case GroupEl g:
                foreach (var child in g.Children)
                {
                    Draw(canvas, child);
                }

                break;
            default:
                throw new InvalidOperationException("Unknown scene element " + e.GetType().Name);
        }
    }

    private static void DrawText(SKCanvas canvas, TextEl t)
    {
        using var font = ChartFont.CreateFont(F(t.Size));
        using var paint = new SKPaint { Color = Colour(t.Colour), IsAntialias = true, Style = SKPaintStyle.Fill };
        var align = t.Anchor switch
        {
            Anchor.Middle => SKTextAlign.Center,
            Anchor.End => SKTextAlign.Right,
            _ => SKTextAlign.Left,
        };
        canvas.Save();
        if (t.Rotate != 0)
        {
            canvas.RotateDegrees(F(t.Rotate), F(t.At.X), F(t.At.Y));
        }

        canvas.DrawText(BidiText.WithoutIsolates(t.Text), F(t.At.X), F(t.At.Y), align, font, paint);
        canvas.Restore();
    }

    private static SKPath PathOf(IReadOnlyList<Pt> pts, bool close)
    {
        var path = new SKPath();
        for (int i = 0; i < pts.Count; i++)
        {
            if (i == 0)
            {
                path.MoveTo(F(pts[i].X), F(pts[i].Y));
            }
            else
            {
                path.LineTo(F(pts[i].X), F(pts[i].Y));
            }
        }

        if (close)
        {
            path.Close();
        }

        return path;
    }

    private static void FillAndStroke(SKCanvas canvas, SKPath path, Paint p)
    {
        if (p.Fill is not null)
        {
            var colour = Colour(p.Fill);
            colour = colour.WithAlpha((byte)Math.Round(255 * Math.Clamp(p.FillOpacity, 0, 1)));
            using var fill = new SKPaint { Color = colour, IsAntialias = true, Style = SKPaintStyle.Fill };
            canvas.DrawPath(path, fill);
        }

        Stroke(canvas, path, p);
    }

    private static void Stroke(SKCanvas canvas, SKPath path, Paint p)
    {
        using var paint = StrokePaint(p);
        if (paint is not null)
        {
            canvas.DrawPath(path, paint);
        }
    }

    private static SKPaint? StrokePaint(Paint p)
    {
        if (p.Stroke is null || p.StrokeWidth <= 0)
        {
            return null;
        }

        var paint = new SKPaint
        {
            Color = Colour(p.Stroke),
            IsAntialias = true,
            Style = SKPaintStyle.Stroke,
            StrokeWidth = F(p.StrokeWidth),
            StrokeCap = SKStrokeCap.Butt,
            StrokeJoin = SKStrokeJoin.Miter,
        };
        if (p.Dash is { Count: > 0 })
        {
            var intervals = p.Dash.Count % 2 == 0 ? p.Dash : p.Dash.Concat(p.Dash).ToList();
            paint.PathEffect = SKPathEffect.CreateDash(intervals.Select(F).ToArray(), 0);
        }

        return paint;
    }

    /// <summary>Coordinates rounded to 2 decimals first, exactly as the SVG writes them.</summary>
    private static float F(double v) => (float)Math.Round(v, 2, MidpointRounding.AwayFromZero);

    private static SKColor Colour(string hex) =>
        SKColor.Parse(hex.ToString(CultureInfo.InvariantCulture));
}
