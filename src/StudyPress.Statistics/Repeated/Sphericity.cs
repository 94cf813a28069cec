using MathNet.Numerics.LinearAlgebra;

namespace StudyPress.Statistics.Repeated;

/// <summary>
/// Mauchly's test of sphericity and the epsilon corrections for one within-subject term with
/// p = df of the term contrasts (p + 1 levels for a main effect).
/// </summary>
/// <param name="Term">The within-subject term (e.g. "time", "time:light").</param>
/// <param name="Contrasts">p, the number of orthonormal contrasts (the term's df).</param>
/// <param name="ErrorDf">ν = N − g, the df of the pooled within-group covariance (N subjects in g groups).</param>
/// <param name="W">Mauchly's W; not defined with one contrast (two levels) or fewer subjects than contrasts.</param>
/// <param name="ChiSquare">−(ν − (2p² + p + 2)/(6p)) ln W.</param>
/// <param name="ChiSquareDf">p(p + 1)/2 − 1.</param>
/// <param name="P">Upper-tail chi-square probability of <paramref name="ChiSquare"/>.</param>
/// <param name="EpsilonGreenhouseGeisser">Greenhouse–Geisser ε̂ = (tr E)²/(p tr E²), in [1/p, 1].</param>
/// <param name="EpsilonHuynhFeldt">Huynh–Feldt ε̃ with Lecoutre's (1991) correction, capped at 1.</param>
/// <param name="EpsilonLowerBound">1/p, the lower bound of ε (Greenhouse and Geisser 1959).</param>
public sealed record SphericityTest(
    string Term,
    int Contrasts,
    int ErrorDf,
    Quantity W,
    Quantity ChiSquare,
    int ChiSquareDf,
    Quantity P,
    Quantity EpsilonGreenhouseGeisser,
    Quantity EpsilonHuynhFeldt,
    double EpsilonLowerBound)
{
    /// <summary>True when Mauchly's test exists for this term (more than one contrast, enough subjects).</summary>
    public bool IsTested => P.IsDefined;
}

/// <summary>
/// Sphericity of a within-subject term from E, the p × p pooled within-group sums of squares and
/// cross-products of the subjects' orthonormal contrast scores (<see cref="Contrasts"/>), with
/// ν = N − g error df.
/// <list type="bullet">
/// <item>Mauchly (1940, "Significance test for sphericity of a normal n-variate distribution",
/// Annals of Mathematical Statistics 11, 204-209): W = det E / (tr E / p)^p, computed from the
/// eigenvalues λ of E as Π (λ_i / λ̄); χ² = −(ν − (2p² + p + 2)/(6p)) ln W on p(p + 1)/2 − 1 df
/// (Anderson 2003, An Introduction to Multivariate Statistical Analysis, 3rd ed., Wiley, ch. 10).
/// Not defined for p = 1 (two levels: a single contrast, so sphericity holds trivially and both
/// epsilons are 1), nor when ν &lt; p (E is singular: fewer subjects than contrasts) or when the
/// multiplier ν − (2p² + p + 2)/(6p) is not positive.</item>
/// <item>Greenhouse–Geisser (1959, "On methods in the analysis of profile data", Psychometrika
/// 24, 95-112; estimator of Box 1954): ε̂ = (Σλ)² / (p Σλ²), which lies in [1/p, 1].</item>
/// <item>Huynh–Feldt (1976, "Estimation of the Box correction for degrees of freedom from sample
/// data in randomized block and split-plot designs", J. Educ. Stat. 1, 69-82) with the correction
/// of Lecoutre (1991, "A correction for the ε̃ approximate test in repeated measures designs with
/// two or more independent groups", J. Educ. Stat. 16, 371-372): ε̃ = ((ν + 1) p ε̂ − 2) / (p (ν − p ε̂)),
/// ν = N − g. Huynh and Feldt's original numerator has N p ε̂ − 2; the two agree for one group
/// (g = 1) and differ with several. ε̃ is capped at 1; it is not defined when ν − p ε̂ ≤ 0 or the
/// numerator is not positive (too few subjects for the estimator).</item>
/// </list>
/// </summary>
public static class Sphericity
{
    /// <summary>Mauchly's test and the epsilons from the error SSCP matrix <paramref name="e"/> (p × p) and its df ν.</summary>
    public static SphericityTest FromErrorMatrix(string term, double[,] e, int errorDf)
    {
        ArgumentNullException.ThrowIfNull(e);
        var p = e.GetLength(0);
        if (p != e.GetLength(1) || p < 1)
        {
            throw new ArgumentException("the error matrix must be square and non-empty", nameof(e));
        }

        if (errorDf < 1)
        {
            throw new ArgumentOutOfRangeException(nameof(errorDf), "the error df must be positive");
        }

        var chiDf = (p * (p + 1) / 2) - 1;
        var lower = 1.0 / p;
        if (p == 1)
        {
            const string Two = "the term has one contrast (two levels), so sphericity holds trivially and Mauchly's test is not defined";
            var one = Quantity.Of(1.0);
            return new SphericityTest(term, 1, errorDf, Quantity.Undefined(Two), Quantity.Undefined(Two), 0, Quantity.Undefined(Two), one, one, 1.0);
        }

        var m = Matrix<double>.Build.Dense(p, p, (i, j) => 0.5 * (e[i, j] + e[j, i]));
        var lambda = m.Evd(Symmetricity.Symmetric).EigenValues.Select(c => c.Real).ToArray();
        var trace = 0.0;
        for (var i = 0; i < p; i++)
        {
            trace += m[i, i];
        }

        var sumSq = 0.0;
        for (var i = 0; i < p; i++)
        {
            for (var j = 0; j < p; j++)
            {
                sumSq += m[i, j] * m[i, j]; // tr E² = Σ e_ij² for symmetric E
            }
        }

        if (!(trace > 0))
        {
            const string Flat = "the within-subject error is zero (every subject shows the same differences), so sphericity cannot be assessed";
            var none = Quantity.Undefined(Flat);
            return new SphericityTest(term, p, errorDf, none, none, chiDf, none, none, none, lower);
        }

        var gg = Math.Clamp(trace * trace / (p * sumSq), lower, 1.0);
        var ggQ = Quantity.Of(gg);
        var hfDen = p * (errorDf - (p * gg));
        var hfNum = ((errorDf + 1) * p * gg) - 2;
        var hf = hfDen > 0 && hfNum > 0
            ? Quantity.Of(Math.Min(1.0, hfNum / hfDen))
            : Quantity.Undefined("there are too few subjects for the Huynh–Feldt estimate (N − g ≤ p ε̂)");

        Quantity w, chi, pv;
        var mean = trace / p;
        var multiplier = errorDf - (((2.0 * p * p) + p + 2) / (6.0 * p));
        if (errorDf < p || lambda.Min() <= 1e-13 * lambda.Max())
        {
            const string Singular = "there are fewer subjects than contrasts (or the contrast scores are collinear), so the covariance is singular and Mauchly's test is not defined";
            w = chi = pv = Quantity.Undefined(Singular);
        }
        else
        {
            var lnW = lambda.Sum(l => Math.Log(l / mean));
            w = Quantity.Of(Math.Exp(lnW));
            if (multiplier > 0)
            {
                var x = -multiplier * lnW;
                chi = Quantity.Of(x);
                pv = Quantity.Of(Probability.ChiSquareUpper(x, chiDf));
            }
            else
            {
                chi = pv = Quantity.Undefined("there are too few subjects for the chi-square approximation of Mauchly's test (ν ≤ (2p² + p + 2)/(6p))");
            }
        }

        return new SphericityTest(term, p, errorDf, w, chi, chiDf, pv, ggQ, hf, lower);
    }
}

