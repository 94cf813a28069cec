using System.Globalization;
using MathNet.Numerics.Distributions;

namespace StudyPress.Statistics.Anova;

/// <summary>Transformation of the response before the ANOVA.</summary>
public enum TransformKind
{
    None,

    /// <summary>Natural logarithm, ln y (y &gt; 0).</summary>
    Log,

    /// <summary>Common logarithm, log10 y (y &gt; 0).</summary>
    Log10,

    /// <summary>Square root (y &gt;= 0).</summary>
    Sqrt,

    /// <summary>Reciprocal 1/y (y != 0).</summary>
    Reciprocal,

    /// <summary>Box-Cox power (y^lambda - 1)/lambda, ln y at lambda = 0, with the maximum-likelihood lambda (y &gt; 0).</summary>
    BoxCox,
}

/// <summary>Why a transform cannot be applied. <paramref name="Index"/> is the zero-based position of the first offending value (null when the problem is not one value).</summary>
public sealed record TransformError(string Message, int? Index, double? Value);

/// <summary>
/// The maximum-likelihood Box-Cox lambda and its profile-likelihood confidence interval.
/// <paramref name="LogLikelihood"/> is the profile log-likelihood at lambda, up to a constant.
/// <paramref name="AtBound"/> is true when the maximum lies on the edge of the searched range [-3, 3].
/// An interval bound that lies outside the searched range is undefined.
/// </summary>
public sealed record BoxCoxEstimate(
    double Lambda,
    double LogLikelihood,
    bool AtBound,
    Quantity LambdaLow,
    Quantity LambdaHigh,
    double ConfidenceLevel,
    double GeometricMean);

/// <summary>
/// The transformed response (uncentred, in input order), the Box-Cox estimate for
/// <see cref="TransformKind.BoxCox"/>, and what a back-transformed mean is on the original scale.
/// </summary>
public sealed record TransformedResponse(TransformKind Kind, double[] Values, BoxCoxEstimate? BoxCox, string BackTransformedMean);

/// <summary>Either a transformed response or the reason it could not be made.</summary>
public sealed record TransformOutcome(TransformedResponse? Result, TransformError? Error)
{
    public bool Succeeded => Result is not null;
}

/// <summary>
/// Response transformations and the back-transformation of means. Transforms are applied to the
/// raw (uncentred) values; the caller centres the result again before the ANOVA.
/// <para>
/// Box-Cox (Box and Cox 1964, "An analysis of transformations", JRSS B 26, 211-252, section 3):
/// for the model's design X (the same factors and interactions as the ANOVA), the profile
/// log-likelihood of lambda, up to a constant, is L(lambda) = -(n/2) ln(RSS(z_lambda)/n), with
/// z_lambda = (y^lambda - 1)/(lambda gm^(lambda-1)) the geometric-mean-scaled transform
/// (gm = geometric mean of y), which absorbs the Jacobian. It is computed in the equivalent form
/// gm * expm1(lambda ln(y/gm))/lambda (the two differ by a constant, which the intercept
/// absorbs), stable for lambda near 0 (limit gm ln(y/gm)) and free of overflow for moderate ranges.
/// The maximum is located on a grid of step 0.05 over [-3, 3] and refined by golden-section search
/// between the grid neighbours of the best point (Kiefer 1953). The approximate 100(1 - alpha) %
/// interval is {lambda : L(lambda) &gt;= L(lambda_hat) - chi²(1; 1 - alpha)/2} (Box and Cox 1964,
/// section 3), its ends found by bisection.
/// </para>
/// <para>
/// Back-transformed means: the back-transform of the mean of transformed values is a power mean
/// of the original values: exp(mean ln y) is the geometric mean (log and log10), 1/mean(1/y) the
/// harmonic mean (reciprocal), (mean sqrt y)² the power mean of order 1/2 (square root), and for
/// Box-Cox ((1 + lambda m))^(1/lambda) the power mean of order lambda. Each is at most the
/// arithmetic mean for orders below 1, so back-transformed means are not arithmetic means.
/// </para>
/// </summary>
public static class ResponseTransform
{
    /// <summary>Lower end of the Box-Cox lambda search.</summary>
    public const double LambdaMin = -3;

    /// <summary>Upper end of the Box-Cox lambda search.</summary>
    public const double LambdaMax = 3;

    private const double GridStep = 0.05;

