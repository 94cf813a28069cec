using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Evaluation.Kinds;

/// <summary>What a <c>friedman</c> block computed: manifest values only, and the facts its text needs.</summary>
public sealed class FriedmanOutcome(BoundBlock block) : BlockOutcome(block)
{
    /// <summary>The treatment factor as the report names it (label or column).</summary>
    public string TreatmentLabel { get; init; } = string.Empty;

    /// <summary>The blocking factor as the report names it.</summary>
    public string BlocksLabel { get; init; } = string.Empty;

    /// <summary><c>friedman</c> values of the treatment term: chi2, df, p, kendall_w, f_iman_davenport, df1_iman_davenport, df2_iman_davenport, p_iman_davenport, n_blocks, blocks_dropped.</summary>
    public IReadOnlyDictionary<string, ResultValue>? Test { get; init; }

    /// <summary>Mean rank of each treatment, in level order.</summary>
    public IReadOnlyList<(string Level, ResultValue MeanRank)> Treatments { get; init; } = [];

    /// <summary>The pairwise procedure: <see cref="TestName.Conover"/> or <see cref="TestName.Nemenyi"/>.</summary>
    public string PairTest { get; init; } = TestName.Conover;

    /// <summary>Pairs (A, B) with diff, se, statistic, p_adj.</summary>
    public IReadOnlyList<(string A, string B, IReadOnlyDictionary<string, ResultValue> Values)> Pairs { get; init; } = [];

    /// <summary>Nemenyi's critical difference of mean ranks (null for Conover).</summary>
    public ResultValue? CriticalDifference { get; init; }

    /// <summary>Blocks left out because some treatment had no value in them.</summary>
    public IReadOnlyList<string> DroppedBlocks { get; init; } = [];

    /// <summary>Rows left out because the response or a factor was missing.</summary>
    public int DroppedMissing { get; init; }

    /// <summary>True when some block has tied values (the statistic is tie-corrected).</summary>
    public bool HasTies { get; init; }
}

