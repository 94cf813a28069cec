using System.Text.RegularExpressions;
using Mono.Cecil;
using Mono.Cecil.Cil;

namespace StudyPress.Tests;

/// <summary>
/// Rules of the compiler's shape beside the stage graph (<see cref="ArchitectureTests"/>): evaluation
/// produces values and no report text, kinds read their options typed, outcomes are immutable. Each rule reads the sources or the compiled assembly and names
/// every offender. See DEVELOPERS.md, "Layout" and "Adding an analysis kind".
/// </summary>
public sealed partial class ArchitectureRulesTests
{
    [Fact]
    public void EvaluationWritesNoEnglishOrHtml()
    {
        // Evaluation produces values; every caption, title, note, sentence and tag is written in
        // Rendering. A string literal of words (three or more) or markup in an Evaluation type fails,
        // unless it goes where text is not report text: a diagnostic (DiagnosticBag), the reason a
        // manifest value is not defined (Quantity.Undefined), or an internal error (an exception).
        var offenders = EnglishInEvaluation(typeof(Compilation).Assembly.Location);
        Assert.True(offenders.Count == 0, "report text built in Evaluation (move it to Rendering):\n" + string.Join("\n", offenders));
    }

    [Fact]
    public void TheTextRuleSeesText()
    {
        // Guards the rule itself: words and markup are text, names and codes are not.
        Assert.True(IsText("Each difference with its interval"));
        Assert.True(IsText("<p class=\"note\">"));
        Assert.True(IsText("the group's values, in order"));
        Assert.False(IsText("f-distribution"));
        Assert.False(IsText("tukey_hsd"));
        Assert.False(IsText(" / "));
        Assert.False(IsText("all"));
        Assert.False(IsText("p < 0.05"));
    }

    /// <summary>Every text literal of an Evaluation type with where it goes, unless it goes to a diagnostic, a "not defined" reason or an exception.</summary>
    internal static List<string> EnglishInEvaluation(string assemblyPath)
    {
        using var module = ModuleDefinition.ReadModule(assemblyPath);
        var offenders = new List<string>();
        var consumed = new HashSet<string>(StringComparer.Ordinal);
        var constants = new List<(string Where, string Text)>();
        foreach (var type in module.GetTypes())
        {
            var outer = type;
            while (outer.DeclaringType is not null)
            {
                outer = outer.DeclaringType;
            }

            if (outer.Namespace != "StudyPress.Evaluation" && !outer.Namespace.StartsWith("StudyPress.Evaluation.", StringComparison.Ordinal))
            {
                continue;
            }

            foreach (var f in type.Fields.Where(f => f.HasConstant && f.Constant is string text && IsText(text) && !ManifestWords.Contains(text)))
            {
                constants.Add(($"{type.FullName}.{f.Name}", (string)f.Constant));
            }

            foreach (var m in type.Methods.Where(m => m.HasBody && !Exempt.Contains($"{type.Name}.{m.Name}")))
            {
                var code = m.Body.Instructions;
                for (var i = 0; i < code.Count; i++)
                {
                    if (code[i].OpCode != OpCodes.Ldstr || code[i].Operand is not string text || !IsText(text) || ManifestWords.Contains(text))
                    {
                        continue;
                    }

                    var consumer = ConsumerOf(code, i);
                    if (consumer is not null && AllowedConsumer(consumer))
                    {
                        consumed.Add(text);
                        continue;
                    }

                    offenders.Add($"{type.FullName}.{m.Name}: \"{text}\" (goes to {consumer?.DeclaringType.Name + "." + consumer?.Name})");
                }
            }
        }

        // A constant is inlined where it is used: one of words in Evaluation must be used here, where the rule sees it.
        offenders.AddRange(constants.Where(c => !consumed.Contains(c.Text)).Select(c => $"{c.Where}: constant \"{c.Text}\" (not a diagnostic or a reason used in Evaluation)"));
        return offenders;
    }

    /// <summary>
    /// Methods whose words are not report text, each with its reason: the manifest's vocabulary
    /// (every test and stat name's meaning, documented in docs/manifest.md), and the wording of
    /// diagnostics composed in a helper before they reach the DiagnosticBag.
    /// </summary>
    private static readonly HashSet<string> Exempt = new(StringComparer.Ordinal)
    {
        "Stat..cctor",
        "TestName..cctor",
        "MarginalMeansEvaluator.DesignError",
        // Also the reason the repeated block's note gives (RepeatedOutcome.MixedNotFitted): still to move.
        "RepeatedEvaluator.MixedTooLarge",
    };

