using System.Globalization;
using BenchmarkDotNet.Attributes;
using StudyPress.Data;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Assumptions;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Benchmarks;

/// <summary>CSV ingest of a large file: hash, decode, parse, intern levels, centre exactly.</summary>
[MemoryDiagnoser]
public class CsvIngest
{
    private byte[] bytes = [];

    [Params(1_000_000)]
    public int Rows { get; set; }

    [GlobalSetup]
    public void Setup() => bytes = Fixtures.OneWayCsv(Rows);

    [Benchmark]
    public LoadedDataset? Load() => Fixtures.LoadOneWay(bytes, "bench.csv");
}

/// <summary>The statistics engine's hot paths on 5 groups.</summary>
[MemoryDiagnoser]
public class Engine
{
    private double[][] groups = [];
    private double[] response = [];
    private FactorColumn factor = null!;
    private double[] sample = [];

    [Params(1_000, 1_000_000)]
    public int PerGroup { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        groups = Fixtures.Groups(5, PerGroup);
        response = [.. groups.SelectMany(g => g)];
        factor = new FactorColumn("g", [.. groups.SelectMany((g, k) => g.Select(_ => k))], [.. Enumerable.Range(1, 5).Select(k => k.ToString(CultureInfo.InvariantCulture))]);
        sample = [.. response.Take(5000)];
    }

    [Benchmark]
    public AnovaResult OneWay() => FactorialAnova.Fit(new AnovaInput(response, [factor], false, SumOfSquaresType.Sequential, 0.05));

    [Benchmark]
    public ShapiroWilkResult ShapiroWilk5000() => ShapiroWilk.Test(sample);

    [Benchmark]
    public LeveneResult BrownForsytheTest() => BrownForsythe.Test(groups);

    [Benchmark]
    public PostHocResult Tukey() => TukeyHsd.Compare(factor.Levels, groups, 1.0, response.Length - 5, 0.05);
}

/// <summary>A full compilation (parse, bind, load, evaluate, render) of a 40-row study in a temp folder.</summary>
[MemoryDiagnoser]
public class SmallStudy
{
    private string dir = string.Empty;

    [GlobalSetup]
    public void Setup()
    {
        dir = Path.Combine(Path.GetTempPath(), "studypress-bench-" + Environment.ProcessId.ToString(CultureInfo.InvariantCulture));
        Directory.CreateDirectory(dir);
        var rng = new Random(1);
        var lines = new List<string> { "id,run,group,y" };
        for (var i = 0; i < 40; i++)
        {
            var g = (i % 4) + 1;
            lines.Add(string.Create(CultureInfo.InvariantCulture, $"R{i + 1:D2},{i + 1},g{g},{20 + (0.4 * g) + Fixtures.Gauss(rng, 1):F2}"));
        }

        File.WriteAllLines(Path.Combine(dir, "small.csv"), lines);
        File.WriteAllText(Path.Combine(dir, "small.md"), """
            ---
            title: Benchmark
            data:
              d: small.csv
            response: y
            factors:
              group:
                levels: [g1, g2, g3, g4]
            order: run
            ---

            ```summary groups
            ```

            ```anova main
            factors: [group]
            ```

            ```assumptions checks
            of: main
            ```

            ```posthoc pairs
            of: main
            method: tukey
            ```
            """);
    }

    [GlobalCleanup]
    public void Cleanup() => Directory.Delete(dir, recursive: true);

    [Benchmark]
    public CompilationResult Compile()
    {
        var result = Compilation.Compile(Path.Combine(dir, "small.md"), new CompileOptions { OutputDirectory = dir });
        return result.Succeeded ? result : throw new InvalidOperationException(string.Join("\n", result.Diagnostics));
    }
}

/// <summary>
/// Sorting a group of the big-data path: the library sort against the radix sort the summary, box
/// plots and quantile plots use (same result, bit for bit; see FastSortTests).
/// </summary>
[MemoryDiagnoser]
public class GroupSort
{
    private double[] values = [];

    [Params(200_000, 2_000_000)]
    public int N { get; set; }

    [GlobalSetup]
    public void Setup() => values = [.. Fixtures.Groups(1, N)[0].Select(v => Math.Round(50 + v, 2))];

    [Benchmark(Baseline = true)]
    public double[] ArraySort()
    {
        var copy = (double[])values.Clone();
        Array.Sort(copy);
        return copy;
    }

    [Benchmark]
    public double[] RadixSort() => FastSort.SortedCopy(values);
}

/// <summary>
/// A whole compilation of a one-way study of 1,000,000 rows (summary, anova, assumptions, Tukey,
/// with their figures) in a temp folder: the in-process part of tests/bench/versus-python.sh.
/// </summary>
[MemoryDiagnoser]
public class LargeOneWayStudy
{
    private string dir = string.Empty;

    [GlobalSetup]
    public void Setup()
    {
        dir = Path.Combine(Path.GetTempPath(), "studypress-bench-large-" + Environment.ProcessId.ToString(CultureInfo.InvariantCulture));
        Directory.CreateDirectory(dir);
        File.WriteAllBytes(Path.Combine(dir, "d.csv"), Fixtures.OneWayCsv(1_000_000));
        File.WriteAllText(Path.Combine(dir, "large.md"), """
            ---
            title: Benchmark, 1,000,000 rows
            data:
              d: d.csv
            response: y
            factors:
              group:
                levels: [g1, g2, g3, g4, g5]
            order: run
            ---

            ```summary groups
            ```

            ```anova main
            factors: [group]
            ```

            ```assumptions checks
            of: main
            ```

            ```posthoc pairs
            of: main
            method: tukey
            ```
            """);
    }

    [GlobalCleanup]
    public void Cleanup() => Directory.Delete(dir, recursive: true);

    [Benchmark]
    public CompilationResult Compile()
    {
        var result = Compilation.Compile(Path.Combine(dir, "large.md"), new CompileOptions { OutputDirectory = dir });
        return result.Succeeded ? result : throw new InvalidOperationException(string.Join("\n", result.Diagnostics));
    }
}
