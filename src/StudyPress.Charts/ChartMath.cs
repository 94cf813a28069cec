using MathNet.Numerics.Distributions;

namespace StudyPress.Charts;

/// <summary>Tukey box statistics of one sample.</summary>
internal sealed record BoxStats(double Q1, double Median, double Q3, double LowerWhisker, double UpperWhisker,
    IReadOnlyList<double> Outliers);

/// <summary>Equal-width histogram bins over [Start, Start + Count·Width].</summary>
internal sealed record Bins(double Start, double Width, IReadOnlyList<int> Counts, string Rule);

/// <summary>The small amount of statistics the charts compute themselves.</summary>
internal static class ChartMath
{
    /// <summary>
    /// Sample quantile by linear interpolation between order statistics, Hyndman &amp; Fan (1996)
    /// type 7: h = (n − 1)p, Q = x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋+1] − x[⌊h⌋]) on the sorted sample.
    /// </summary>
    public static double Quantile7(IReadOnlyList<double> sorted, double p)
    {
        int n = sorted.Count;
        if (n == 0)
        {
            throw new ArgumentException("A quantile needs data.");
        }

        double h = (n - 1) * p;
        int lo = (int)Math.Floor(h);
        if (lo >= n - 1)
        {
            return sorted[n - 1];
        }

        return sorted[lo] + ((h - lo) * (sorted[lo + 1] - sorted[lo]));
    }

    /// <summary>
    /// Tukey's box (Tukey, J. W. (1977). Exploratory Data Analysis. Addison-Wesley): quartiles
    /// (type 7), whiskers to the most extreme observations within 1.5·IQR of the box, the rest
    /// are outliers.
    /// </summary>
    public static BoxStats Box(IReadOnlyList<double> sorted)
    {
        double q1 = Quantile7(sorted, 0.25), med = Quantile7(sorted, 0.5), q3 = Quantile7(sorted, 0.75);
        double iqr = q3 - q1;
        double loFence = q1 - (1.5 * iqr), hiFence = q3 + (1.5 * iqr);
        double lw = sorted.Where(v => v >= loFence).Min();
        double uw = sorted.Where(v => v <= hiFence).Max();
        var outliers = sorted.Where(v => v < loFence || v > hiFence).ToList();
        return new BoxStats(q1, med, q3, Math.Min(lw, q1), Math.Max(uw, q3), outliers);
    }

    /// <summary>
    /// Deterministic horizontal pixel offsets for points drawn at heights <paramref name="pixels"/>
    /// with marker radius <paramref name="radius"/>: points closer than one radius to the previous
    /// (in sorted order, ties by input order) form a cluster, spread evenly by rank within it,
    /// 1.8 radii apart, centred on 0, squeezed to fit ±<paramref name="halfWidth"/>. No randomness.
    /// </summary>
    public static double[] Spread(IReadOnlyList<double> pixels, double radius, double halfWidth)
    {
        int n = pixels.Count;
        var order = Enumerable.Range(0, n).OrderBy(i => pixels[i]).ThenBy(i => i).ToArray();
        var result = new double[n];
        int start = 0;
        while (start < n)
        {
            int end = start + 1;
            while (end < n && pixels[order[end]] - pixels[order[end - 1]] < radius)
            {
                end++;
            }

            int m = end - start;
            double gap = 1.8 * radius;
            if (m > 1 && (m - 1) * gap / 2 > halfWidth)
            {
                gap = 2 * halfWidth / (m - 1);
            }

            for (int k = 0; k < m; k++)
            {
                result[order[start + k]] = (k - ((m - 1) / 2.0)) * gap;
            }

            start = end;
        }

        return result;
    }

    /// <summary>
    /// Histogram bins. Width by the Freedman–Diaconis rule, h = 2·IQR·n^(−1/3) (Freedman, D. &amp;
    /// Diaconis, P. (1981). On the histogram as a density estimator: L2 theory. Z.
    /// Wahrscheinlichkeitstheorie verw. Gebiete 57, 453–476); when the IQR is 0, Sturges' rule,
    /// ⌈log2 n⌉ + 1 bins (Sturges, H. A. (1926). JASA 21, 65–66). Bins span [min, max] exactly
    /// (the last bin is closed), at most 100 of them; constant data gives one bin of width 1.
    /// </summary>
    public static Bins Histogram(IReadOnlyList<double> sorted)
    {
        int n = sorted.Count;
        double min = sorted[0], max = sorted[n - 1];
        if (max - min <= Math.Max(Math.Abs(min), Math.Abs(max)) * 1e-13)
        {
            return new Bins(min - 0.5, 1, [n], "single bin (constant data)");
        }

        double iqr = Quantile7(sorted, 0.75) - Quantile7(sorted, 0.25);
        int k;
        string rule;
        if (iqr > 0)
        {
            double h = 2 * iqr * Math.Pow(n, -1.0 / 3.0);
            k = (int)Math.Ceiling((max - min) / h);
            rule = "Freedman–Diaconis";
        }
        else
        {
            k = (int)Math.Ceiling(Math.Log2(n)) + 1;
            rule = "Sturges";
        }

        k = Math.Clamp(k, 1, 100);
        double width = (max - min) / k;
        var counts = new int[k];
        foreach (var v in sorted)
        {
            int b = (int)Math.Floor((v - min) / width);
            counts[Math.Clamp(b, 0, k - 1)]++;
        }

        return new Bins(min, width, counts, rule);
    }

