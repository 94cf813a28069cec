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
    public AnovaResult OneWay() => OneWayAnova.Fit(response, factor, 0.05);

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
