using System.Globalization;

namespace StudyPress.Charts.Axes;

/// <summary>
/// A numeric axis: a nice range that contains every value it was built from, ticks and their
/// invariant-culture labels, and the mapping to pixels once <see cref="SetPixels"/> is called.
/// </summary>
/// <remarks>
/// Awkward data: a zero range (constant data) is padded by 10 % of the value (or ±1 around 0);
/// when the labels would need more than about six significant digits (e.g. 1000000000000.1 to
/// 1000000000000.5) the ticks are labelled relative to a round <see cref="Offset"/>, which the axis
/// shows as a note ("+1000000000000"); very large or very small magnitudes use "e" notation.
/// Nothing is clipped: the range always includes every value.
/// </remarks>
internal sealed class LinearScale
{
    private double p0;
    private double p1 = 1;

    private LinearScale(double offset, NiceRange range)
    {
        Offset = offset;
        Range = range;
    }

    /// <summary>Subtracted from values before they are placed or labelled (0 when not needed).</summary>
    public double Offset { get; }

    /// <summary>The nice range in offset-relative units.</summary>
    public NiceRange Range { get; }

    /// <summary>The axis minimum (absolute units).</summary>
    public double Min => Offset + Range.Min;

    /// <summary>The axis maximum (absolute units).</summary>
    public double Max => Offset + Range.Max;

    /// <summary>Builds a scale containing all finite values given (at least one), with ~ticks ticks.</summary>
    public static LinearScale Containing(IEnumerable<double> values, int ticks = 5, bool includeZero = false)
    {
        double lo = double.PositiveInfinity, hi = double.NegativeInfinity;
        foreach (var v in values)
        {
            if (double.IsFinite(v))
            {
                lo = Math.Min(lo, v);
                hi = Math.Max(hi, v);
            }
        }

        if (double.IsPositiveInfinity(lo))
        {
            lo = 0;
            hi = 1;
        }

        if (includeZero)
        {
            lo = Math.Min(lo, 0);
            hi = Math.Max(hi, 0);
        }

        return FromBounds(lo, hi, ticks);
    }

    /// <summary>Builds a scale for [lo, hi]; lo == hi is padded.</summary>
    public static LinearScale FromBounds(double lo, double hi, int ticks = 5)
    {
        if (lo > hi)
        {
            (lo, hi) = (hi, lo);
        }

        double magnitude = Math.Max(Math.Abs(lo), Math.Abs(hi));
        if (hi - lo <= magnitude * 1e-13 || hi - lo == 0)
        {
            // Constant data: pad around the value.
            double pad = magnitude == 0 ? 1 : magnitude * 0.1;
            lo -= pad;
            hi += pad;
        }

        var plain = NiceNumbers.Loose(lo, hi, ticks);
        double maxAbs = Math.Max(Math.Abs(plain.Min), Math.Abs(plain.Max));
        if (maxAbs / plain.Step < 1e5)
        {
            return new LinearScale(0, plain);
        }

        // Labels would need too many digits: label relative to a round offset M·floor(lo/M),
        // M the power of ten just above the data range.
        double m = Math.Pow(10, Math.Floor(Math.Log10(hi - lo)) + 1);
        double offset = Math.Floor(lo / m) * m;
        var rel = NiceNumbers.Loose(lo - offset, hi - offset, ticks);
        return new LinearScale(offset, rel) { OffsetDigits = Math.Max(0, -(int)Math.Floor(Math.Log10(m))) };
    }

    private int OffsetDigits { get; init; }

    /// <summary>Tick values in absolute units.</summary>
    public IReadOnlyList<double> Ticks => Range.Ticks().Select(t => t + Offset).ToList();

    /// <summary>Tick values relative to the offset (what the labels show).</summary>
    public IReadOnlyList<double> RelativeTicks => Range.Ticks();

    /// <summary>Sets the pixel positions of the axis minimum and maximum.</summary>
    public void SetPixels(double pixelAtMin, double pixelAtMax)
    {
        p0 = pixelAtMin;
        p1 = pixelAtMax;
    }

    public double PixelAtMin => p0;

    public double PixelAtMax => p1;

    /// <summary>Pixel of an absolute value.</summary>
    public double Map(double value) => p0 + (((value - Offset) - Range.Min) / (Range.Max - Range.Min) * (p1 - p0));

    /// <summary>The note shown at the axis when an offset is used, e.g. "+1000000000000", else null.</summary>
    public string? OffsetNote => Offset == 0 ? null
        : (Offset > 0 ? "+" : "\u2212") + Math.Abs(Offset).ToString("F" + OffsetDigits.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);

    /// <summary>Label of a relative tick value.</summary>
    public string Label(double relativeTick)
    {
        double maxAbs = Math.Max(Math.Abs(Range.Min), Math.Abs(Range.Max));
        if (relativeTick == 0)
        {
            return "0";
        }

        if (maxAbs >= 1e6 || maxAbs < 1e-3)
        {
            // e notation with enough mantissa digits to tell neighbouring ticks apart.
            int e = (int)Math.Floor(Math.Log10(Math.Abs(relativeTick)));
            int digits = Math.Clamp(e - (int)Math.Floor(Math.Log10(Range.Step)), 0, 10);
            double mantissa = relativeTick / Math.Pow(10, e);
            return Minus(mantissa.ToString("F" + digits.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture)
                + "e" + e.ToString(CultureInfo.InvariantCulture));
        }

        return Minus(relativeTick.ToString("F" + Range.FractionDigits.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture));
    }

    /// <summary>Typographic minus sign instead of a hyphen (<see cref="NumberText.Signed"/>).</summary>
    internal static string Minus(string s) => NumberText.Signed(s);
}
