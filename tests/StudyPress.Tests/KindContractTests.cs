using System.Globalization;
using System.Runtime.CompilerServices;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using StudyPress.Binding.Kinds;
using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;
using StudyPress.Rendering.Kinds;
using StudyPress.Syntax;

namespace StudyPress.Tests;

/// <summary>
/// The contract every analysis kind keeps (DEVELOPERS.md, "Adding an analysis kind"): its three
/// parts are registered, its docs section names its keys, every manifest name it writes is in the
/// vocabulary and the docs, and its golden case (<c>Cases/kinds/NAME/</c>) builds to the committed
/// values and meets the outside references listed beside it. A new kind without any of these
/// fails here. Golden values are refreshed with STUDYPRESS_UPDATE_GOLDEN=1; references never are.
/// </summary>
public sealed class KindContractTests
{
    private static string SourceDir([CallerFilePath] string path = "") => Path.GetDirectoryName(path)!;

    private static string CasesDir => Path.Combine(SourceDir(), "Cases", "kinds");

    private static string RepoDir => Path.GetFullPath(Path.Combine(SourceDir(), "..", ".."));

    public static TheoryData<string> Kinds()
    {
        var data = new TheoryData<string>();
        foreach (var name in BlockKinds.Names)
        {
            data.Add(name);
        }

        return data;
    }

    [Fact]
    public void EveryKindHasItsThreeParts()
    {
        Assert.True(BlockKinds.All.Count >= 9, "kinds are registered by module initializers; too few were found");
        Assert.Equal(BlockKinds.Names, new SortedSet<string>(KindEvaluators.All.Keys, StringComparer.Ordinal));
        Assert.Equal(BlockKinds.Names, new SortedSet<string>(KindRenderers.All.Keys, StringComparer.Ordinal));
    }

    [Theory]
    [MemberData(nameof(Kinds))]
    public void DocsSectionNamesTheKindAndItsKeys(string name)
    {
        var analyses = File.ReadAllText(Path.Combine(RepoDir, "docs", "analyses.md"));
        var section = Section(analyses, name);
        Assert.True(section is not null, $"docs/analyses.md has no section '## `{name}`'");
        foreach (var key in BlockKinds.All[name].OwnKeys)
        {
            Assert.True(section!.Contains($"`{key}`", StringComparison.Ordinal), $"docs/analyses.md, section `{name}`, does not document its key `{key}`");
        }

        var studyFile = File.ReadAllText(Path.Combine(RepoDir, "docs", "study-file.md"));
        Assert.Contains($"| `{name}` |", studyFile, StringComparison.Ordinal);
    }

    [Fact]
    public void EveryManifestNameIsDocumented()
    {
        var docs = File.ReadAllText(Path.Combine(RepoDir, "docs", "manifest.md")) + File.ReadAllText(Path.Combine(RepoDir, "docs", "methods-and-sentences.md"));
        var missing = Stat.All.Keys.Concat(TestName.All.Keys).Where(n => !docs.Contains($"`{n}`", StringComparison.Ordinal)).ToList();
        Assert.True(missing.Count == 0, "names in Evaluation/Vocabulary.cs not documented in docs/manifest.md: " + string.Join(", ", missing));
    }

