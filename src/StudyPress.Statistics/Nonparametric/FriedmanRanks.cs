using System.Globalization;

namespace StudyPress.Statistics.Nonparametric;

/// <summary>
/// The within-block mid-ranks of a complete block design (n blocks × k treatments, one value per
/// cell), reduced to exact integer sums shared by <see cref="Friedman"/>,
/// <see cref="FriedmanNemenyi"/> and <see cref="FriedmanConover"/>.
/// <para>
/// Mid-ranks are multiples of ½, so every quantity is kept on the doubled and centred scale
/// c_ij = 2 r_ij − (k + 1), an integer: the column sums C_j = Σ_i c_ij = 2 R_j − n (k + 1) and the
/// sums Σ_j C_j² and Σ_ij c_ij² are exact (Int128, checked), and every statistic is a ratio of
/// two exact integers, rounded once or twice when converted to double. With S = Σ_j (R_j − n (k + 1)/2)²
/// = Σ C_j² / 4, SS_total = Σ_ij (r_ij − (k + 1)/2)² = Σ c_ij² / 4 and SS_error = SS_total − S/n =
/// (n Σ c_ij² − Σ C_j²) / (4 n) (the block sum of squares of ranks is zero).
/// </para>
/// </summary>
internal sealed class FriedmanRanks
{
    private FriedmanRanks(int blocks, int treatments, long[] centredSums, Int128 sumCentredSums2, Int128 sumCells2)
    {
        Blocks = blocks;
        Treatments = treatments;
        CentredSums = centredSums;
        SumC2 = sumCentredSums2;
        SumCells2 = sumCells2;
    }

    /// <summary>n, the number of blocks.</summary>
    public int Blocks { get; }

    /// <summary>k, the number of treatments.</summary>
    public int Treatments { get; }

    /// <summary>C_j = 2 R_j − n (k + 1), in treatment order.</summary>
    public long[] CentredSums { get; }

    /// <summary>Σ_j C_j² = 4 S.</summary>
    public Int128 SumC2 { get; }

    /// <summary>Σ_ij c_ij² = 4 SS_total; zero exactly when every block is tied throughout.</summary>
    public Int128 SumCells2 { get; }

    /// <summary>n Σ c_ij² − Σ C_j² = 4 n SS_error (never negative, by Cauchy–Schwarz).</summary>
    public Int128 ErrorNumerator => checked((Blocks * SumCells2) - SumC2);

    /// <summary>n k (k² − 1)/3 = Σ c_ij² without ties (the largest value Σ c_ij² can take).</summary>
    public Int128 SumCells2WithoutTies
    {
        get
        {
            Int128 n = Blocks, k = Treatments;
            return checked(n * k * ((k * k) - 1) / 3);
        }
    }

    /// <summary>True when every block has all its values tied (no information in the ranks).</summary>
    public bool AllTied => SumCells2 == 0;

    /// <summary>R_j, the rank sum of treatment j (exact: a multiple of ½).</summary>
    public double RankSum(int j) => (CentredSums[j] + ((double)Blocks * (Treatments + 1))) / 2.0;

    /// <summary>R̄_j = R_j / n.</summary>
    public double MeanRank(int j) => RankSum(j) / Blocks;

    /// <summary>R̄_a − R̄_b = (C_a − C_b) / (2 n), rounded once.</summary>
    public double MeanRankDiff(int a, int b) => (CentredSums[a] - CentredSums[b]) / (2.0 * Blocks);

    /// <summary>Checks the design and ranks each block; messages name the block and treatment (1-based).</summary>
    public static FriedmanRanks Of(IReadOnlyList<double[]> blocks, string paramName)
    {
        ArgumentNullException.ThrowIfNull(blocks, paramName);
        var n = blocks.Count;
        if (n < 2)
        {
            throw new ArgumentException(
                string.Create(CultureInfo.InvariantCulture, $"the Friedman test needs at least 2 blocks; got {n}"), paramName);
        }

        var k = blocks[0]?.Length ?? 0;
        for (var i = 0; i < n; i++)
        {
            var row = blocks[i] ?? throw new ArgumentException(
                string.Create(CultureInfo.InvariantCulture, $"block {i + 1} is missing (null)"), paramName);
            if (i == 0 && k < 2)
            {
                throw new ArgumentException(
                    string.Create(CultureInfo.InvariantCulture, $"the Friedman test needs at least 2 treatments; block 1 has {k} value(s)"),
                    paramName);
            }

            if (row.Length != k)
            {
                throw new ArgumentException(
                    string.Create(
                        CultureInfo.InvariantCulture,
                        $"block {i + 1} has {row.Length} value(s) but block 1 has {k}: every block needs exactly one value per treatment (complete blocks)"),
                    paramName);
            }

            for (var j = 0; j < k; j++)
            {
                if (!double.IsFinite(row[j]))
                {
                    throw new ArgumentException(
                        string.Create(CultureInfo.InvariantCulture, $"block {i + 1}, treatment {j + 1}: the value {row[j]} is not finite"),
                        paramName);
                }
            }
        }

        var sums = new long[k];
        Int128 cells2 = 0;
        var one = new double[1][];
        for (var i = 0; i < n; i++)
        {
            one[0] = blocks[i];
            var ranks = Ranking.MidRanks(one).Ranks[0];
            for (var j = 0; j < k; j++)
            {
                // 2 r is an integer in 2..2k (mid-ranks are multiples of ½), held exactly in double.
                var c = (long)(2.0 * ranks[j]) - (k + 1L);
                sums[j] = checked(sums[j] + c);
                cells2 = checked(cells2 + ((Int128)c * c));
            }
        }

        Int128 sumC2 = 0;
        foreach (var c in sums)
        {
            sumC2 = checked(sumC2 + ((Int128)c * c));
        }

        return new FriedmanRanks(n, k, sums, sumC2, cells2);
    }

    /// <summary>An exact integer ratio a/b as a double (each converted once, then divided).</summary>
    public static double Ratio(Int128 a, Int128 b) => (double)a / (double)b;
}
