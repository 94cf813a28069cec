using System.Globalization;
using System.Runtime.CompilerServices;
using System.Text;
using FsCheck;
using FsCheck.Fluent;
using Microsoft.FSharp.Core;
using StudyPress.Binding.Kinds;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Property-based fuzzing of the whole compiler: valid studies and data files are mutated (byte
/// flips, deletions, insertions of YAML/Markdown/CSV metacharacters and of keys and kinds,
/// truncation, repeated and swapped lines) and compiled. The property: <see cref="Compilation.Compile"/>
/// never throws, and every diagnostic points inside the file it names.
/// STUDYPRESS_FUZZ_CASES sets the number of cases (default 5000), STUDYPRESS_FUZZ_SEED the seed
/// (default fixed, so CI is reproducible; "random" for a fresh one). A crash found here becomes a
/// case in Cases/regressions/ (see <see cref="RegressionTests"/>).
/// </summary>
public sealed class FuzzTests
{
    private const int DefaultCases = 5000;

    private static readonly string[] FixedTokens =
    [
        "[", "]", "{", "}", ":", ": ", "- ", "-", "\t", "\n", "\r", "\r\n", "---\n", "...\n", "```", "```\n", "~~~", "```anova\n", "```anova main\n", "```posthoc\n",
        "[=", "[=main.dose.f]", "[=s.a.mean]", "[=main]", "[=a.b.c.d.e]", "[='x']", "[=main.dose, result]", ", 2 decimals", ", no leading zero", ", as percent", "\\[=", "{{", "}}", "{{ main.dose.f }}", "{{ main.dose | result }}", "\"", "'", "#", " #", "&a ", "*a", "!!str ", "!!binary ", "|\n", ">\n", "%YAML 1.2\n", "@", "`", ",", ";", "\\", "\u00A0", "\uFEFF", "é", "\u0000", "\u2028", "😀",
        "NaN", "Infinity", "-inf", "1e400", "1e-400", "-0", "NA", "", "0", "-1", "1e308", "99999999999999999999", "0.5", "1,5", "true", "null", "~",
        "title", "id", "authors", "alpha", "data", "path", "sha256", "delimiter", "decimal", "missing", "response", "factors", "levels", "label", "column", "order", "report", "significant-digits", "p-decimals", "digits", "p-digits", "figures", "raw-html", "template",
        "of", "factor", "method", "control", "type", "where", "caption", "by", "groups", "effect", "n", "target", "welch", "ss-type", "transform", "interaction",
        "box", "means", "qq", "power-curve", "f-distribution", "residuals-fitted", "intervals", "tukey", "games-howell", "holm", "dunnett", "log", "box-cox", "reciprocal", "sqrt", "auto", "yes", "no",
        "main", "dose", "a", "b", "c", "y", "data.csv", "../data.csv", "/etc/passwd", "sub/", "\"a\"\"b\"", "<script>", "</script>", "<img src=x onerror=alert(1)>", "[x](javascript:alert(1))",
        "0.49", "[=t.dose, result]",
    ];

    /// <summary>
    /// The fixed tokens, then every registered kind's words (<see cref="KindTokens"/>): a new kind is
    /// fuzzed without an entry here.
    /// </summary>
    internal static readonly string[] Tokens = [.. FixedTokens, .. KindTokens()];

    private static readonly (string Study, string Csv)[] FixedBases =
    [
        (
            "---\ntitle: Dose trial\nauthors: [A. Person]\nalpha: 0.05\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n    levels: [a, b, c]\n    label: Dose\norder: run\nreport:\n  figures: none\n---\n\n# Design\n\nSome *prose* with a [link](https://example.org).\n\n"
            + "```summary s\ncaption: Response by dose\n```\n\n```anova main\nwelch: auto\n```\n\n```assumptions chk\nof: main\n```\n\n```posthoc ph\nmethod: auto\n```\n\n```ranks r\nfactor: dose\n```\n\n```power p\ngroups: 3\neffect: 0.4\ntarget: 0.8\n```\n\n"
            + "F = [=main.dose.f] ([=main.dose.p]); mean of a [=s.a.mean].\n",
            "plot,dose,y,run\n1,a,1.0,3\n2,a,2.0,1\n3,a,1.5,7\n4,b,3.5,2\n5,b,4.0,9\n6,b,3.1,4\n7,c,5.5,8\n8,c,6.0,5\n9,c,5.2,6\n"
        ),
        (
            "---\ntitle: Two factors\ndata:\n  d:\n    path: data.csv\n    delimiter: \";\"\n    decimal: \",\"\n    missing: [\"\", NA]\nresponse: y\nfactors:\n  g:\n  h:\n---\n\n"
            + "```anova fit\nfactors: [g, h]\ninteraction: true\nss-type: 2\n```\n\n```figure\ntype: interaction\n```\n\n```summary by\nby: [g, h]\n```\n\nInteraction F [=fit.\"g:h\".f].\n",
            "g;h;y\nx;p;1,5\nx;p;2,0\nx;q;3,1\nx;q;2,9\nz;p;4,0\nz;p;NA\nz;q;5,5\nz;q;6,1\nz;p;4,4\n"
        ),
        (
            "---\ntitle: Transformed\ndata: data.csv\nresponse: y\nfactors: [dose]\n---\n\n```anova main\ntransform: log\nwelch: no\n```\n\n```posthoc\ncontrol: a\n```\n\n```figure\ntype: box\n```\n",
            "dose,y\na,1\na,2\na,3\nb,4\nb,5\nb,7\nc,8\nc,9\nc,12\n"
        ),
    ];

    /// <summary>
    /// The base studies: the fixed ones (header features: delimiters, decimals, missing values),
    /// then every registered kind's golden case (<c>Cases/kinds/NAME/</c>, its study and its data
    /// files), so that a new kind is fuzzed without an entry here.
    /// </summary>
    internal static readonly FuzzBase[] Bases = [.. FixedBases.Select(b => new FuzzBase(b.Study, [("data.csv", Encoding.UTF8.GetBytes(b.Csv))])), .. GoldenBases()];

    /// <summary>A base study: its text and its data files (folder-relative path, bytes); a case that mutates data mutates the first file.</summary>
    internal sealed record FuzzBase(string Study, IReadOnlyList<(string Path, byte[] Bytes)> Files);

    /// <summary>Each registered kind's words: its name, its fence (with and without a block name), and its own keys, bare and as a key line.</summary>
    private static IEnumerable<string> KindTokens()
    {
        foreach (var name in BlockKinds.Names)
        {
            yield return name;
            yield return "```" + name + "\n";
            yield return "```" + name + " b\n";
            foreach (var key in BlockKinds.All[name].OwnKeys)
            {
                yield return key;
                yield return key + ": ";
            }
        }
    }

    private static IEnumerable<FuzzBase> GoldenBases()
    {
        var cases = Path.Combine(SourceDir(), "Cases", "kinds");
        foreach (var name in BlockKinds.Names)
        {
            var dir = Path.Combine(cases, name);
            var data = Path.Combine(dir, "data");
            List<(string Path, byte[] Bytes)> files = Directory.Exists(data)
                ? Directory.GetFiles(data).Order(StringComparer.Ordinal).Select(f => ("data/" + Path.GetFileName(f), File.ReadAllBytes(f))).ToList()
                : [];
            yield return new FuzzBase(File.ReadAllText(Path.Combine(dir, "study.md")), files);
        }
    }

    private static string SourceDir([CallerFilePath] string path = "") => Path.GetDirectoryName(path)!;

    /// <summary>One mutation: what to do, where (a fraction of the length) and a dictionary token or byte.</summary>
    public sealed record Mutation(int Op, int At, int Length, int Token, byte Byte)
    {
        public override string ToString() => string.Create(CultureInfo.InvariantCulture, $"op{Op}@{At}+{Length} tok{Token} b{Byte}");
    }

    /// <summary>A fuzz case: which base, whether the CSV (rather than the study) is mutated, and the mutations.</summary>
    public sealed record FuzzCase(int Base, bool MutateCsv, Mutation[] Mutations)
    {
        public override string ToString() => $"base {Base}, {(MutateCsv ? "csv" : "study")}: {string.Join("; ", Mutations.Select(m => m.ToString()))}";
    }

    private static Gen<Mutation> MutationGen =>
        from op in Gen.Frequency((3, Gen.Constant(0)), (2, Gen.Constant(1)), (5, Gen.Constant(2)), (1, Gen.Constant(3)), (1, Gen.Constant(4)), (1, Gen.Constant(5)), (2, Gen.Constant(6)))
        from at in Gen.Choose(0, 9999)
        from length in Gen.Choose(1, 40)
        from token in Gen.Choose(0, Tokens.Length - 1)
        from b in Gen.Choose(0, 255)
        select new Mutation(op, at, length, token, (byte)b);

    private static Gen<FuzzCase> CaseGen =>
        from b in Gen.Choose(0, Bases.Length - 1)
        from csv in Gen.Frequency((1, Gen.Constant(true)), (3, Gen.Constant(false)))
        from n in Gen.Choose(1, 6)
        from ms in Gen.ArrayOf(MutationGen, n)
        select new FuzzCase(b, csv, ms);

    /// <summary>Applies mutations to UTF-8 bytes.</summary>
    internal static byte[] Apply(byte[] input, IEnumerable<Mutation> mutations)
    {
        var bytes = new List<byte>(input);
        foreach (var m in mutations)
        {
            var at = bytes.Count == 0 ? 0 : (int)((long)m.At * bytes.Count / 10000);
            switch (m.Op)
            {
                case 0 when bytes.Count > 0: // flip bits of one byte
                    bytes[Math.Min(at, bytes.Count - 1)] ^= m.Byte == 0 ? (byte)1 : m.Byte;
                    break;
                case 1: // delete a range
                    bytes.RemoveRange(at, Math.Min(m.Length, bytes.Count - at));
                    break;
                case 2: // insert a dictionary token
                    bytes.InsertRange(at, Encoding.UTF8.GetBytes(Tokens[m.Token]));
                    break;
                case 3: // truncate
                    bytes.RemoveRange(at, bytes.Count - at);
                    break;
                case 4: // repeat a line
                    {
                        var (s, e) = LineAround(bytes, at);
                        bytes.InsertRange(e, bytes.GetRange(s, e - s));
                        break;
                    }

                case 5: // insert a raw byte
                    bytes.Insert(at, m.Byte);
                    break;
                case 6: // replace a range with a token
                    bytes.RemoveRange(at, Math.Min(m.Length % 8, bytes.Count - at));
                    bytes.InsertRange(at, Encoding.UTF8.GetBytes(Tokens[m.Token]));
                    break;
            }
        }

        return [.. bytes];
    }

    private static (int Start, int End) LineAround(List<byte> bytes, int at)
    {
        var s = Math.Min(at, bytes.Count);
        while (s > 0 && bytes[s - 1] != (byte)'\n')
        {
            s--;
        }

        var e = Math.Min(at, bytes.Count);
        while (e < bytes.Count && bytes[e] != (byte)'\n')
        {
            e++;
        }

        return (s, Math.Min(e + 1, bytes.Count));
    }

    /// <summary>Compiles the files in <paramref name="folder"/>; returns null when the property holds, else why not.</summary>
    internal static string? Check(string folder)
    {
        var studyPath = Path.Combine(folder, "study.md");
        CompilationResult result;
        try
        {
            result = Compilation.Compile(studyPath, new CompileOptions());
        }
        catch (Exception e)
        {
            return "threw " + e;
        }

        foreach (var d in result.Diagnostics)
        {
            var file = d.Location.Path;
            if (!File.Exists(file))
            {
                return $"diagnostic names a file that does not exist: {d}";
            }

            var lines = LineLengths(File.ReadAllBytes(file));
            if (d.Location.Line < 0 || d.Location.Line >= lines.Count || d.Location.Column < 0 || d.Location.Column > lines[d.Location.Line])
            {
                return $"diagnostic outside its file ({lines.Count} lines): {d}";
            }
        }

        return result.Succeeded || result.Diagnostics.Count > 0 ? null : "failed without a diagnostic";
    }

    /// <summary>Byte length of each line (LF, CR or CRLF ends a line; a column counts characters, never more than bytes).</summary>
    private static List<int> LineLengths(byte[] bytes)
    {
        var lengths = new List<int>();
        var start = 0;
        for (var i = 0; i < bytes.Length; i++)
        {
            if (bytes[i] == (byte)'\n' || bytes[i] == (byte)'\r')
            {
                lengths.Add(i - start);
                if (bytes[i] == (byte)'\r' && i + 1 < bytes.Length && bytes[i + 1] == (byte)'\n')
                {
                    i++;
                }

                start = i + 1;
            }
        }

        lengths.Add(bytes.Length - start);
        return lengths;
    }

    /// <summary>Every registered kind is in the corpus: its name, fence and own keys among the tokens, its golden case among the bases.</summary>
    [Fact]
    public void Corpus_CoversEveryRegisteredKind()
    {
        foreach (var name in BlockKinds.Names)
        {
            Assert.Contains("```" + name + "\n", Tokens);
            Assert.All(BlockKinds.All[name].OwnKeys, key => Assert.Contains(key + ": ", Tokens));
            Assert.Contains(Bases, b => b.Study.Contains("```" + name + " ", StringComparison.Ordinal) && b.Files.Count > 0);
        }
    }

    [Fact]
    public void Compile_MutatedStudiesAndData_NeverThrowsAndPositionsEveryDiagnosticInsideItsFile()
    {
        var cases = int.TryParse(Environment.GetEnvironmentVariable("STUDYPRESS_FUZZ_CASES"), NumberStyles.None, CultureInfo.InvariantCulture, out var n) ? n : DefaultCases;
        var seedText = Environment.GetEnvironmentVariable("STUDYPRESS_FUZZ_SEED");
        var seed = seedText == "random" ? (ulong)Random.Shared.NextInt64() : ulong.TryParse(seedText, NumberStyles.None, CultureInfo.InvariantCulture, out var s) ? s : 20240611UL;
        using var run = new StudyRun();
        var failures = new List<string>();
        var property = Prop.ForAll(Arb.From(CaseGen), c =>
        {
            var fuzzBase = Bases[c.Base];
            var studyBytes = Encoding.UTF8.GetBytes(fuzzBase.Study);
            var mutateData = c.MutateCsv && fuzzBase.Files.Count > 0;
            if (!mutateData)
            {
                studyBytes = Apply(studyBytes, c.Mutations);
            }

            run.Bytes("study.md", studyBytes);
            var csvBytes = Array.Empty<byte>();
            for (var i = 0; i < fuzzBase.Files.Count; i++)
            {
                var (path, bytes) = fuzzBase.Files[i];
                if (i == 0)
                {
                    csvBytes = mutateData ? Apply(bytes, c.Mutations) : bytes;
                    bytes = csvBytes;
                }

                run.Bytes(path, bytes);
            }

            var problem = Check(run.Folder);
            if (problem is not null && failures.Count < 5)
            {
                failures.Add($"{c}\n  {problem.Split('\n')[0]}\n  study: {Convert.ToBase64String(studyBytes)}\n  {(fuzzBase.Files.Count > 0 ? fuzzBase.Files[0].Path : "csv")}: {Convert.ToBase64String(csvBytes)}");
            }

            return problem is null;
        });
        var config = Config.Quick.WithMaxTest(cases).WithQuietOnSuccess(true).WithReplay(FSharpOption<Replay>.Some(new Replay(new Rnd(seed), FSharpOption<int>.None)));
        try
        {
            FsCheck.Check.One(config, property);
        }
        catch (Exception) when (failures.Count > 0)
        {
        }

        Assert.True(failures.Count == 0, $"seed {seed}: {failures.Count} failing case(s); add each to Cases/regressions/:\n" + string.Join("\n", failures));
    }
}