    /// <summary>
    /// Applies <paramref name="kind"/> to the raw response. For Box-Cox, <paramref name="factors"/>
    /// and <paramref name="interactions"/> give the model whose likelihood is maximised (the
    /// ANOVA's own model); they are ignored for the other transforms. <paramref name="alpha"/> sets
    /// the level of lambda's interval.
    /// </summary>
    public static TransformOutcome Apply(
        double[] raw,
        TransformKind kind,
        IReadOnlyList<FactorColumn> factors,
        bool interactions,
        double alpha = 0.05)
    {
        ArgumentNullException.ThrowIfNull(raw);
        var domain = CheckDomain(raw, kind);
        if (domain is not null)
        {
            return new TransformOutcome(null, domain);
        }

        var n = raw.Length;
        var z = new double[n];
        BoxCoxEstimate? estimate = null;
        switch (kind)
        {
            case TransformKind.None:
                Array.Copy(raw, z, n);
                break;
            case TransformKind.Log:
                for (var i = 0; i < n; i++)
                {
                    z[i] = Math.Log(raw[i]);
                }

                break;
            case TransformKind.Log10:
                for (var i = 0; i < n; i++)
                {
                    z[i] = Math.Log10(raw[i]);
                }

                break;
            case TransformKind.Sqrt:
                for (var i = 0; i < n; i++)
                {
                    z[i] = Math.Sqrt(raw[i]);
                }

                break;
            case TransformKind.Reciprocal:
                for (var i = 0; i < n; i++)
                {
                    z[i] = 1.0 / raw[i];
                }

                break;
            case TransformKind.BoxCox:
                var model = new AnovaInput(raw, factors, interactions, SumOfSquaresType.Sequential, alpha);
                var problem = AnovaDesign.Check(model);
                if (problem is not null)
                {
                    return new TransformOutcome(null, new TransformError("the Box–Cox lambda cannot be estimated: " + problem.Message, null, null));
                }

                var coding = DesignCoding.Build(model);
                if (coding.Rows - coding.ColumnCount < 1)
                {
                    return new TransformOutcome(null, new TransformError("the Box–Cox lambda cannot be estimated without residual degrees of freedom (no replication)", null, null));
                }

                var profile = new Profile(raw, coding);
                estimate = profile.Estimate(alpha);
                if (estimate is null)
                {
                    return new TransformOutcome(null, new TransformError("the Box–Cox lambda cannot be estimated: the model fits the data exactly", null, null));
                }

                var lambda = estimate.Lambda;
                for (var i = 0; i < n; i++)
                {
                    var ln = Math.Log(raw[i]);
                    z[i] = lambda == 0 ? ln : Elementary.Expm1(lambda * ln) / lambda;
                }

                break;
            default:
                throw new ArgumentOutOfRangeException(nameof(kind));
        }

        for (var i = 0; i < n; i++)
        {
            if (!double.IsFinite(z[i]))
            {
                return new TransformOutcome(null, new TransformError(
                    string.Create(CultureInfo.InvariantCulture, $"the transformed value of observation {i + 1} ({raw[i]:R}) is too large to represent"),
                    i,
                    raw[i]));
            }
        }

        return new TransformOutcome(new TransformedResponse(kind, z, estimate, BackTransformedMeanName(kind, estimate?.Lambda)), null);
    }

    /// <summary>
    /// The first value outside the transform's domain (log, log10, Box-Cox: y &lt;= 0; sqrt: y &lt; 0;
    /// reciprocal: y = 0), or a non-finite value; null when every value is allowed.
    /// </summary>
    public static TransformError? CheckDomain(double[] raw, TransformKind kind)
    {
        ArgumentNullException.ThrowIfNull(raw);
        for (var i = 0; i < raw.Length; i++)
        {
            var v = raw[i];
            string? why = null;
            if (!double.IsFinite(v))
            {
                why = "is not a finite number";
            }
            else
            {
                switch (kind)
                {
                    case TransformKind.Log:
                    case TransformKind.Log10:
                    case TransformKind.BoxCox:
                        if (v <= 0)
                        {
                            why = "is not positive, so the " + Describe(kind) + " is not defined";
                        }

                        break;
                    case TransformKind.Sqrt:
                        if (v < 0)
                        {
                            why = "is negative, so the square root is not defined";
                        }

                        break;
                    case TransformKind.Reciprocal:
                        if (v == 0)
                        {
                            why = "is zero, so the reciprocal is not defined";
                        }

                        break;
                    default:
                        break;
                }
            }

            if (why is not null)
            {
                return new TransformError(
                    string.Create(CultureInfo.InvariantCulture, $"observation {i + 1} ({v.ToString("R", CultureInfo.InvariantCulture)}) {why}"),
                    i,
                    v);
            }
        }

        return null;
    }

