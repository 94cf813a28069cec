using Mono.Cecil;
using Mono.Cecil.Cil;

namespace StudyPress.Tests;

/// <summary>
/// The code that the native (ahead-of-time compiled) command line runs uses nothing the trimmer
/// cannot follow. The native publish reports such uses as errors too, but it takes minutes; this
/// test reads our four assemblies' IL (milliseconds) so that the ordinary test run catches them:
/// creating an instance from a <see cref="Type"/> value, looking a type up by name, reflecting over
/// members, emitting code, and taking a method group of a method whose result the trimmer must
/// annotate (<c>DbDataReader.GetFieldType</c>, IL2111).
/// </summary>
public sealed class NativeCompatibilityTests
{
    private static readonly string[] Assemblies = ["StudyPress.Compiler.dll", "StudyPress.Statistics.dll", "StudyPress.Charts.dll", "studypress.dll"];

    /// <summary>Calls the trimmer cannot follow (declaring type, method name; any overload).</summary>
    private static readonly (string Type, string Method)[] Forbidden =
    [
        ("System.Activator", "CreateInstance"),
        ("System.Type", "GetType"),
        ("System.Type", "GetMethod"),
        ("System.Type", "GetMethods"),
        ("System.Type", "GetProperty"),
        ("System.Type", "GetProperties"),
        ("System.Type", "GetField"),
        ("System.Type", "GetFields"),
        ("System.Type", "GetMember"),
        ("System.Type", "GetMembers"),
        ("System.Type", "GetConstructor"),
        ("System.Type", "MakeGenericType"),
        ("System.Reflection.MethodInfo", "MakeGenericMethod"),
        ("System.Reflection.Assembly", "GetTypes"),
        ("System.Reflection.Assembly", "Load"),
        ("System.Text.Json.JsonSerializer", "Serialize"),
        ("System.Text.Json.JsonSerializer", "Deserialize"),
    ];

    /// <summary>Methods whose result carries DynamicallyAccessedMembers: calling them is fine, a method group of them is not.</summary>
    private static readonly (string Type, string Method)[] NoMethodGroup =
    [
        ("System.Data.Common.DbDataReader", "GetFieldType"),
        ("System.Data.IDataRecord", "GetFieldType"),
    ];

    [Fact]
    public void OurCode_UsesNoReflectionTheNativeBuildCannotFollow()
    {
        var found = new List<string>();
        foreach (var name in Assemblies)
        {
            using var assembly = AssemblyDefinition.ReadAssembly(Path.Combine(AppContext.BaseDirectory, name));
            found.AddRange(Uses(assembly));
        }

        Assert.True(found.Count == 0, "uses the native build cannot follow:\n" + string.Join("\n", found));
    }

    /// <summary>The check finds what it is for: the two uses the native publish reported before they were removed.</summary>
    [Fact]
    public void Check_FindsCreateInstanceFromATypeAndAGetFieldTypeMethodGroup()
    {
        using var assembly = AssemblyDefinition.ReadAssembly(typeof(NativeCompatibilityTests).Assembly.Location);
        var found = Uses(assembly).Where(u => u.Contains(nameof(Samples), StringComparison.Ordinal)).ToList();
        Assert.Contains(found, u => u.Contains("System.Activator::CreateInstance", StringComparison.Ordinal) && u.Contains(nameof(Samples.CreateFromType), StringComparison.Ordinal));
        Assert.Contains(found, u => u.Contains("method group of System.Data.Common.DbDataReader::GetFieldType", StringComparison.Ordinal) && u.Contains(nameof(Samples.FieldTypes), StringComparison.Ordinal));
        Assert.DoesNotContain(found, u => u.Contains(nameof(Samples.FieldTypesCalled), StringComparison.Ordinal));
    }

    private static IEnumerable<string> Uses(AssemblyDefinition assembly)
    {
        foreach (var type in assembly.MainModule.GetTypes())
        {
            foreach (var m in type.Methods.Where(m => m.HasBody))
            {
                foreach (var i in m.Body.Instructions)
                {
                    if (i.Operand is not MethodReference target)
                    {
                        continue;
                    }

                    var declaring = target.DeclaringType.FullName;
                    if ((i.OpCode == OpCodes.Call || i.OpCode == OpCodes.Callvirt || i.OpCode == OpCodes.Newobj) &&
                        Forbidden.Any(f => f.Type == declaring && f.Method == target.Name))
                    {
                        yield return $"{type.FullName}::{m.Name} calls {declaring}::{target.Name}";
                    }

                    if ((i.OpCode == OpCodes.Ldftn || i.OpCode == OpCodes.Ldvirtftn) && NoMethodGroup.Any(f => f.Type == declaring && f.Method == target.Name))
                    {
                        yield return $"{type.FullName}::{m.Name} takes a method group of {declaring}::{target.Name}";
                    }

                    if (declaring.StartsWith("System.Reflection.Emit.", StringComparison.Ordinal))
                    {
                        yield return $"{type.FullName}::{m.Name} emits code ({declaring}::{target.Name})";
                    }
                }
            }
        }
    }

    /// <summary>What the check must find (compiled into the test assembly only; never run).</summary>
    private static class Samples
    {
        public static object? CreateFromType(Type t) => Activator.CreateInstance(t);

        public static List<Type> FieldTypes(System.Data.Common.DbDataReader r) => [.. Enumerable.Range(0, r.FieldCount).Select(r.GetFieldType)];

        public static List<Type> FieldTypesCalled(System.Data.Common.DbDataReader r) => [.. Enumerable.Range(0, r.FieldCount).Select(i => r.GetFieldType(i))];
    }
}