/// <summary>Evaluates <c>friedman</c> blocks: complete blocks only, one value per block and treatment.</summary>
public sealed class FriedmanEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new FriedmanEvaluator());

    public override string Kind => "friedman";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = block.OptionsOf<FriedmanKind.Options>();
        var treatment = options.Treatment;
        if (treatment is null)
        {
            var others = block.Factors.Where(f => f.Name != options.Blocks.Name).ToList();
            if (others.Count != 1)
            {
                diagnostics.OneFactorOnly(block.Location, Kind);
                return new BlockOutcome(block);
            }

            treatment = others[0];
        }

        var two = block.WithFactors([treatment, options.Blocks], block.FactorsLocation);
        var data = context.Select(two, diagnostics);
        if (data is null)
        {
            return new BlockOutcome(block);
        }

        var t = data.Factors[0];
        var b = data.Factors[1];
        if (t.Levels.Count < 2)
        {
            diagnostics.TooFewGroups(options.TreatmentLocation, treatment.Name, t.Levels.Count);
            return new BlockOutcome(block);
        }

        // One value per block and treatment; a block missing a treatment is left out whole.
        var k = t.Levels.Count;
        var cells = new double[b.Levels.Count][];
        var counts = new int[b.Levels.Count, k];
        for (var i = 0; i < data.Rows.Length; i++)
        {
            var (bi, ti) = (b.Codes[i], t.Codes[i]);
            cells[bi] ??= new double[k];
            cells[bi][ti] = data.Values[i];
            if (++counts[bi, ti] == 2)
            {
                diagnostics.ReplicatedBlockCell(options.BlocksLocation, options.Blocks.Name, b.Levels[bi], treatment.Name, t.Levels[ti], Count(data, bi, ti));
                return new BlockOutcome(block);
            }
        }

        var complete = new List<double[]>();
        var dropped = new List<string>();
        for (var bi = 0; bi < b.Levels.Count; bi++)
        {
            if (Enumerable.Range(0, k).All(ti => counts[bi, ti] == 1))
            {
                complete.Add(cells[bi]);
            }
            else
            {
                dropped.Add(b.Levels[bi]);
            }
        }

        if (complete.Count < 2)
        {
            diagnostics.TooFewCompleteBlocks(options.BlocksLocation, options.Blocks.Name, complete.Count, dropped.Count);
            return new BlockOutcome(block);
        }

        var result = Friedman.Test(complete);
        var inputs = context.Inputs(block);
        var term = treatment.Name;
        ResultValue Add(string test, string? level, IReadOnlyList<string>? pair, string stat, Statistics.Quantity q) =>
            context.Results.Add(block.Id, test, term, level, pair, stat, q, inputs);
        var test = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
        {
            [Stat.Chi2] = Add(TestName.Friedman, null, null, Stat.Chi2, result.ChiSquare),
            [Stat.Df] = Add(TestName.Friedman, null, null, Stat.Df, Statistics.Quantity.Of(result.Df)),
            [Stat.P] = Add(TestName.Friedman, null, null, Stat.P, result.P),
            [Stat.KendallW] = Add(TestName.Friedman, null, null, Stat.KendallW, result.KendallW),
            [Stat.FImanDavenport] = Add(TestName.Friedman, null, null, Stat.FImanDavenport, result.ImanDavenportF),
            [Stat.Df1ImanDavenport] = Add(TestName.Friedman, null, null, Stat.Df1ImanDavenport, Statistics.Quantity.Of(result.ImanDavenportDf1)),
            [Stat.Df2ImanDavenport] = Add(TestName.Friedman, null, null, Stat.Df2ImanDavenport, Statistics.Quantity.Of(result.ImanDavenportDf2)),
            [Stat.PImanDavenport] = Add(TestName.Friedman, null, null, Stat.PImanDavenport, result.ImanDavenportP),
            [Stat.NBlocks] = Add(TestName.Friedman, null, null, Stat.NBlocks, Statistics.Quantity.Of(result.Blocks)),
            [Stat.BlocksDropped] = Add(TestName.Friedman, null, null, Stat.BlocksDropped, Statistics.Quantity.Of(dropped.Count)),
        };
        var treatments = t.Levels.Select((level, j) => (level, Add(TestName.Friedman, level, null, Stat.MeanRank, Statistics.Quantity.Of(result.MeanRanks[j])))).ToList();

        var pairTest = options.Method == "nemenyi" ? TestName.Nemenyi : TestName.Conover;
        IReadOnlyList<FriedmanPairwiseComparison> comparisons;
        ResultValue? cd = null;
        if (pairTest == TestName.Nemenyi)
        {
            var nemenyi = FriedmanNemenyi.Compare(t.Levels, complete, context.Header.Alpha);
            comparisons = nemenyi.Comparisons;
            cd = Add(TestName.Nemenyi, null, null, Stat.Cd, Statistics.Quantity.Of(nemenyi.CriticalDifference));
        }
        else
        {
            comparisons = FriedmanConover.Compare(t.Levels, complete, PValueAdjustmentMethod.Holm).Comparisons;
        }

        var pairs = comparisons.Select(c =>
        {
            string[] pair = [c.TreatmentA, c.TreatmentB];
            IReadOnlyDictionary<string, ResultValue> v = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                [Stat.Diff] = Add(pairTest, null, pair, Stat.Diff, Statistics.Quantity.Of(c.MeanRankDiff)),
                [Stat.Se] = Add(pairTest, null, pair, Stat.Se, c.Se),
                [Stat.Statistic] = Add(pairTest, null, pair, Stat.Statistic, c.Statistic),
                [Stat.PAdj] = Add(pairTest, null, pair, Stat.PAdj, c.PAdjusted),
            };
            return (c.TreatmentA, c.TreatmentB, v);
        }).ToList();

        return new FriedmanOutcome(block)
        {
            TreatmentLabel = treatment.Display,
            BlocksLabel = options.Blocks.Display,
            Test = test,
            Treatments = treatments,
            PairTest = pairTest,
            Pairs = pairs,
            CriticalDifference = cd,
            DroppedBlocks = dropped,
            DroppedMissing = data.DroppedMissing,
            HasTies = result.TieCorrection < 1,
        };
    }

    private static int Count(BlockData data, int bi, int ti)
    {
        var n = 0;
        for (var i = 0; i < data.Rows.Length; i++)
        {
            n += data.Factors[1].Codes[i] == bi && data.Factors[0].Codes[i] == ti ? 1 : 0;
        }

        return n;
    }
}
