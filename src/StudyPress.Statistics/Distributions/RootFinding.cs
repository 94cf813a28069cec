namespace StudyPress.Statistics.Distributions;

/// <summary>
/// Brent's method (Brent 1973, "Algorithms for Minimization without Derivatives", ch. 4):
/// inverse quadratic interpolation and secant steps safeguarded by bisection, for a continuous
/// function with a sign change on [a, b].
/// </summary>
internal static class RootFinding
{
    public static double Brent(Func<double, double> f, double a, double b, double fa, double fb, double xTol, int maxIter = 200)
    {
        if (fa == 0)
        {
            return a;
        }

        if (fb == 0)
        {
            return b;
        }

        if (Math.Sign(fa) == Math.Sign(fb))
        {
            throw new ArgumentException("the root is not bracketed");
        }

        double c = a, fc = fa, d = b - a, e = d;
        for (var iter = 0; iter < maxIter; iter++)
        {
            if (Math.Sign(fb) == Math.Sign(fc))
            {
                c = a;
                fc = fa;
                d = b - a;
                e = d;
            }

            if (Math.Abs(fc) < Math.Abs(fb))
            {
                a = b;
                b = c;
                c = a;
                fa = fb;
                fb = fc;
                fc = fa;
            }

            var tol = (2 * 2.2e-16 * Math.Abs(b)) + (0.5 * xTol);
            var m = 0.5 * (c - b);
            if (Math.Abs(m) <= tol || fb == 0)
            {
                return b;
            }

            if (Math.Abs(e) >= tol && Math.Abs(fa) > Math.Abs(fb))
            {
                double p, q, r;
                var s = fb / fa;
                if (a == c)
                {
                    p = 2 * m * s;
                    q = 1 - s;
                }
                else
                {
                    q = fa / fc;
                    r = fb / fc;
                    p = s * ((2 * m * q * (q - r)) - ((b - a) * (r - 1)));
                    q = (q - 1) * (r - 1) * (s - 1);
                }

                if (p > 0)
                {
                    q = -q;
                }
                else
                {
                    p = -p;
                }

                if (2 * p < Math.Min((3 * m * q) - Math.Abs(tol * q), Math.Abs(e * q)))
                {
                    e = d;
                    d = p / q;
                }
                else
                {
                    d = m;
                    e = m;
                }
            }
            else
            {
                d = m;
                e = m;
            }

            a = b;
            fa = fb;
            b += Math.Abs(d) > tol ? d : (m > 0 ? tol : -tol);
            fb = f(b);
        }

        return b;
    }
}
