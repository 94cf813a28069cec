using MathNet.Numerics;
using MathNet.Numerics.Integration;

namespace StudyPress.Statistics.Tests.Support;

/// <summary>
/// Rectangle probabilities of the multivariate normal and t in up to three dimensions by nested
/// composite Gauss–Legendre quadrature (conditioning on one variable at a time), independent of the
/// quasi-Monte Carlo code under test: a slow, plain and accurate reference (about 1e-9 here).
/// </summary>
internal static class NestedQuadrature
{
    private static readonly GaussLegendreRule Rule = new(-1.0, 1.0, 20);

    /// <summary>∫ f over [a, b] in <paramref name="panels"/> equal panels of 20-point Gauss–Legendre.</summary>
    public static double Integrate(Func<double, double> f, double a, double b, int panels)
    {
        double sum = 0;
        var h = (b - a) / panels;
        for (var p = 0; p < panels; p++)
        {
            var mid = a + ((p + 0.5) * h);
            for (var j = 0; j < Rule.Order; j++)
            {
                sum += 0.5 * h * Rule.Weights[j] * f(mid + (0.5 * h * Rule.Abscissas[j]));
            }
        }

        return sum;
    }

    private static double Phi(double x) => 0.5 * SpecialFunctions.Erfc(-x / Math.Sqrt(2));

    private static double Pdf(double x) => Math.Exp(-0.5 * x * x) / Math.Sqrt(2 * Math.PI);

    /// <summary>P(a ≤ Z ≤ b) for Z ~ N(mean, cov), dimension 1 to 3, bounds finite or infinite.</summary>
    public static double Normal(double[] mean, double[,] cov, double[] a, double[] b)
    {
        var m = mean.Length;
        var sd = Math.Sqrt(cov[0, 0]);
        var lo = Math.Max(a[0], mean[0] - (9 * sd));
        var hi = Math.Min(b[0], mean[0] + (9 * sd));
        if (m == 1)
        {
            return Math.Max(0, Phi((b[0] - mean[0]) / sd) - Phi((a[0] - mean[0]) / sd));
        }

        if (!(hi > lo))
        {
            return 0;
        }

        // Condition on the first variable: the rest is normal with mean μ₂ + Σ₂₁ (x − μ₁)/Σ₁₁ and
        // covariance Σ₂₂ − Σ₂₁ Σ₁₂ / Σ₁₁.
        var rest = m - 1;
        var cc = new double[rest, rest];
        for (var i = 0; i < rest; i++)
        {
            for (var j = 0; j < rest; j++)
            {
                cc[i, j] = cov[i + 1, j + 1] - (cov[i + 1, 0] * cov[0, j + 1] / cov[0, 0]);
            }
        }

        var ra = a[1..];
        var rb = b[1..];
        return Integrate(
            x =>
            {
                var cm = new double[rest];
                for (var i = 0; i < rest; i++)
                {
                    cm[i] = mean[i + 1] + (cov[i + 1, 0] * (x - mean[0]) / cov[0, 0]);
                }

                return Pdf((x - mean[0]) / sd) / sd * Normal(cm, cc, ra, rb);
            },
            lo,
            hi,
            m == 2 ? 40 : 20);
    }

    /// <summary>P(a ≤ T ≤ b) for the multivariate t with correlation R and ν degrees of freedom: ∫ f_S(s) P(s a ≤ Z ≤ s b) ds.</summary>
    public static double T(double[,] r, double df, double[] a, double[] b)
    {
        var m = a.Length;
        var logConst = Math.Log(2) + (0.5 * df * Math.Log(0.5 * df)) - SpecialFunctions.GammaLn(0.5 * df);
        var sd = 1 / Math.Sqrt(2 * df);
        var hi = 1 + (40 * sd) + (df < 3 ? 40 : 0);
        return Integrate(
            s =>
            {
                if (s <= 0)
                {
                    return 0;
                }

                var density = Math.Exp(logConst + ((df - 1) * Math.Log(s)) - (0.5 * df * s * s));
                return density * Normal(new double[m], r, [.. a.Select(v => v * s)], [.. b.Select(v => v * s)]);
            },
            0,
            hi,
            m == 3 ? 15 : 60);
    }
}