    [Theory]
    [MemberData(nameof(Kinds))]
    public void GoldenCaseBuildsToItsValues(string name)
    {
        var dir = Path.Combine(CasesDir, name);
        var study = Path.Combine(dir, "study.md");
        Assert.True(File.Exists(study), $"no golden case for the kind '{name}': add {Path.GetRelativePath(RepoDir, study)}");
        Assert.Contains($"```{name} ", File.ReadAllText(study), StringComparison.Ordinal);

        var result = Compilation.Compile(study, new CompileOptions { OutputDirectory = Path.Combine(Path.GetTempPath(), "studypress-kind-cases", name) });
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));

        // A p below the smallest shown reads "p < 0.001" everywhere (text, cautions, figure
        // descriptions), never "p = < 0.001".
        Assert.DoesNotMatch(@"=\s+<\s*0?\.\d", System.Net.WebUtility.HtmlDecode(result.Html!));

        var values = Values(result.ManifestJson!);
        var goldenPath = Path.Combine(dir, "golden.json");
        if (Environment.GetEnvironmentVariable("STUDYPRESS_UPDATE_GOLDEN") == "1")
        {
            File.WriteAllText(goldenPath, values, new UTF8Encoding(false));
        }

        Assert.True(File.Exists(goldenPath), $"no golden values: run with STUDYPRESS_UPDATE_GOLDEN=1 to write {Path.GetRelativePath(RepoDir, goldenPath)}, then review it");
        Assert.Equal(File.ReadAllText(goldenPath).Replace("\r\n", "\n", StringComparison.Ordinal), values);
    }

    [Theory]
    [MemberData(nameof(Kinds))]
    public void GoldenCaseMeetsItsReferences(string name)
    {
        var path = Path.Combine(CasesDir, name, "reference.json");
        if (!File.Exists(path))
        {
            // Kinds whose values have no outside reference (figure, power, methods, ranks on these
            // data) say so in their study.md; their golden values are a regression snapshot only.
            Assert.Contains("regression snapshot", File.ReadAllText(Path.Combine(CasesDir, name, "study.md")), StringComparison.Ordinal);
            return;
        }

        var result = Compilation.Compile(Path.Combine(CasesDir, name, "study.md"), new CompileOptions { OutputDirectory = Path.Combine(Path.GetTempPath(), "studypress-kind-cases", name) });
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var manifest = JsonNode.Parse(result.ManifestJson!)!["values"]!.AsArray();
        var reference = JsonNode.Parse(File.ReadAllText(path))!;
        var checks = reference["checks"]!.AsArray();
        Assert.NotEmpty(checks);
        foreach (var check in checks)
        {
            var refPath = check!["path"]!.GetValue<string>();
            var published = check["published"]!.GetValue<string>();
            var parts = ReferenceGrammar.Parse(refPath, out var error)?.Parts ?? throw new InvalidOperationException(refPath + ": " + error);
            var value = manifest.SingleOrDefault(v => Components(v!).SequenceEqual(parts));
            Assert.True(value is not null, $"{name}: no manifest value at {refPath}");
            var actual = value!["value"]!.GetValue<double>();

            // A published value is met when the computed one rounds to it at its printed decimals.
            var decimals = published.Contains('.', StringComparison.Ordinal) ? published.Length - published.IndexOf('.', StringComparison.Ordinal) - 1 : 0;
            var expected = double.Parse(published, CultureInfo.InvariantCulture);
            var tolerance = (0.5 * Math.Pow(10, -decimals)) + (1e-12 * Math.Abs(expected));
            Assert.True(Math.Abs(actual - expected) <= tolerance, $"{name}: {refPath} = {actual.ToString("R", CultureInfo.InvariantCulture)}, reference {published} ({check["status"]}; {reference["source"]})");
        }
    }

    /// <summary>
    /// Kinds whose main test has no sentence for a <c>[=block.test.term, result]</c> reference:
    /// the list of kinds from before this check. A new kind is not added here; its renderer lists
    /// its main test in <see cref="KindRenderer.PhrasedTests"/> and writes the sentence in
    /// <see cref="KindRenderer.ResultSentence"/> (DEVELOPERS.md, step 5).
    /// </summary>
    private static readonly string[] KindsWithoutResultSentence = ["contrasts", "equivalence", "figure", "friedman", "marginal-means", "methods", "posthoc"];

    [Theory]
    [MemberData(nameof(Kinds))]
    public void MainTestHasAResultSentence(string name)
    {
        var test = BlockKinds.All[name].PrimaryTest;
        var phrasing = KindRenderers.Phrasing(test);
        if (KindsWithoutResultSentence.Contains(name))
        {
            Assert.True(phrasing is null, $"the kind '{name}' is listed as having no result sentence, but '{phrasing?.Kind}' phrases its main test '{test}': take it off KindsWithoutResultSentence");
            return;
        }

        Assert.True(phrasing is not null, $"the kind '{name}' has no result sentence for its main test '{test}': list it in its renderer's PhrasedTests and write the sentence in ResultSentence (Rendering/Kinds), or '[={name}-block.{test}.TERM, result]' is an error");
    }

    /// <summary>
    /// Kinds whose main test has a p (stat <c>p</c> without a level in the golden case) declare
    /// whether <c>studypress diff</c> reports its crossing alpha as a flipped decision on an
    /// effect: some kind's <see cref="KindRenderer.DiffEffectTests"/> lists the test, or the kind's
    /// renderer opts out with <see cref="KindRenderer.MainTestIsNotADiffEffect"/>.
    /// </summary>
    [Theory]
    [MemberData(nameof(Kinds))]
    public void MainTestWithAPDeclaresWhetherItIsADiffEffect(string name)
    {
        var test = BlockKinds.All[name].PrimaryTest;
        var golden = Path.Combine(CasesDir, name, "golden.json");
        Assert.True(File.Exists(golden), $"no golden values for '{name}'");
        var hasP = File.ReadLines(golden).Where(l => l.Length > 0).Select(l => JsonNode.Parse(l)!).Any(v =>
            v["test"]!.GetValue<string>() == test && v["stat"]!.GetValue<string>() == "p" && v["level"] is null);
        if (!hasP)
        {
            return;
        }

        var declared = KindRenderers.All.Values.Any(r => r.DiffEffectTests.ContainsKey(test));
        var optedOut = KindRenderers.All[name].MainTestIsNotADiffEffect;
        Assert.True(declared || optedOut, $"the kind '{name}' has a p-valued main test '{test}' that no kind declares in DiffEffectTests and its renderer does not opt out (MainTestIsNotADiffEffect): `studypress diff` would not report its changed verdict");
        Assert.False(declared && optedOut, $"the kind '{name}' both declares '{test}' a diff effect and opts out");
    }

    /// <summary>
    /// Pairwise tests of a golden case (stat <c>p_adj</c> of a pair) are declared for
    /// <c>studypress diff</c> (<see cref="KindRenderer.DiffPairTests"/>), so that a pair becoming
    /// separated or not is reported for every kind, not only for those listed when diff was written.
    /// </summary>
    [Theory]
    [MemberData(nameof(Kinds))]
    public void PairwiseTestsAreDeclaredForDiff(string name)
    {
        var undeclared = GoldenValues(name)
            .Where(v => v["stat"]!.GetValue<string>() == Stat.PAdj && v["pair"] is not null)
            .Select(v => v["test"]!.GetValue<string>())
            .Distinct(StringComparer.Ordinal)
            .Where(t => !KindRenderers.All.Values.Any(r => r.DiffPairTests.ContainsKey(t)))
            .ToList();
        Assert.True(undeclared.Count == 0, $"the golden case of '{name}' has adjusted p-values of pairs for tests that no kind declares in DiffPairTests (Rendering/Kinds): {string.Join(", ", undeclared)}; `studypress diff` would not report their pairs becoming separated");
    }

    /// <summary>
    /// Tests with a p (stat <c>p</c> or <c>p_bonferroni</c>, no level, no pair) whose verdict
    /// <c>studypress diff</c> does not report: the list from before this check. A new kind does not
    /// add here; it declares each such test as an effect (<see cref="KindRenderer.DiffEffectTests"/>)
    /// or a check with its wording (<see cref="KindRenderer.DiffChecks"/>).
    /// </summary>
    private static readonly string[] PTestsWithoutDiffVerdict = ["mauchly"];

    /// <summary>
    /// Every verdict a golden case records is either an effect or an assumption check for
    /// <c>studypress diff</c>, and a check kind (its main test a check, not an effect) declares
    /// the wording of its main test in its own renderer.
    /// </summary>
    [Theory]
    [MemberData(nameof(Kinds))]
    public void VerdictsAreEffectsOrChecksWithTheirWording(string name)
    {
        static bool Verdict(JsonNode v) => v["stat"]!.GetValue<string>() is "p" or "p_bonferroni" && v["level"] is null && v["pair"] is null;
        var tests = GoldenValues(name).Where(Verdict).Select(v => v["test"]!.GetValue<string>()).Distinct(StringComparer.Ordinal).ToList();
        foreach (var test in tests)
        {
            var effect = KindRenderers.All.Values.Any(r => r.DiffEffectTests.ContainsKey(test));
            var check = KindRenderers.All.Values.Where(r => r.DiffChecks.ContainsKey(test)).ToList();
            if (PTestsWithoutDiffVerdict.Contains(test))
            {
                Assert.True(!effect && check.Count == 0, $"'{test}' is listed in PTestsWithoutDiffVerdict but is declared for diff: take it off the list");
                continue;
            }

            Assert.True(effect || check.Count > 0, $"the golden case of '{name}' records a p of '{test}' that no kind declares as a diff effect (DiffEffectTests) or a check with its wording (DiffChecks)");
            Assert.False(effect && check.Count > 0, $"'{test}' is declared both a diff effect and a check");
            Assert.All(check.SelectMany(r => r.DiffChecks.Where(c => c.Key == test)), c => Assert.True(c.Value.Below.Length > 0 && c.Value.Above.Length > 0 && c.Value.Below != c.Value.Above, $"the check '{test}' needs two different verdict wordings"));
        }

        var main = BlockKinds.All[name].PrimaryTest;
        if (KindRenderers.All[name].MainTestIsNotADiffEffect && tests.Contains(main) && !PTestsWithoutDiffVerdict.Contains(main))
        {
            Assert.True(KindRenderers.All[name].DiffChecks.ContainsKey(main), $"the kind '{name}' opts out of diff effects, so its main test '{main}' is a check: its renderer declares the wording in DiffChecks");
        }
    }

    /// <summary>
    /// The central files name no test: result sentences and diff effects are declarations of the
    /// kinds (<see cref="KindRenderer"/>), so that a new kind does not touch these files.
    /// <c>Comparison/BuildComparison.cs</c> names no test and no kind at all: effect, pairwise,
    /// procedure and check tests, procedure names and check wordings are the kinds' declarations.
    /// </summary>
    [Fact]
    public void SentencesAndComparisonNameNoKindsTests()
    {
        var sentences = File.ReadAllText(Path.Combine(RepoDir, "src", "StudyPress", "Rendering", "Sentences.cs"));
        var named = TestName.All.Keys.Where(t => sentences.Contains($"\"{t}\"", StringComparison.Ordinal)).ToList();
        Assert.True(named.Count == 0, "Rendering/Sentences.cs names tests (a kind's renderer phrases them): " + string.Join(", ", named));

        var comparisonText = File.ReadAllText(Path.Combine(RepoDir, "src", "StudyPress", "Comparison", "BuildComparison.cs"));
        var comparison = comparisonText.Split('\n');
        var listed = comparison.Where(l => (l.Contains("EffectTests =", StringComparison.Ordinal) || l.Contains("ProcedureNames =", StringComparison.Ordinal)) && !l.Contains("KindRenderers.All", StringComparison.Ordinal)).ToList();
        Assert.True(listed.Count == 0, "Comparison/BuildComparison.cs lists effect tests or procedure names itself (each kind's renderer declares them): " + string.Join("; ", listed));

        var names = TestName.All.Keys.Concat(BlockKinds.Names).Distinct(StringComparer.Ordinal)
            .Where(n => comparisonText.Contains($"\"{n}\"", StringComparison.Ordinal))
            .ToList();
        Assert.True(names.Count == 0, "Comparison/BuildComparison.cs names tests or kinds (each kind's renderer declares its pairwise tests, procedures and checks): " + string.Join(", ", names));
    }

    private static List<JsonNode> GoldenValues(string name)
    {
        var golden = Path.Combine(CasesDir, name, "golden.json");
        Assert.True(File.Exists(golden), $"no golden values for '{name}'");
        return [.. File.ReadLines(golden).Where(l => l.Length > 0).Select(l => JsonNode.Parse(l)!)];
    }

    private static IEnumerable<string> Components(JsonNode v)
    {
        yield return v["block"]!.GetValue<string>();
        yield return v["test"]!.GetValue<string>();
        foreach (var key in new[] { "term", "level" })
        {
            if (v[key] is { } part)
            {
                yield return part.GetValue<string>();
            }
        }

        if (v["pair"] is JsonArray pair)
        {
            foreach (var p in pair)
            {
                yield return p!.GetValue<string>();
            }
        }

        yield return v["stat"]!.GetValue<string>();
    }

    /// <summary>The manifest's values without ids, tool or input identity: one line each, stable across releases.</summary>
    private static string Values(byte[] manifest)
    {
        using var doc = JsonDocument.Parse(manifest);
        var sb = new StringBuilder();
        foreach (var v in doc.RootElement.GetProperty("values").EnumerateArray())
        {
            var copy = new JsonObject();
            foreach (var p in v.EnumerateObject().Where(p => p.Name is not ("id" or "inputs")))
            {
                copy[p.Name] = JsonNode.Parse(p.Value.GetRawText());
            }

            sb.Append(copy.ToJsonString()).Append('\n');
        }

        return sb.ToString();
    }

    private static string? Section(string markdown, string kind)
    {
        var start = markdown.IndexOf($"\n## `{kind}`", StringComparison.Ordinal);
        if (start < 0)
        {
            return null;
        }

        var end = markdown.IndexOf("\n## ", start + 4, StringComparison.Ordinal);
        return end < 0 ? markdown[start..] : markdown[start..end];
    }
}
