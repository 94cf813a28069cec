using StudyPress.Charts.Axes;

namespace StudyPress.Charts.Rendering;

/// <summary>One legend row: a line sample (if <see cref="Line"/>) and/or a marker.</summary>
internal sealed record LegendEntry(string Label, Paint? Line, MarkerShape? Marker, string Colour, bool Filled = true,
    Paint? Swatch = null);

/// <summary>
/// The frame shared by every chart: margins measured with the chart font, the plot area, axes
/// with ticks, gridlines and labels, a title and a legend. Either axis is numeric
/// (<see cref="LinearScale"/>) or categorical (<see cref="CategoryScale"/>).
/// </summary>
internal sealed class Plot
{
    public const double TitleSize = 15;
    public const double LabelSize = 13;
    public const double TickSize = 12;
    public const double MaxCategoryLabel = 150;

    /// <summary>A vertical axis's category labels may take up to this share of the chart's width before they are shortened.</summary>
    public const double MaxCategoryShare = 0.45;

    /// <summary>The smallest text size on any chart (tick and category labels included).</summary>
    public const double MinTextSize = TickSize;
    private const double TickLength = 5;
    private const double LegendSample = 24;

    /// <summary>Space between the inner category labels and the outer tier's bracket.</summary>
    private const double OuterTierGap = 8;

    private readonly List<Element> data = [];
    private readonly List<LegendEntry> legend;
    private readonly ChartLabels labels;
    private readonly string? legendTitle;

    // Category label layout along x.
    private double xCatSize = TickSize;
    private bool xCatRotated;
    private double xCatMaxWidth = double.PositiveInfinity;
    private double yCatMaxWidth = MaxCategoryLabel;

    public Plot(ChartLabels labels, ChartSize? size, LinearScale? x, CategoryScale? xCat, LinearScale? y, CategoryScale? yCat,
        IReadOnlyList<LegendEntry>? legend = null, string? legendTitle = null)
    {
        ArgumentNullException.ThrowIfNull(labels);
        this.labels = labels;
        var s = size ?? ChartSize.Default;
        Width = s.Width;
        Height = s.Height;
        X = x;
        XCat = xCat;
        Y = y;
        YCat = yCat;
        this.legend = legend?.ToList() ?? [];
        this.legendTitle = legendTitle;
        Layout();
    }

    public int Width { get; }

    public int Height { get; }

    public LinearScale? X { get; }

    public CategoryScale? XCat { get; }

    public LinearScale? Y { get; }

    public CategoryScale? YCat { get; }

    /// <summary>Plot area, pixels.</summary>
    public double Left { get; private set; }

    public double Top { get; private set; }

    public double Right { get; private set; }

    public double Bottom { get; private set; }

    public void Add(Element e) => data.Add(e);

    /// <summary>Category label as drawn on the x axis (possibly truncated).</summary>
    internal string XCategoryText(int i) => ChartFont.Truncate(XCat!.Names[i], xCatSize, xCatMaxWidth);

