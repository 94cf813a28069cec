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
        string.Create(CultureInfo.InvariantCulture, $"{UnsafeText.Escape(Path)}:{Line + 1}:{Column + 1}");
}

/// <summary>
/// One message for the user, in GNU format when printed. The message is kept with every control,
/// bidirectional-formatting or unpaired-surrogate character written as <c>\uXXXX</c>
/// (<see cref="UnsafeText.Escape"/>), so text quoted from data can never drive the terminal.
/// </summary>
public sealed record Diagnostic(Severity Severity, string Code, string Message, SourceLocation Location)
{
    private readonly string message = UnsafeText.Escape(Message);

    public string Message
    {
        get => message;
        init => message = UnsafeText.Escape(value);
    }

    public override string ToString() =>
        $"{Location}: {(Severity == Severity.Error ? "error" : "warning")}: {Message}";
}

/// <summary>Raised for user errors that must stop a stage at once; caught inside the compiler.</summary>
internal sealed class StudyException(Diagnostic diagnostic) : Exception(diagnostic.Message)
{
    public Diagnostic Diagnostic { get; } = diagnostic;
}
