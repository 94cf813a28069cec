using System.Text.RegularExpressions;
using Mono.Cecil;
using Mono.Cecil.Cil;

namespace StudyPress.Tests;

/// <summary>
/// The compiler's stages are folders of <c>src/StudyPress</c>, each handing its product to the next.
/// These tests read the compiled assembly (every type, signature, attribute and instruction) and
/// fail when a stage reaches back up to a later one, so that the folder-level import graph stays
/// acyclic. See DEVELOPERS.md, "Layout".
/// </summary>
public sealed partial class ArchitectureTests
{
    /// <summary>The stages in order: a stage may use the stages before it, never one after it.</summary>
    public static readonly string[] Stages =
    [
        "Diagnostics",
        "Syntax",
        "Binding",
        "Data",
        "Model",
        "Evaluation",
        "Rendering",
        "(root)",
        "Reproducibility",
        "Comparison",
    ];

    /// <summary>The compiler's assembly name (the project is src/StudyPress).</summary>
    private static readonly string Compiler = typeof(Compilation).Assembly.GetName().Name!;

    private static readonly Lazy<Dictionary<(string From, string To), List<string>>> Edges = new(ReadEdges);

    [Fact]
    public void NoStageUsesALaterStage()
    {
        var backEdges = Edges.Value
            .Where(e => Array.IndexOf(Stages, e.Key.To) > Array.IndexOf(Stages, e.Key.From))
            .Select(e => $"{e.Key.From} -> {e.Key.To}: {string.Join("; ", e.Value.Take(4))}")
            .ToList();
        Assert.True(backEdges.Count == 0, "stages that use a later stage:\n" + string.Join("\n", backEdges));
    }

    [Fact]
    public void FolderGraphIsAcyclic()
    {
        // Independent of the order above: a cycle anywhere in the real graph fails.
        var graph = Edges.Value.Keys.GroupBy(e => e.From).ToDictionary(g => g.Key, g => g.Select(e => e.To).ToList());
        var state = new Dictionary<string, int>();
        var path = new List<string>();
        string? Visit(string node)
        {
            state[node] = 1;
            path.Add(node);
            foreach (var next in graph.GetValueOrDefault(node) ?? [])
            {
                if (state.GetValueOrDefault(next) == 1)
                {
                    return string.Join(" -> ", path.SkipWhile(p => p != next).Append(next));
                }

                if (state.GetValueOrDefault(next) == 0 && Visit(next) is { } cycle)
                {
                    return cycle;
                }
            }

            path.RemoveAt(path.Count - 1);
            state[node] = 2;
            return null;
        }

        foreach (var node in graph.Keys)
        {
            if (state.GetValueOrDefault(node) == 0 && Visit(node) is { } cycle)
            {
                Assert.Fail("folder import cycle: " + cycle);
            }
        }
    }

    [Fact]
    public void TheGraphIsReadFromTheAssembly()
    {
        // Guards the reader itself: edges known to exist must be seen, or the tests above prove nothing.
        Assert.Contains(("Syntax", "Diagnostics"), Edges.Value.Keys);
        Assert.Contains(("Rendering", "Evaluation"), Edges.Value.Keys);
        Assert.Contains(("(root)", "Rendering"), Edges.Value.Keys);
    }

    [Fact]
    public void EveryFileDeclaresTheNamespaceOfItsFolder()
    {
        var src = Path.Combine(RepoRoot(), "src", "StudyPress");
        var wrong = new List<string>();
        foreach (var file in Directory.EnumerateFiles(src, "*.cs", SearchOption.AllDirectories))
        {
            var relative = Path.GetRelativePath(src, file).Replace('\\', '/');
            if (relative.StartsWith("obj/", StringComparison.Ordinal) || relative.StartsWith("bin/", StringComparison.Ordinal))
            {
                continue;
            }

            var folder = relative.Contains('/', StringComparison.Ordinal) ? relative[..relative.IndexOf('/', StringComparison.Ordinal)] : "(root)";
            var ns = NamespaceLine().Match(File.ReadAllText(file));
            var stage = !ns.Success ? "(none)" : StageOf(ns.Groups[1].Value);
            if (stage != folder)
            {
                wrong.Add($"{relative}: namespace {(ns.Success ? ns.Groups[1].Value : "(none)")}");
            }
        }

        Assert.True(wrong.Count == 0, "files whose namespace is not their folder's:\n" + string.Join("\n", wrong));
        Assert.All(Directory.GetDirectories(src).Select(Path.GetFileName).Where(d => d is not ("bin" or "obj")), d => Assert.Contains(d, Stages));
    }