    /// <summary>Manifest values that are words: a level's name, not report text.</summary>
    private static readonly HashSet<string> ManifestWords = new(StringComparer.Ordinal) { "lack of fit" };

    /// <summary>The first call after a literal that does not merely build a string (the literal's destination), or null.</summary>
    private static MethodReference? ConsumerOf(Mono.Collections.Generic.Collection<Instruction> code, int at)
    {
        for (var j = at + 1; j < code.Count && j < at + 60; j++)
        {
            if (code[j].OpCode == OpCodes.Ret || code[j].OpCode == OpCodes.Stfld || code[j].OpCode == OpCodes.Stsfld)
            {
                return null;
            }

            if (code[j].Operand is not MethodReference called || (code[j].OpCode != OpCodes.Call && code[j].OpCode != OpCodes.Callvirt && code[j].OpCode != OpCodes.Newobj))
            {
                continue;
            }

            // Loads along the way are not destinations: property reads, delegates and the compiler's own collection types.
            var builds = called.ReturnType.FullName == "System.String"
                || called.Name.StartsWith("get_", StringComparison.Ordinal)
                || called.DeclaringType.Name == "Nullable`1"
                || called.DeclaringType.Name.Contains('<', StringComparison.Ordinal)
                || called.DeclaringType.FullName.StartsWith("System.Func", StringComparison.Ordinal)
                || called.DeclaringType.FullName == "System.Runtime.CompilerServices.DefaultInterpolatedStringHandler"
                || called.DeclaringType.FullName == "System.Globalization.CultureInfo";
            if (!builds)
            {
                return called;
            }
        }

        return null;
    }

    private static bool AllowedConsumer(MethodReference called)
    {
        var type = called.DeclaringType.FullName;
        if (type == "StudyPress.Diagnostics.DiagnosticBag" || (type == "StudyPress.Statistics.Quantity" && called.Name == "Undefined"))
        {
            return true;
        }

        // An internal error: the constructor of an exception (the name says so; resolving System.Private.CoreLib is not needed).
        return called.Name == ".ctor" && called.DeclaringType.Namespace == "System" && called.DeclaringType.Name.EndsWith("Exception", StringComparison.Ordinal);
    }

    /// <summary>Words (three in a row) or a tag: text for a reader, not a name or a code.</summary>
    internal static bool IsText(string s) => Words().IsMatch(s) || Markup().IsMatch(s);

    [GeneratedRegex(@"\p{L}{2,}[\s,;:'’()]+\p{L}{2,}[\s,;:'’()]+\p{L}{2,}", RegexOptions.CultureInvariant)]
    private static partial Regex Words();

    [GeneratedRegex(@"<\s*/?\s*[A-Za-z][A-Za-z0-9]*(\s[^<>]*)?/?>", RegexOptions.CultureInvariant)]
    private static partial Regex Markup();

    /// <summary>
    /// Outcome properties still assigned after the outcome is constructed (the evaluator fills the
    /// outcome step by step). Each is to become init-only, computed before construction; the list
    /// only shrinks: a property that is init-only now must leave it, and no new setter may join it.
    /// </summary>
    private static readonly string[] StillSetDuringEvaluation =
    [
    ];

    [Fact]
    public void OutcomesHaveNoPublicSetters()
    {
        // What evaluation hands to later blocks and to rendering cannot be changed by them: every
        // public property of an Evaluation type is get-only or init-only (reflection over the types).
        var setters = PublicSetters(typeof(Compilation).Assembly).ToList();
        var unexpected = setters.Except(StillSetDuringEvaluation, StringComparer.Ordinal).ToList();
        var stale = StillSetDuringEvaluation.Except(setters, StringComparer.Ordinal).ToList();
        Assert.True(unexpected.Count == 0, "public setters on evaluation types (make them init-only, computed before construction):\n" + string.Join("\n", unexpected));
        Assert.True(stale.Count == 0, "no longer settable; remove from StillSetDuringEvaluation:\n" + string.Join("\n", stale));
    }

    [Fact]
    public void TheSetterRuleSeesASetter()
    {
        // Guards the rule itself: a public setter is seen, init-only and get-only are not.
        var sample = new Settable { Open = 1, Init = 2 };
        Assert.Equal(4, sample.Open + sample.Init + sample.Read);
        Assert.Equal(["ArchitectureRulesTests+Settable.Open"], PublicSetters(typeof(ArchitectureRulesTests).Assembly, typeof(Settable)).ToList());
    }

