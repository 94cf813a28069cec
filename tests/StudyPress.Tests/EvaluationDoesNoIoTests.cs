using Mono.Cecil;
using Mono.Cecil.Cil;

namespace StudyPress.Tests;

/// <summary>
/// Evaluation computes from values: the data are read by the Data stage and the last database
/// queries (order statistics of summary blocks on aggregated data) run in the Model stage, before
/// evaluation. No method of a type in the Evaluation folder may call into files, databases or the
/// sources that open them. Read from the compiled assembly, like <see cref="ArchitectureTests"/>.
/// </summary>
public sealed class EvaluationDoesNoIoTests
{
    private static readonly string[] Forbidden =
    [
        "System.Data.Common.",
        "System.IO.File",
        "System.IO.Directory",
        "System.IO.FileStream",
        "StudyPress.Data.Sources.DatabaseSource",
        "StudyPress.Data.Sources.PostgresSource",
        "StudyPress.Data.Sources.AggregateSource::Load",
        "StudyPress.Data.CsvLoader",
    ];

    [Fact]
    public void NoEvaluationMethodCallsIntoFilesOrDatabases()
    {
        using var module = ModuleDefinition.ReadModule(typeof(Compilation).Assembly.Location);
        var calls = new List<string>();
        foreach (var type in module.GetTypes().Where(t => t.Namespace.StartsWith("StudyPress.Evaluation", StringComparison.Ordinal) || (t.DeclaringType?.Namespace.StartsWith("StudyPress.Evaluation", StringComparison.Ordinal) ?? false)))
        {
            foreach (var method in type.Methods.Where(m => m.HasBody))
            {
                foreach (var instruction in method.Body.Instructions)
                {
                    if (instruction.Operand is MethodReference called)
                    {
                        var name = called.DeclaringType.FullName + "::" + called.Name;
                        if (Forbidden.Any(f => name.StartsWith(f, StringComparison.Ordinal)))
                        {
                            calls.Add($"{type.FullName}::{method.Name} calls {name}");
                        }
                    }
                }
            }
        }

        Assert.True(calls.Count == 0, "evaluation doing I/O:\n" + string.Join("\n", calls.Distinct()));
    }

    [Fact]
    public void TheCheckSeesCallsIntoDatabases()
    {
        // Guards the reader: the Model stage does call the database (summary order statistics).
        using var module = ModuleDefinition.ReadModule(typeof(Compilation).Assembly.Location);
        var model = module.GetTypes().Where(t => t.Namespace == "StudyPress.Model" || t.DeclaringType?.Namespace == "StudyPress.Model");
        Assert.Contains(
            model.SelectMany(t => t.Methods.Where(m => m.HasBody)).SelectMany(m => m.Body.Instructions),
            i => i.Operand is MethodReference r && (r.DeclaringType.FullName + "::" + r.Name).StartsWith("StudyPress.Data.Sources.DatabaseSource", StringComparison.Ordinal));
    }
}