    private static string StageOf(string ns)
    {
        if (ns == "StudyPress")
        {
            return "(root)";
        }

        var rest = ns["StudyPress.".Length..];
        var dot = rest.IndexOf('.', StringComparison.Ordinal);
        return dot < 0 ? rest : rest[..dot];
    }

    private static string? StageOfType(TypeReference? type)
    {
        while (type is not null)
        {
            switch (type)
            {
                case GenericInstanceType g:
                    type = g.ElementType;
                    continue;
                case TypeSpecification s:
                    type = s.ElementType;
                    continue;
                case GenericParameter:
                    return null;
            }

            if (type.DeclaringType is not null)
            {
                type = type.DeclaringType;
                continue;
            }

            break;
        }

        var assembly = type switch
        {
            TypeDefinition d => d.Module.Assembly.Name.Name,
            null => null,
            _ => type.Scope is ModuleDefinition m ? m.Assembly.Name.Name : type.Scope?.Name,
        };
        if (type is null || assembly != Compiler)
        {
            return null;
        }

        return type.Namespace == "StudyPress" || type.Namespace.StartsWith("StudyPress.", StringComparison.Ordinal) ? StageOf(type.Namespace) : null;
    }

    private static Dictionary<(string From, string To), List<string>> ReadEdges()
    {
        var path = typeof(Compilation).Assembly.Location;
        using var module = ModuleDefinition.ReadModule(path);
        var edges = new Dictionary<(string, string), List<string>>();
        foreach (var type in module.GetTypes())
        {
            var from = StageOfType(type);
            if (from is null)
            {
                continue;
            }

            void Use(TypeReference? used, string where)
            {
                if (used is GenericInstanceType g)
                {
                    foreach (var a in g.GenericArguments)
                    {
                        Use(a, where);
                    }
                }

                if (used is TypeSpecification { ElementType: var e } and not GenericInstanceType)
                {
                    Use(e, where);
                }

                if (StageOfType(used) is { } to && to != from)
                {
                    if (!edges.TryGetValue((from, to), out var list))
                    {
                        edges[(from, to)] = list = [];
                    }

                    if (list.Count < 8)
                    {
                        list.Add($"{type.FullName} uses {used!.FullName} ({where})");
                    }
                }
            }

            void Attributes(ICustomAttributeProvider p, string where)
            {
                foreach (var a in p.CustomAttributes)
                {
                    Use(a.AttributeType, where);
                    foreach (var arg in a.ConstructorArguments.Concat(a.Properties.Select(x => x.Argument)).Concat(a.Fields.Select(x => x.Argument)))
                    {
                        Use(arg.Value as TypeReference, where);
                    }
                }
            }

            void Method(MethodReference m, string where)
            {
                Use(m.DeclaringType, where);
                Use(m.ReturnType, where);
                foreach (var p in m.Parameters)
                {
                    Use(p.ParameterType, where);
                }

                if (m is GenericInstanceMethod gm)
                {
                    foreach (var a in gm.GenericArguments)
                    {
                        Use(a, where);
                    }
                }
            }

            Use(type.BaseType, "base type");
            Attributes(type, "attribute");
            foreach (var i in type.Interfaces)
            {
                Use(i.InterfaceType, "interface");
            }

            foreach (var f in type.Fields)
            {
                Use(f.FieldType, "field " + f.Name);
                Attributes(f, "attribute");
            }

            foreach (var p in type.Properties)
            {
                Use(p.PropertyType, "property " + p.Name);
            }

            foreach (var m in type.Methods)
            {
                Method(m, "method " + m.Name);
                Attributes(m, "attribute");
                if (!m.HasBody)
                {
                    continue;
                }

                foreach (var v in m.Body.Variables)
                {
                    Use(v.VariableType, "local in " + m.Name);
                }

                foreach (var instruction in m.Body.Instructions)
                {
                    switch (instruction.Operand)
                    {
                        case TypeReference t:
                            Use(t, "code in " + m.Name);
                            break;
                        case MethodReference mr:
                            Method(mr, "call in " + m.Name);
                            break;
                        case FieldReference fr:
                            Use(fr.DeclaringType, "field access in " + m.Name);
                            Use(fr.FieldType, "field access in " + m.Name);
                            break;
                        case Instruction or Instruction[] or VariableDefinition or ParameterDefinition or string or null:
                            break;
                    }
                }
            }
        }

        return edges;
    }

    private static string RepoRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "StudyPress.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("StudyPress.sln not found above " + AppContext.BaseDirectory);
    }

    [GeneratedRegex(@"^namespace\s+([A-Za-z0-9_.]+)\s*;", RegexOptions.Multiline | RegexOptions.CultureInvariant)]
    private static partial Regex NamespaceLine();
}