    /// <summary>Public properties with a public, not init-only, setter ("Type.Property"), on public types of the Evaluation stage (or on <paramref name="only"/>).</summary>
    private static IEnumerable<string> PublicSetters(System.Reflection.Assembly assembly, Type? only = null)
    {
        foreach (var type in only is null ? assembly.GetTypes() : [only])
        {
            if (only is null && (type.Namespace is not { } ns || (ns != "StudyPress.Evaluation" && !ns.StartsWith("StudyPress.Evaluation.", StringComparison.Ordinal))))
            {
                continue;
            }

            foreach (var p in type.GetProperties(System.Reflection.BindingFlags.Public | System.Reflection.BindingFlags.Instance | System.Reflection.BindingFlags.DeclaredOnly))
            {
                if (p.SetMethod is { IsPublic: true } set && !set.ReturnParameter.GetRequiredCustomModifiers().Contains(typeof(System.Runtime.CompilerServices.IsExternalInit)))
                {
                    yield return (type.DeclaringType is { } outer ? outer.Name + "+" : string.Empty) + type.Name + "." + p.Name;
                }
            }
        }
    }

    private sealed class Settable
    {
        public int Open { get; set; }

        public int Init { get; init; }

        public int Read { get; } = 1;
    }

    /// <summary>
    /// Evaluation types that still expose a mutable collection (a list, dictionary or set that a
    /// later block or the renderer could change; an array behind a public setter). Each is to expose
    /// read-only collections (built in a local, then frozen); the list only shrinks: a type that no
    /// longer exposes one must leave it, and no new type may join it.
    /// </summary>
    private static readonly string[] StillExposeMutableCollections =
    [
    ];

    [Fact]
    public void OutcomesExposeNoMutableCollections()
    {
        // Beside the setters: a get-only List or Dictionary still lets a reader change what evaluation
        // handed on. Public properties of public Evaluation types (reflection over the types).
        var found = MutableCollections(typeof(Compilation).Assembly).ToList();
        var unexpected = found.Where(p => !StillExposeMutableCollections.Contains(p[..p.LastIndexOf('.')], StringComparer.Ordinal)).ToList();
        var stale = StillExposeMutableCollections.Where(t => !found.Any(p => p[..p.LastIndexOf('.')] == t)).ToList();
        Assert.True(unexpected.Count == 0, "mutable collections on evaluation types (expose IReadOnlyList/IReadOnlyDictionary, built before construction):\n" + string.Join("\n", unexpected));
        Assert.True(stale.Count == 0, "no longer exposes a mutable collection; remove from StillExposeMutableCollections:\n" + string.Join("\n", stale));
    }

    [Fact]
    public void TheCollectionRuleSeesACollection()
    {
        // Guards the rule itself: lists, dictionaries and sets at any depth, and arrays behind a public
        // setter, are seen; read-only collections and init-only arrays are not.
        var sample = new Collections();
        Assert.Empty(sample.Frozen);
        Assert.Equal(
            ["ArchitectureRulesTests+Collections.Array", "ArchitectureRulesTests+Collections.Inner", "ArchitectureRulesTests+Collections.List", "ArchitectureRulesTests+Collections.Map", "ArchitectureRulesTests+Collections.Set"],
            MutableCollections(typeof(ArchitectureRulesTests).Assembly, typeof(Collections)).Order(StringComparer.Ordinal).ToList());
    }

    /// <summary>Public properties ("Type.Property") of public Evaluation types (or of <paramref name="only"/>) whose type is or holds a mutable collection, or is an array with a public setter.</summary>
    private static IEnumerable<string> MutableCollections(System.Reflection.Assembly assembly, Type? only = null)
    {
        foreach (var type in only is null ? assembly.GetTypes() : [only])
        {
            if (only is null && (!type.IsVisible || type.Namespace is not { } ns || (ns != "StudyPress.Evaluation" && !ns.StartsWith("StudyPress.Evaluation.", StringComparison.Ordinal))))
            {
                continue;
            }

            foreach (var p in type.GetProperties(System.Reflection.BindingFlags.Public | System.Reflection.BindingFlags.Instance | System.Reflection.BindingFlags.DeclaredOnly))
            {
                var settable = p.SetMethod is { IsPublic: true } set && !set.ReturnParameter.GetRequiredCustomModifiers().Contains(typeof(System.Runtime.CompilerServices.IsExternalInit));
                if (HoldsMutableCollection(p.PropertyType) || (p.PropertyType.IsArray && settable))
                {
                    yield return (type.DeclaringType is { } outer ? outer.Name + "+" : string.Empty) + type.Name + "." + p.Name;
                }
            }
        }
    }