    /// <summary>
    /// Box-Cox profile log-likelihood L(lambda) = -(n/2) ln(RSS(z_lambda)/n) for the model given by
    /// <paramref name="factors"/> and <paramref name="interactions"/> (see the class remarks).
    /// Requires positive values and a design that passes <see cref="AnovaDesign.Check(AnovaInput)"/>.
    /// </summary>
    public static double BoxCoxProfileLogLikelihood(double[] raw, IReadOnlyList<FactorColumn> factors, bool interactions, double lambda)
    {
        ArgumentNullException.ThrowIfNull(raw);
        if (CheckDomain(raw, TransformKind.BoxCox) is { } e)
        {
            throw new ArgumentException(e.Message, nameof(raw));
        }

        var model = new AnovaInput(raw, factors, interactions, SumOfSquaresType.Sequential, 0.05);
        if (AnovaDesign.Check(model) is { } problem)
        {
            throw new ArgumentException(problem.Message, nameof(factors));
        }

        return new Profile(raw, DesignCoding.Build(model)).LogLikelihood(lambda);
    }

    /// <summary>
    /// Back-transforms a mean m of transformed values (uncentred) to the original scale:
    /// none m; log e^m; log10 10^m; sqrt m² (m &gt;= 0); reciprocal 1/m (m != 0);
    /// Box-Cox (1 + lambda m)^(1/lambda) (1 + lambda m &gt; 0), e^m at lambda = 0.
    /// </summary>
    public static Quantity BackTransformMean(double mean, TransformKind kind, double? lambda = null)
    {
        switch (kind)
        {
            case TransformKind.None:
                return Quantity.Of(mean);
            case TransformKind.Log:
                return Quantity.Of(Math.Exp(mean));
            case TransformKind.Log10:
                return Quantity.Of(Math.Pow(10, mean));
            case TransformKind.Sqrt:
                return mean >= 0 ? Quantity.Of(mean * mean) : Quantity.Undefined("the mean square root is negative, so it has no value on the original scale");
            case TransformKind.Reciprocal:
                return mean != 0 ? Quantity.Of(1.0 / mean) : Quantity.Undefined("the mean reciprocal is zero, so it has no value on the original scale");
            case TransformKind.BoxCox:
                if (lambda is not { } l)
                {
                    throw new ArgumentException("Box–Cox back-transformation needs lambda", nameof(lambda));
                }

                if (l == 0)
                {
                    return Quantity.Of(Math.Exp(mean));
                }

                var b = 1 + (l * mean);
                return b > 0
                    ? Quantity.Of(Math.Exp(Elementary.Log1P(l * mean) / l))
                    : Quantity.Undefined("the mean lies outside the range of the Box–Cox transform, so it has no value on the original scale");
            default:
                throw new ArgumentOutOfRangeException(nameof(kind));
        }
    }

    /// <summary>Back-transforms a mean using the transform (and lambda) of <paramref name="transformed"/>.</summary>
    public static Quantity BackTransformMean(double mean, TransformedResponse transformed)
    {
        ArgumentNullException.ThrowIfNull(transformed);
        return BackTransformMean(mean, transformed.Kind, transformed.BoxCox?.Lambda);
    }

    /// <summary>What the back-transformed mean of a group is, in words for the report.</summary>
    public static string BackTransformedMeanName(TransformKind kind, double? lambda = null) => kind switch
    {
        TransformKind.None => "arithmetic mean",
        TransformKind.Log or TransformKind.Log10 =>
            "geometric mean (back-transformed means of log data are geometric means, not arithmetic means)",
        TransformKind.Sqrt =>
            "square of the mean square root (a power mean of order 1/2, not larger than the arithmetic mean)",
        TransformKind.Reciprocal =>
            "harmonic mean (the back-transformed mean of reciprocals is the harmonic mean, not larger than the arithmetic mean)",
        TransformKind.BoxCox => lambda is { } l && l == 0
            ? "geometric mean (lambda = 0 is the log transform)"
            : string.Create(CultureInfo.InvariantCulture, $"power mean of order lambda = {lambda ?? double.NaN:G6} (not the arithmetic mean unless lambda = 1)"),
        _ => throw new ArgumentOutOfRangeException(nameof(kind)),
    };

    private static string Describe(TransformKind kind) => kind switch
    {
        TransformKind.Log => "logarithm",
        TransformKind.Log10 => "base-10 logarithm",
        TransformKind.BoxCox => "Box–Cox transform",
        _ => kind.ToString(),
    };

