using System.Diagnostics;
using System.Globalization;
using BenchmarkDotNet.Running;
using StudyPress.Benchmarks;

// `ingest FILE`: times CsvLoader.Load on a file (best of 3) and prints MB/s; used by
// tests/bench/run-benchmarks.sh. Anything else goes to BenchmarkDotNet (e.g. --filter '*Csv*').
if (args.Length == 2 && args[0] == "ingest")
{
    var bytes = File.ReadAllBytes(args[1]);
    var best = double.MaxValue;
    for (var i = 0; i < 3; i++)
    {
        var sw = Stopwatch.StartNew();
        var ds = Fixtures.LoadOneWay(bytes, args[1]);
        sw.Stop();
        if (ds is null)
        {
            Console.Error.WriteLine("ingest: the file did not load (expected columns run, group, y)");
            return 1;
        }

        best = Math.Min(best, sw.Elapsed.TotalSeconds);
    }

    var mbps = bytes.Length / 1048576.0 / best;
    Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{mbps:F0} MB/s ({bytes.Length} bytes in {best:F3} s)"));
    return 0;
}

// `compile STUDY.md [OUTDIR]`: one in-process compilation with the time of each run printed
// (exceptions are not caught, so a failure shows its stack).
if (args.Length >= 2 && args[0] == "compile")
{
    for (var i = 0; i < 2; i++)
    {
        var sw = Stopwatch.StartNew();
        var result = StudyPress.Compilation.Compile(args[1], new StudyPress.CompileOptions { OutputDirectory = args.Length > 2 ? args[2] : Path.GetTempPath() });
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"compile: {sw.Elapsed.TotalSeconds:F3} s, succeeded={result.Succeeded}, html={result.Html?.Length ?? 0} chars, allocated {GC.GetTotalAllocatedBytes() / 1048576} MB so far, peak working set {Process.GetCurrentProcess().PeakWorkingSet64 / 1048576} MB, gen2 collections {GC.CollectionCount(2)}"));
        foreach (var d in result.Diagnostics.Take(5))
        {
            Console.WriteLine(d);
        }
    }

    return 0;
}

BenchmarkSwitcher.FromAssembly(typeof(Fixtures).Assembly).Run(args);
return 0;