    private static readonly Type[] MutableCollectionTypes =
    [
        typeof(List<>), typeof(Dictionary<,>), typeof(HashSet<>), typeof(SortedDictionary<,>), typeof(SortedSet<>), typeof(Queue<>), typeof(Stack<>),
        typeof(IList<>), typeof(ICollection<>), typeof(IDictionary<,>), typeof(ISet<>),
    ];

    /// <summary>Whether the type is a mutable collection or has one among its type arguments (a tuple's elements, a read-only list's items).</summary>
    private static bool HoldsMutableCollection(Type t) =>
        t.IsGenericType && (MutableCollectionTypes.Contains(t.GetGenericTypeDefinition()) || t.GetGenericArguments().Any(HoldsMutableCollection));

    private sealed class Collections
    {
        public List<int> List { get; } = [];

        public Dictionary<string, int> Map { get; init; } = [];

        public HashSet<int> Set { get; } = [];

        public IReadOnlyList<(string Name, Dictionary<string, int> Values)> Inner { get; init; } = [];

        public int[] Array { get; set; } = [];

        public int[] Fixed { get; init; } = [];

        public IReadOnlyList<IReadOnlyDictionary<string, int>> Frozen { get; init; } = [];
    }

    [Fact]
    public void NoKindOptionsAreReadThroughACast()
    {
        // A kind's options are read with BoundBlock.OptionsOf<TKind.Options>(), never by casting the
        // untyped BoundBlock.Options (which hid a wrong kind until run time, at each of 28 places).
        var offenders = new List<string>();
        foreach (var (relative, text) in Sources())
        {
            foreach (Match m in OptionsCast().Matches(text))
            {
                offenders.Add($"{relative}:{LineOf(text, m.Index)}: {m.Value}");
            }
        }

        Assert.True(offenders.Count == 0, "options read through a cast (use block.OptionsOf<TKind.Options>()):\n" + string.Join("\n", offenders));
    }

    [Fact]
    public void TheCastRuleSeesACast()
    {
        // Guards the rule itself: the forms it must catch are caught.
        Assert.Matches(OptionsCast(), "var o = (AnovaKind.Options)block.Options!;");
        Assert.Matches(OptionsCast(), "((PowerKind.Options) w.Block.Options!).Of");
        Assert.Matches(OptionsCast(), "var o = block.Options as RanksKind.Options;");
        Assert.Matches(OptionsCast(), "var o = (Options)block.Options!;");
        Assert.DoesNotMatch(OptionsCast(), "var o = block.OptionsOf<AnovaKind.Options>();");
        Assert.DoesNotMatch(OptionsCast(), "if (options is Options o)");
    }

    /// <summary>Every C# file of src/StudyPress (path relative to it, text).</summary>
    internal static IEnumerable<(string Relative, string Text)> Sources(string folder = "")
    {
        var src = Path.Combine(RepoRoot(), "src", "StudyPress");
        foreach (var file in Directory.EnumerateFiles(Path.Combine(src, folder), "*.cs", SearchOption.AllDirectories).Order(StringComparer.Ordinal))
        {
            var relative = Path.GetRelativePath(src, file).Replace('\\', '/');
            if (!relative.StartsWith("obj/", StringComparison.Ordinal) && !relative.StartsWith("bin/", StringComparison.Ordinal))
            {
                yield return (relative, File.ReadAllText(file));
            }
        }
    }

    internal static int LineOf(string text, int index) => 1 + text.AsSpan(0, index).Count('\n');

    internal static string RepoRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "StudyPress.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("StudyPress.sln not found above " + AppContext.BaseDirectory);
    }

    /// <summary>A cast of bound options: <c>(XKind.Options)…Options!</c>, <c>(Options)…</c> or <c>… as XKind.Options</c>.</summary>
    [GeneratedRegex(@"\(\s*(\w+Kind\.)?Options\s*\)\s*[\w.]+|\bas\s+(\w+Kind\.)?Options\b", RegexOptions.CultureInvariant)]
    private static partial Regex OptionsCast();
}