/// <summary>
/// Orthonormal contrasts of the within-subject cells. For a factor with k levels the normalised
/// Helmert contrasts: column j (1 ≤ j &lt; k) is (1, …, 1, −j, 0, …, 0)/√(j(j + 1)) with j ones,
/// orthonormal and orthogonal to the constant. For a term T of several within factors the
/// contrast matrix over all w cells is the Kronecker product over the within factors, in declared
/// order, of the factor's Helmert matrix when it belongs to T and of the normalised constant
/// 1/√k otherwise (cell index with the last factor varying fastest, as in the Kronecker product).
/// Every quantity the engine reports (sums of squares, W, the epsilons) is invariant under an
/// orthonormal change of contrasts, so the choice of Helmert over polynomial contrasts does not
/// change any result.
/// </summary>
public static class Contrasts
{
    /// <summary>The k × (k − 1) normalised Helmert contrasts.</summary>
    public static double[,] Helmert(int k)
    {
        if (k < 2)
        {
            throw new ArgumentOutOfRangeException(nameof(k), "contrasts need at least two levels");
        }

        var c = new double[k, k - 1];
        for (var j = 1; j < k; j++)
        {
            var norm = Math.Sqrt(j * (j + 1.0));
            for (var i = 0; i < j; i++)
            {
                c[i, j - 1] = 1 / norm;
            }

            c[j, j - 1] = -j / norm;
        }

        return c;
    }

    /// <summary>
    /// The w × p contrast matrix of the term made of the within factors flagged in
    /// <paramref name="inTerm"/>; <paramref name="levels"/> are the factors' level counts.
    /// With no factor flagged it is the w × 1 normalised constant (the between-subject stratum).
    /// </summary>
    public static double[,] ForTerm(IReadOnlyList<int> levels, IReadOnlyList<bool> inTerm)
    {
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(inTerm);
        double[,] acc = { { 1.0 } };
        for (var f = 0; f < levels.Count; f++)
        {
            var k = levels[f];
            double[,] next;
            if (inTerm[f])
            {
                next = Helmert(k);
            }
            else
            {
                next = new double[k, 1];
                for (var i = 0; i < k; i++)
                {
                    next[i, 0] = 1 / Math.Sqrt(k);
                }
            }

            acc = Kronecker(acc, next);
        }

        return acc;
    }

    /// <summary>The Kronecker product A ⊗ B.</summary>
    public static double[,] Kronecker(double[,] a, double[,] b)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(b);
        int ar = a.GetLength(0), ac = a.GetLength(1), br = b.GetLength(0), bc = b.GetLength(1);
        var r = new double[ar * br, ac * bc];
        for (var i = 0; i < ar; i++)
        {
            for (var j = 0; j < ac; j++)
            {
                for (var k = 0; k < br; k++)
                {
                    for (var l = 0; l < bc; l++)
                    {
                        r[(i * br) + k, (j * bc) + l] = a[i, j] * b[k, l];
                    }
                }
            }
        }

        return r;
    }
}
