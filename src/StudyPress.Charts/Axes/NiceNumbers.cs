namespace StudyPress.Charts.Axes;

/// <summary>
/// "Nice" axis ranges and tick steps: Heckbert, P. S. (1990). Nice numbers for graph labels.
/// In A. S. Glassner (Ed.), Graphics Gems (pp. 61–63, 657–659). Academic Press.
/// Loose labelling: the range is widened to whole multiples of a step of 1, 2 or 5 × 10^k.
/// </summary>
internal static class NiceNumbers
{
    /// <summary>
    /// Heckbert's nicenum: a number of the form 1, 2, 5 or 10 × 10^k approximately equal to
    /// <paramref name="x"/> (&gt; 0); rounded when <paramref name="round"/>, else the ceiling.
    /// </summary>
    public static double Nice(double x, bool round)
    {
        if (!(x > 0) || double.IsInfinity(x))
        {
            throw new ArgumentOutOfRangeException(nameof(x), "Nice numbers need a positive finite value.");
        }

        double exp = Math.Floor(Math.Log10(x));
        double pow = Math.Pow(10, exp);
        double f = x / pow;
        double nf;
        if (round)
        {
            nf = f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10;
        }
        else
        {
            nf = f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10;
        }

        return nf * pow;
    }

    /// <summary>
    /// Heckbert's loose labelling of [min, max] with about <paramref name="ticks"/> ticks:
    /// step d = nice(nice(max - min, false) / (ticks - 1), true); axis from floor(min/d)·d to
    /// ceil(max/d)·d; fraction digits max(−floor(log10 d), 0). Needs min &lt; max.
    /// </summary>
    public static NiceRange Loose(double min, double max, int ticks = 5)
    {
        if (!(min < max) || !double.IsFinite(min) || !double.IsFinite(max))
        {
            throw new ArgumentException("Loose labelling needs finite min < max.");
        }

        ticks = Math.Max(ticks, 2);
        double range = Nice(max - min, round: false);
        double d = Nice(range / (ticks - 1), round: true);
        // A tiny tolerance keeps a value that equals a tick up to rounding on that tick.
        double kLo = Math.Floor((min / d) + 1e-9);
        double kHi = Math.Ceiling((max / d) - 1e-9);
        int fraction = Math.Max(-(int)Math.Floor(Math.Log10(d)), 0);
        return new NiceRange(kLo * d, kHi * d, d, (long)kLo, (long)kHi, fraction);
    }
}

/// <summary>A loose nice range: ticks at k·Step for k = FirstK..LastK.</summary>
internal sealed record NiceRange(double Min, double Max, double Step, long FirstK, long LastK, int FractionDigits)
{
    /// <summary>The tick values, each computed as k·Step and rounded to the fraction digits.</summary>
    public IReadOnlyList<double> Ticks()
    {
        var list = new List<double>();
        for (long k = FirstK; k <= LastK; k++)
        {
            double v = k * Step;
            list.Add(FractionDigits <= 15 ? Math.Round(v, FractionDigits) : v);
        }

        return list;
    }
}