    /// <summary>
    /// Silverman's rule-of-thumb bandwidth, h = 0.9·min(s, IQR/1.34)·n^(−1/5) (Silverman, B. W.
    /// (1986). Density Estimation for Statistics and Data Analysis, eq. 3.31); uses the non-zero
    /// one of s and IQR/1.34 when the other is 0; 0 when both are.
    /// </summary>
    public static double SilvermanBandwidth(IReadOnlyList<double> sorted)
    {
        int n = sorted.Count;
        if (n < 2)
        {
            return 0;
        }

        double sd = StandardDeviation(sorted);
        double iqr = (Quantile7(sorted, 0.75) - Quantile7(sorted, 0.25)) / 1.34;
        double a = sd > 0 && iqr > 0 ? Math.Min(sd, iqr) : Math.Max(sd, iqr);
        return 0.9 * a * Math.Pow(n, -0.2);
    }

    /// <summary>Gaussian kernel density estimate at x with bandwidth h.</summary>
    public static double Kde(IReadOnlyList<double> data, double h, double x)
    {
        double sum = 0;
        foreach (var v in data)
        {
            double z = (x - v) / h;
            sum += Math.Exp(-0.5 * z * z);
        }

        return sum / (data.Count * h * Math.Sqrt(2 * Math.PI));
    }

    public static double Mean(IReadOnlyList<double> x) => StudyPress.Statistics.Groups.Mean(x.ToArray());

    /// <summary>Sample standard deviation (n − 1), two-pass.</summary>
    public static double StandardDeviation(IReadOnlyList<double> x)
    {
        if (x.Count < 2)
        {
            return 0;
        }

        var arr = x.ToArray();
        double m = StudyPress.Statistics.Groups.Mean(arr);
        return Math.Sqrt(StudyPress.Statistics.Groups.SumOfSquares(arr, m) / (x.Count - 1));
    }

    /// <summary>
    /// Blom's plotting position p_i = (i − 3/8)/(n + 1/4), i = 1..n (Blom, G. (1958). Statistical
    /// Estimates and Transformed Beta-Variables. Wiley), and its standard normal quantile.
    /// </summary>
    public static double BlomQuantile(int i, int n) => Normal.InvCDF(0, 1, (i - 0.375) / (n + 0.25));

    /// <summary>
    /// Pointwise band for the i-th of n ordered values: the i-th uniform order statistic is
    /// Beta(i, n − i + 1); its α/2 and 1 − α/2 quantiles mapped through Φ⁻¹.
    /// </summary>
    public static (double Lower, double Upper) OrderStatisticBand(int i, int n, double alpha)
    {
        double lo = Beta.InvCDF(i, n - i + 1, alpha / 2);
        double hi = Beta.InvCDF(i, n - i + 1, 1 - (alpha / 2));
        return (Normal.InvCDF(0, 1, lo), Normal.InvCDF(0, 1, hi));
    }

    public static void RequireFinite(IEnumerable<double> values, string what)
    {
        foreach (var v in values)
        {
            if (!double.IsFinite(v))
            {
                throw new ArgumentException(what + " must be finite numbers.");
            }
        }
    }

    /// <summary>
    /// True when any segment of the polyline passes through the box [left, right] × [top, bottom]
    /// (pixels); Liang–Barsky clipping of each segment against the box.
    /// </summary>
    public static bool PolylineCrossesBox(IReadOnlyList<Rendering.Pt> points, double left, double top, double right, double bottom)
    {
        if (points.Count == 1)
        {
            return points[0].X >= left && points[0].X <= right && points[0].Y >= top && points[0].Y <= bottom;
        }

        for (int i = 1; i < points.Count; i++)
        {
            var a = points[i - 1];
            var b = points[i];
            double dx = b.X - a.X, dy = b.Y - a.Y;
            double t0 = 0, t1 = 1;
            bool outside = false;
            foreach (var (p, q) in new[] { (-dx, a.X - left), (dx, right - a.X), (-dy, a.Y - top), (dy, bottom - a.Y) })
            {
                if (p == 0)
                {
                    if (q < 0)
                    {
                        outside = true;
                        break;
                    }

                    continue;
                }

                double r = q / p;
                if (p < 0)
                {
                    t0 = Math.Max(t0, r);
                }
                else
                {
                    t1 = Math.Min(t1, r);
                }

                if (t0 > t1)
                {
                    outside = true;
                    break;
                }
            }

            if (!outside)
            {
                return true;
            }
        }

        return false;
    }
}
