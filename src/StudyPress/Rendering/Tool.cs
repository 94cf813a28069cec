using System.Reflection;

namespace StudyPress.Rendering;

/// <summary>The compiler's own identity, as reports, manifests and the methods text state it.</summary>
public static class Tool
{
    /// <summary>The version without build metadata (the part after '+').</summary>
    public static string Version { get; } =
        typeof(Tool).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion.Split('+')[0] ?? "0.0.0";
}
