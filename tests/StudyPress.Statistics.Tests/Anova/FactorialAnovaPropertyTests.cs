using FsCheck.Xunit;
using StudyPress.Statistics.Anova;

namespace StudyPress.Statistics.Tests.Anova;

/// <summary>
/// Invariances of the fixed-effects ANOVA (common practice; they follow from the least-squares
/// definitions): F and p do not change when rows are permuted, when the levels of a factor are
/// relabelled, or when the response is shifted and scaled (y -> a + c y), under which every SS
/// scales by c². Base data: the unbalanced JAHANMI2 subset (e-Handbook 1.3.5.5) on three factors
/// with all interactions; the random draws only permute and transform it.
/// </summary>
public sealed class FactorialAnovaPropertyTests
{
    private static readonly Lazy<AnovaInput> Base = new(() => FactorialTestData.JahanmiInput(
        ["table_speed_x1", "wheel_grit_x3", "batch"],
        true,
        SumOfSquaresType.Marginal,
        FactorialTestData.UnbalancedRow));

    private static readonly SumOfSquaresType[] AllTypes = [SumOfSquaresType.Sequential, SumOfSquaresType.Hierarchical, SumOfSquaresType.Marginal];

    private static bool Close(double a, double b, double tol) => Math.Abs(a - b) <= tol * Math.Max(Math.Abs(a), Math.Abs(b));

    private static bool SameTests(AnovaResult a, AnovaResult b, double ssScale)
    {
        for (var t = 0; t < a.Terms.Count; t++)
        {
            if (!Close(a.Terms[t].F.Value, b.Terms[t].F.Value, 1e-9)
                || !Close(a.Terms[t].P.Value, b.Terms[t].P.Value, 1e-7)
                || !Close(a.Terms[t].SumOfSquares * ssScale, b.Terms[t].SumOfSquares, 1e-9))
            {
                return false;
            }
        }

        return Close(a.ResidualSumOfSquares * ssScale, b.ResidualSumOfSquares, 1e-9);
    }

    private static int[] Permutation(int n, Random rng)
    {
        var p = Enumerable.Range(0, n).ToArray();
        rng.Shuffle(p);
        return p;
    }

    [Property(MaxTest = 25)]
    public bool Fit_RowsPermuted_SameFAndP(int seed)
    {
        var input = Base.Value;
        var perm = Permutation(input.Response.Length, new Random(seed));
        var shuffled = input with
        {
            Response = [.. perm.Select(i => input.Response[i])],
            Factors = [.. input.Factors.Select(f => f with { Codes = [.. perm.Select(i => f.Codes[i])] })],
        };
        return AllTypes.All(t => SameTests(FactorialAnova.Fit(input.With(t)), FactorialAnova.Fit(shuffled.With(t)), 1));
    }

    [Property(MaxTest = 25)]
    public bool Fit_LevelsRelabelled_SameFAndP(int seed)
    {
        var input = Base.Value;
        var rng = new Random(seed);
        var relabelled = input with
        {
            Factors = [.. input.Factors.Select(f =>
            {
                var map = Permutation(f.Levels.Count, rng);
                var levels = new string[f.Levels.Count];
                for (var l = 0; l < levels.Length; l++)
                {
                    levels[map[l]] = f.Levels[l];
                }

                return f with { Codes = [.. f.Codes.Select(c => map[c])], Levels = levels };
            })],
        };
        return AllTypes.All(t => SameTests(FactorialAnova.Fit(input.With(t)), FactorialAnova.Fit(relabelled.With(t)), 1));
    }

    [Property(MaxTest = 25)]
    public bool Fit_ResponseShiftedAndScaled_SameFAndPAndSsScaleByCSquared(short shiftRaw, short scaleRaw)
    {
        var input = Base.Value;
        var shift = shiftRaw / 8.0;
        var c = scaleRaw == 0 ? 1.0 : scaleRaw / 16.0;
        var moved = input with { Response = [.. input.Response.Select(v => shift + (c * v))] };
        return AllTypes.All(t => SameTests(FactorialAnova.Fit(input.With(t)), FactorialAnova.Fit(moved.With(t)), c * c));
    }
}