    /// <summary>Profile likelihood over lambda for a fixed design.</summary>
    private sealed class Profile
    {
        private readonly double[] _u; // ln(y / gm)
        private readonly double _gm;
        private readonly HouseholderQr _qr;
        private readonly double[] _z;

        public Profile(double[] raw, DesignCoding coding)
        {
            var n = raw.Length;
            var logs = raw.Select(v => Math.Log(v)).ToArray();
            var meanLog = Groups.Mean(logs);
            _gm = Math.Exp(meanLog);
            _u = [.. logs.Select(l => l - meanLog)];
            _qr = HouseholderQr.Factor(coding.Matrix, coding.AllColumns);
            _z = new double[n];
        }

        public double LogLikelihood(double lambda)
        {
            var n = _u.Length;
            for (var i = 0; i < n; i++)
            {
                _z[i] = lambda == 0 ? _gm * _u[i] : _gm * Elementary.Expm1(lambda * _u[i]) / lambda;
            }

            var rss = _qr.ResidualSumOfSquares(_z);
            return -0.5 * n * Math.Log(rss / n);
        }

        public BoxCoxEstimate? Estimate(double alpha)
        {
            var steps = (int)Math.Round((LambdaMax - LambdaMin) / GridStep);
            var grid = new double[steps + 1];
            var values = new double[steps + 1];
            var best = -1;
            for (var i = 0; i <= steps; i++)
            {
                grid[i] = (i - (steps / 2)) / (1.0 / GridStep); // exact 0 at the centre
                values[i] = LogLikelihood(grid[i]);
                if (!double.IsFinite(values[i]))
                {
                    if (double.IsPositiveInfinity(values[i]))
                    {
                        return null; // RSS = 0: exact fit
                    }

                    continue;
                }

                if (best < 0 || values[i] > values[best])
                {
                    best = i;
                }
            }

            if (best < 0)
            {
                return null;
            }

            var lo = grid[Math.Max(best - 1, 0)];
            var hi = grid[Math.Min(best + 1, steps)];
            var lambda = GoldenSection(lo, hi);
            var l = LogLikelihood(lambda);
            if (!(l >= values[best]))
            {
                lambda = grid[best];
                l = values[best];
            }

            var atBound = lambda <= LambdaMin + 1e-6 || lambda >= LambdaMax - 1e-6;
            var level = 1 - alpha;
            var cut = l - (0.5 * Probability.ChiSquareCritical(alpha, 1));
            var low = Bound(lambda, l, cut, grid, values, best, -1);
            var high = Bound(lambda, l, cut, grid, values, best, +1);
            return new BoxCoxEstimate(lambda, l, atBound, low, high, level, _gm);
        }

        private double GoldenSection(double a, double b)
        {
            var invPhi = (Math.Sqrt(5) - 1) / 2;
            var c = b - (invPhi * (b - a));
            var d = a + (invPhi * (b - a));
            var fc = LogLikelihood(c);
            var fd = LogLikelihood(d);
            for (var it = 0; it < 200 && b - a > 1e-10; it++)
            {
                if (fc > fd)
                {
                    b = d;
                    d = c;
                    fd = fc;
                    c = b - (invPhi * (b - a));
                    fc = LogLikelihood(c);
                }
                else
                {
                    a = c;
                    c = d;
                    fc = fd;
                    d = a + (invPhi * (b - a));
                    fd = LogLikelihood(d);
                }
            }

            return (a + b) / 2;
        }

        private Quantity Bound(double lambda, double l, double cut, double[] grid, double[] values, int best, int dir)
        {
            // Walk the grid away from the maximum to the first point below the cut, then bisect.
            var inside = lambda;
            double? outside = null;
            for (var i = best + dir; i >= 0 && i < grid.Length; i += dir)
            {
                if ((dir < 0 && grid[i] >= lambda) || (dir > 0 && grid[i] <= lambda))
                {
                    continue;
                }

                if (values[i] < cut)
                {
                    outside = grid[i];
                    break;
                }

                inside = grid[i];
            }

            if (outside is not { } o)
            {
                return Quantity.Undefined(string.Create(
                    CultureInfo.InvariantCulture,
                    $"the interval for lambda extends beyond the searched range [{LambdaMin}, {LambdaMax}]"));
            }

            var a = inside;
            var b = o;
            for (var it = 0; it < 100 && Math.Abs(b - a) > 1e-10; it++)
            {
                var m = (a + b) / 2;
                if (LogLikelihood(m) >= cut)
                {
                    a = m;
                }
                else
                {
                    b = m;
                }
            }

            _ = l;
            return Quantity.Of((a + b) / 2);
        }
    }
}