    private void Layout()
    {
        double top = 10;
        if (labels.Title.Length > 0)
        {
            top += TitleSize + 8;
        }

        if (Y?.OffsetNote is not null)
        {
            top += TickSize + 4;
        }

        top = Math.Max(top, 14);

        double left = 8;
        if (labels.YAxis.Length > 0)
        {
            left += LabelSize + 8;
        }

        if (Y is not null)
        {
            left += Y.RelativeTicks.Max(t => ChartFont.MeasureWidth(Y.Label(t), TickSize)) + TickLength + 4;
        }
        else if (YCat is not null)
        {
            // The label margin grows with the longest label (measured), up to a share of the width.
            double widest = YCat.Names.Count == 0 ? 0 : YCat.Names.Max(n => ChartFont.MeasureWidth(n, TickSize));
            yCatMaxWidth = Math.Min(widest, Math.Max(MaxCategoryLabel, Width * MaxCategoryShare));
            left += yCatMaxWidth + TickLength + 4;
        }

        double right = 16;
        if (legend.Count > 0)
        {
            double widest = legend.Max(e => ChartFont.MeasureWidth(e.Label, TickSize));
            if (legendTitle is not null)
            {
                widest = Math.Max(widest, ChartFont.MeasureWidth(legendTitle, TickSize));
            }

            right += Math.Min(widest, 160) + LegendSample + 16;
        }

        double bottom = 8;
        if (labels.XAxis.Length > 0)
        {
            bottom += LabelSize + 8;
        }

        if (X is not null)
        {
            bottom += TickSize + TickLength + 6;
            if (X.OffsetNote is not null)
            {
                bottom += TickSize + 4;
            }
        }
        else if (XCat is not null && XCat.Count > 0)
        {
            double plotWidth = Width - left - right;
            double band = plotWidth / XCat.Count;
            if (XCat.Count > 24)
            {
                // Many categories: labels shrink to the smallest text size, never below.
                xCatSize = MinTextSize;
            }

            double widest = XCat.Names.Max(n => ChartFont.MeasureWidth(n, xCatSize));
            if (widest <= band - 6)
            {
                bottom += xCatSize + TickLength + 6;
            }
            else
            {
                // Rotate 45 degrees; truncate long names (full name in the label's title).
                xCatRotated = true;
                xCatMaxWidth = Math.Min(widest, 110);
                bottom += (xCatMaxWidth * Math.Sqrt(0.5)) + xCatSize + TickLength + 6;

                // The first label reaches left of its band by up to its width times cos 45°: widen
                // the left margin so that it stays inside the chart (the band narrows with it).
                double reach = (xCatMaxWidth * Math.Sqrt(0.5)) - (xCatSize * 0.3) + 2;
                double half = 1.0 / (2 * XCat.Count);
                double needed = (reach - ((Width - right) * half)) / (1 - half);
                left = Math.Max(left, needed);
            }

            if (XCat.Outer is not null)
            {
                // The outer tier: a bracket under each run of bands and its label.
                bottom += OuterTierGap + TickSize + 4;
            }
        }

        Left = left;
        Top = top;
        Right = Width - right;
        Bottom = Height - bottom;
        if (Right - Left < 40 || Bottom - Top < 40)
        {
            throw new ArgumentException("The chart size is too small for its labels.");
        }

        X?.SetPixels(Left, Right);
        XCat?.SetPixels(Left, Right);
        Y?.SetPixels(Bottom, Top);
        YCat?.SetPixels(Top, Bottom);
    }

