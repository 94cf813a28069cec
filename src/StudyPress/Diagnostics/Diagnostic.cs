using System.Globalization;

namespace StudyPress.Diagnostics;

public enum Severity
{
    Warning,
    Error,
}

/// <summary>A place in a file; line and column are zero-based, printed one-based.</summary>
public readonly record struct SourceLocation(string Path, int Line, int Column)
{
    public static SourceLocation None(string path) => new(path, 0, 0);

    public override string ToString() =>
        string.Create(CultureInfo.InvariantCulture, $"{Path}:{Line + 1}:{Column + 1}");
}

/// <summary>One message for the user, in GNU format when printed.</summary>
public sealed record Diagnostic(Severity Severity, string Code, string Message, SourceLocation Location)
{
    public override string ToString() =>
        $"{Location}: {(Severity == Severity.Error ? "error" : "warning")}: {Message}";
}

/// <summary>Raised for user errors that must stop a stage at once; caught inside the compiler.</summary>
internal sealed class StudyException(Diagnostic diagnostic) : Exception(diagnostic.Message)
{
    public Diagnostic Diagnostic { get; } = diagnostic;
}
