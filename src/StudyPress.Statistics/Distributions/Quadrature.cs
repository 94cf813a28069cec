namespace StudyPress.Statistics.Distributions;

/// <summary>
/// Globally adaptive Gauss–Kronrod quadrature (21-point Kronrod rule with its embedded 10-point
/// Gauss rule, the pair of Piessens et al. (1983), QUADPACK, routine QK21). The interval with the
/// largest error estimate |K21 - G10| is bisected until the summed estimate is below
/// max(absTol, relTol·|integral|). |K21 - G10| estimates the error of the Gauss rule, so for a
/// smooth integrand the returned Kronrod value is far more accurate than the estimate says.
/// </summary>
internal static class Quadrature
{
    private static readonly double[] Xgk =
    [
        0.995657163025808080735527280689003,
        0.973906528517171720077964012084452,
        0.930157491355708226001207180059508,
        0.865063366688984510732096688423493,
        0.780817726586416897063717578345042,
        0.679409568299024406234327365114874,
        0.562757134668604683339000099272694,
        0.433395394129247190799265943165784,
        0.294392862701460198131126603103866,
        0.148874338981631210884826001129720,
        0.0,
    ];

    private static readonly double[] Wgk =
    [
        0.011694638867371874278064396062192,
        0.032558162307964727478818972459390,
        0.054755896574351996031381300244580,
        0.075039674810919952767043140916190,
        0.093125454583697605535065465083366,
        0.109387158802297641899210590325805,
        0.123491976262065851077600525491500,
        0.134709217311473325928054001771707,
        0.142775938577060080797094273138717,
        0.147739104901338491374841515972068,
        0.149445554002916905664936468389821,
    ];

    // Gauss weights for the abscissae Xgk[1], Xgk[3], ..., Xgk[9].
    private static readonly double[] Wg =
    [
        0.066671344308688137593568809893332,
        0.149451349150580593145776339657697,
        0.219086362515982043995534934228163,
        0.269266719309996355091226921569469,
        0.295524224714752870173892994651468,
    ];

    /// <summary>One K21/G10 panel: the Kronrod value and QUADPACK's error estimate.</summary>
    public static (double Value, double Error) Panel(Func<double, double> f, double a, double b)
    {
        var c = 0.5 * (a + b);
        var h = 0.5 * (b - a);
        Span<double> f1 = stackalloc double[10];
        Span<double> f2 = stackalloc double[10];
        var fc = f(c);
        var k = fc * Wgk[10];
        var g = 0.0;
        for (var i = 0; i < 10; i++)
        {
            var dx = h * Xgk[i];
            f1[i] = f(c - dx);
            f2[i] = f(c + dx);
            var s = f1[i] + f2[i];
            k += Wgk[i] * s;
            if ((i & 1) == 1)
            {
                g += Wg[i >> 1] * s;
            }
        }

        // QUADPACK's scaling of |K21 - G10| (Piessens et al. 1983, routine QK21): realistic for
        // smooth integrands, where the Kronrod value is far more accurate than the Gauss value.
        var mean = 0.5 * k;
        var asc = Wgk[10] * Math.Abs(fc - mean);
        for (var i = 0; i < 10; i++)
        {
            asc += Wgk[i] * (Math.Abs(f1[i] - mean) + Math.Abs(f2[i] - mean));
        }

        var err = Math.Abs((k - g) * h);
        asc *= Math.Abs(h);
        if (asc != 0 && err != 0)
        {
            err = asc * Math.Min(1.0, Math.Pow(200.0 * err / asc, 1.5));
        }

        return (k * h, Math.Max(err, 50 * 2.2e-16 * Math.Abs(k * h)));
    }

    /// <summary>
    /// Integral of <paramref name="f"/> over the panels between consecutive
    /// <paramref name="breaks"/> (sorted ascending), refined adaptively.
    /// </summary>
    public static double Integrate(Func<double, double> f, IReadOnlyList<double> breaks, double relTol, double absTol = 0, int maxPanels = 400)
    {
        // The studentized range nests one integral in another (an inner integral at every point of
        // the outer one), so a Tukey comparison runs thousands of these: reuse this thread's queues
        // instead of allocating and growing a new one each time. A heap's order depends only on the
        // operations made on it, so a cleared queue gives the same panels in the same order.
        var spare = spareQueues ??= new Stack<PriorityQueue<(double A, double B, double V, double E), double>>();
        var queue = spare.Count > 0 ? spare.Pop() : new PriorityQueue<(double A, double B, double V, double E), double>();
        try
        {
            return Integrate(f, breaks, relTol, absTol, maxPanels, queue);
        }
        finally
        {
            queue.Clear();
            spare.Push(queue);
        }
    }

    [ThreadStatic]
    private static Stack<PriorityQueue<(double A, double B, double V, double E), double>>? spareQueues;

    private static double Integrate(Func<double, double> f, IReadOnlyList<double> breaks, double relTol, double absTol, int maxPanels, PriorityQueue<(double A, double B, double V, double E), double> queue)
    {
        double total = 0, err = 0;
        for (var i = 0; i + 1 < breaks.Count; i++)
        {
            var a = breaks[i];
            var b = breaks[i + 1];
            if (!(b > a))
            {
                continue;
            }

            var (v, e) = Panel(f, a, b);
            total += v;
            err += e;
            queue.Enqueue((a, b, v, e), -e);
        }

        var panels = queue.Count;
        var done = 0.0;
        while (panels < maxPanels && err > Math.Max(absTol, relTol * Math.Abs(total)) && queue.Count > 0)
        {
            var p = queue.Dequeue();
            var m = 0.5 * (p.A + p.B);
            if (!(m > p.A && m < p.B))
            {
                // The interval cannot be split further in floating point; keep its value.
                err -= p.E;
                done += p.V;
                continue;
            }

            var (v1, e1) = Panel(f, p.A, m);
            var (v2, e2) = Panel(f, m, p.B);
            total += v1 + v2 - p.V;
            err += e1 + e2 - p.E;
            queue.Enqueue((p.A, m, v1, e1), -e1);
            queue.Enqueue((m, p.B, v2, e2), -e2);
            panels++;
        }

        // Re-add the panel values to drop the drift of the running sum.
        var sum = done;
        while (queue.Count > 0)
        {
            sum += queue.Dequeue().V;
        }

        return sum;
    }

    /// <summary>Sorted distinct points of <paramref name="points"/> inside [lo, hi], with lo and hi.</summary>
    public static List<double> Breaks(double lo, double hi, IEnumerable<double> points)
    {
        var list = new List<double> { lo, hi };
        foreach (var p in points)
        {
            if (p > lo && p < hi && double.IsFinite(p))
            {
                list.Add(p);
            }
        }

        list.Sort();
        var result = new List<double>(list.Count) { list[0] };
        for (var i = 1; i < list.Count; i++)
        {
            if (list[i] - result[^1] > 1e-12 * Math.Max(1.0, Math.Abs(list[i])))
            {
                result.Add(list[i]);
            }
        }

        if (result[^1] < hi)
        {
            result[^1] = hi;
        }

        return result;
    }
}