    /// <summary>Assembles the frame, the data layer and the legend into a chart.</summary>
    public Chart ToChart(string description)
    {
        var scene = new Scene(Width, Height);
        scene.Add(new RectEl(0, 0, Width, Height, Paint.FillOnly("#FFFFFF"), "background"));
        if (labels.Title.Length > 0)
        {
            scene.Add(new TextEl(new(Left, 10 + TitleSize), labels.Title, TitleSize, Palette.Ink, Class: "chart-title"));
        }

        var grid = new List<Element>();
        var axes = new List<Element>();
        var axisPaint = Paint.StrokeOnly(Palette.Axis, 1);
        var gridPaint = Paint.StrokeOnly(Palette.Grid, 1);

        if (Y is not null)
        {
            foreach (var t in Y.RelativeTicks)
            {
                double py = Y.Map(t + Y.Offset);
                grid.Add(new LineEl(new(Left, py), new(Right, py), gridPaint));
                axes.Add(new LineEl(new(Left - TickLength, py), new(Left, py), axisPaint));
                axes.Add(new TextEl(new(Left - TickLength - 3, py + (TickSize * 0.35)), Y.Label(t), TickSize, Palette.Ink, Anchor.End, Class: "tick-label"));
            }

            if (Y.OffsetNote is not null)
            {
                axes.Add(new TextEl(new(Left, Top - 5), Y.OffsetNote, TickSize, Palette.Ink, Anchor.End, Class: "axis-offset"));
            }
        }
        else if (YCat is not null)
        {
            for (int i = 0; i < YCat.Count; i++)
            {
                double py = YCat.Centre(i);
                string full = YCat.Names[i];
                string shown = ChartFont.Truncate(full, TickSize, yCatMaxWidth);
                axes.Add(new LineEl(new(Left - TickLength, py), new(Left, py), axisPaint));
                axes.Add(new TextEl(new(Left - TickLength - 3, py + (TickSize * 0.35)), shown, TickSize, Palette.Ink, Anchor.End,
                    Tooltip: shown == full ? null : full, Class: "category-label"));
            }
        }

        if (X is not null)
        {
            foreach (var t in X.RelativeTicks)
            {
                double px = X.Map(t + X.Offset);
                grid.Add(new LineEl(new(px, Top), new(px, Bottom), gridPaint));
                axes.Add(new LineEl(new(px, Bottom), new(px, Bottom + TickLength), axisPaint));
                axes.Add(new TextEl(new(px, Bottom + TickLength + TickSize + 1), X.Label(t), TickSize, Palette.Ink, Anchor.Middle, Class: "tick-label"));
            }

            if (X.OffsetNote is not null)
            {
                axes.Add(new TextEl(new(Right, Bottom + TickLength + (2 * TickSize) + 5), X.OffsetNote, TickSize, Palette.Ink, Anchor.End, Class: "axis-offset"));
            }
        }
        else if (XCat is not null)
        {
            for (int i = 0; i < XCat.Count; i++)
            {
                double px = XCat.Centre(i);
                string full = XCat.Full[i];
                string shown = XCategoryText(i);
                string? tip = shown == full ? null : full;
                axes.Add(new LineEl(new(px, Bottom), new(px, Bottom + TickLength), axisPaint));
                if (xCatRotated)
                {
                    var at = new Pt(px + (xCatSize * 0.3), Bottom + TickLength + xCatSize);
                    axes.Add(new TextEl(at, shown, xCatSize, Palette.Ink, Anchor.End, -45, tip, "category-label"));
                }
                else
                {
                    axes.Add(new TextEl(new(px, Bottom + TickLength + xCatSize + 1), shown, xCatSize, Palette.Ink, Anchor.Middle, 0, tip, "category-label"));
                }
            }

            double tier = Bottom + TickLength + xCatSize + 6 + (xCatRotated ? xCatMaxWidth * Math.Sqrt(0.5) : 0) + OuterTierGap - 4;
            var bracket = Paint.StrokeOnly(Palette.Axis, 1);
            foreach (var (label, first, last) in XCat.OuterRuns())
            {
                double x0 = XCat.Centre(first) - (Math.Abs(XCat.Band) / 2) + 3;
                double x1 = XCat.Centre(last) + (Math.Abs(XCat.Band) / 2) - 3;
                axes.Add(new LineEl(new(x0, tier - 4), new(x0, tier), bracket, "category-group-bracket"));
                axes.Add(new LineEl(new(x0, tier), new(x1, tier), bracket, "category-group-bracket"));
                axes.Add(new LineEl(new(x1, tier - 4), new(x1, tier), bracket, "category-group-bracket"));
                string shown = ChartFont.Truncate(label, TickSize, Math.Max(x1 - x0, 0));
                axes.Add(new TextEl(new((x0 + x1) / 2, tier + TickSize + 2), shown, TickSize, Palette.Ink, Anchor.Middle, 0, shown == label ? null : label, "category-group-label"));
            }
        }

        axes.Add(new LineEl(new(Left, Bottom), new(Right, Bottom), axisPaint, "axis-x"));
        axes.Add(new LineEl(new(Left, Top), new(Left, Bottom), axisPaint, "axis-y"));
        if (labels.XAxis.Length > 0)
        {
            axes.Add(new TextEl(new((Left + Right) / 2, Height - 10), labels.XAxis, LabelSize, Palette.Ink, Anchor.Middle, Class: "axis-title"));
        }

        if (labels.YAxis.Length > 0)
        {
            var at = new Pt(8 + LabelSize, (Top + Bottom) / 2);
            axes.Add(new TextEl(at, labels.YAxis, LabelSize, Palette.Ink, Anchor.Middle, -90, Class: "axis-title"));
        }

        scene.Add(new GroupEl(grid, "grid"));
        scene.Add(new GroupEl(axes, "axes"));
        scene.Add(new GroupEl(data, "data"));
        if (legend.Count > 0)
        {
            scene.Add(new GroupEl(LegendElements(), "legend"));
        }

        return new Chart(scene, labels.Title.Length > 0 ? labels.Title : "Chart", description, this);
    }

    private List<Element> LegendElements()
    {
        var list = new List<Element>();
        double x = Right + 12;
        double y = Top + 4;
        if (legendTitle is not null)
        {
            list.Add(new TextEl(new(x, y + TickSize), ChartFont.Truncate(legendTitle, TickSize, 160 + LegendSample), TickSize, Palette.Ink));
            y += TickSize + 8;
        }

        foreach (var e in legend)
        {
            double cy = y + (TickSize / 2);
            if (e.Swatch is not null)
            {
                list.Add(new RectEl(x + 4, cy - 5, LegendSample - 8, 10, e.Swatch));
            }

            if (e.Line is not null)
            {
                list.Add(new LineEl(new(x, cy), new(x + LegendSample, cy), e.Line));
            }

            if (e.Marker is { } shape)
            {
                list.Add(Palette.Marker(shape, new(x + (LegendSample / 2), cy), 3.5, e.Colour, e.Filled));
            }

            string shown = ChartFont.Truncate(e.Label, TickSize, 160);
            list.Add(new TextEl(new(x + LegendSample + 6, cy + (TickSize * 0.35)), shown, TickSize, Palette.Ink,
                Tooltip: shown == e.Label ? null : e.Label));
            y += TickSize + 8;
        }

        return list;
    }
}
