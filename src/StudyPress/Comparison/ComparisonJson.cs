using System.Text.Encodings.Web;
using System.Text.Json;
using System.Text.Unicode;

namespace StudyPress.Comparison;

/// <summary>The comparison for machines: format <c>studypress-diff/1</c> (docs/comparing-builds.md).</summary>
public static class ComparisonJson
{
    public const string Format = "studypress-diff/1";

    private static readonly JsonWriterOptions Options = new()
    {
        Indented = true,
        Encoder = JavaScriptEncoder.Create(UnicodeRanges.All),
    };

    public static byte[] Write(ComparisonResult r, FailOn failOn)
    {
        using var stream = new MemoryStream();
        using (var w = new Utf8JsonWriter(stream, Options))
        {
            w.WriteStartObject();
            w.WriteString("format", Format);
            Side(w, "old", r.Old);
            Side(w, "new", r.New);
            w.WriteNumber("exit", r.ExitCode(failOn));
            w.WriteString("failOn", failOn.ToString().ToLowerInvariant());
            w.WriteStartObject("summary");
            w.WriteNumber("decisionsFlipped", r.Decisions.Count);
            w.WriteNumber("valuesChanged", r.Changed.Count);
            w.WriteNumber("valuesAdded", r.Added.Count);
            w.WriteNumber("valuesRemoved", r.Removed.Count);
            w.WriteNumber("inputsChanged", r.Inputs.Count);
            w.WriteNumber("sentencesChanged", r.Sentences.Sum(s => s.Added.Count + s.Removed.Count));
            w.WriteNumber("blocksAdded", r.BlocksAdded.Count);
            w.WriteNumber("blocksRemoved", r.BlocksRemoved.Count);
            w.WriteBoolean("studyChanged", r.StudyChanged);
            w.WriteEndObject();

            w.WriteStartArray("decisions");
            foreach (var d in r.Decisions)
            {
                w.WriteStartObject();
                w.WriteString("kind", d.Kind);
                w.WriteString("block", d.Block);
                w.WriteString("test", d.Test);
                Nullable(w, "oldTest", d.OldTest);
                Nullable(w, "term", d.Term);
                Pair(w, d.Pair);
                Nullable(w, "stat", d.Stat);
                w.WriteString("old", d.Old);
                w.WriteString("new", d.New);
                Number(w, "oldValue", d.OldValue);
                Number(w, "newValue", d.NewValue);
                Nullable(w, "oldText", d.OldText);
                Nullable(w, "newText", d.NewText);
                w.WriteString("description", d.Description);
                w.WriteEndObject();
            }

            w.WriteEndArray();

            w.WriteStartArray("inputs");
            foreach (var i in r.Inputs)
            {
                w.WriteStartObject();
                w.WriteString("name", i.Name);
                w.WriteString("status", i.Status);
                Nullable(w, "oldPath", i.Old?.Path);
                Nullable(w, "newPath", i.New?.Path);
                Nullable(w, "oldSha256", i.Old?.Sha256);
                Nullable(w, "newSha256", i.New?.Sha256);
                if (i.Rows is { } t)
                {
                    w.WriteStartObject("rows");
                    w.WriteNumber("old", t.OldRows);
                    w.WriteNumber("new", t.NewRows);
                    w.WriteNumber("added", t.Added);
                    w.WriteNumber("removed", t.Removed);
                    w.WriteNumber("changed", t.Changed);
                    w.WriteBoolean("headerChanged", t.HeaderChanged);
                    w.WriteStartArray("addedExamples");
                    foreach (var a in t.AddedExamples)
                    {
                        Row(w, a);
                    }

                    w.WriteEndArray();
                    w.WriteStartArray("removedExamples");
                    foreach (var a in t.RemovedExamples)
                    {
                        Row(w, a);
                    }

                    w.WriteEndArray();
                    w.WriteStartArray("changedExamples");
                    foreach (var c in t.ChangedExamples)
                    {
                        w.WriteStartObject();
                        w.WriteNumber("oldLine", c.OldLine);
                        w.WriteString("old", c.Old);
                        w.WriteNumber("newLine", c.NewLine);
                        w.WriteString("new", c.New);
                        w.WriteEndObject();
                    }

                    w.WriteEndArray();
                    w.WriteEndObject();
                }
                else
                {
                    w.WriteNull("rows");
                }

                Nullable(w, "rowsNote", i.RowsNote);
                w.WriteEndObject();
            }

            w.WriteEndArray();

            w.WriteStartArray("changed");
            foreach (var c in r.Changed)
            {
                w.WriteStartObject();
                Path(w, c.New);
                Number(w, "old", c.Old.Value);
                Number(w, "new", c.New.Value);
                w.WriteString("oldText", c.Old.Text());
                w.WriteString("newText", c.New.Text());
                w.WriteString("basis", c.Basis);
                w.WriteEndObject();
            }

            w.WriteEndArray();
            Values(w, "added", r.Added);
            Values(w, "removed", r.Removed);

            w.WriteStartArray("sentences");
            foreach (var s in r.Sentences)
            {
                w.WriteStartObject();
                w.WriteString("block", s.Block);
                Strings(w, "removed", s.Removed);
                Strings(w, "added", s.Added);
                w.WriteEndObject();
            }

            w.WriteEndArray();
            w.WriteStartObject("blocks");
            Strings(w, "added", r.BlocksAdded);
            Strings(w, "removed", r.BlocksRemoved);
            w.WriteEndObject();
            Strings(w, "notes", r.Notes);
            w.WriteEndObject();
        }

        stream.WriteByte((byte)'\n');
        return stream.ToArray();
    }

    private static void Side(Utf8JsonWriter w, string name, BuildSnapshot s)
    {
        w.WriteStartObject(name);
        w.WriteString("label", s.Label);
        w.WriteString("source", s.Source.ToString().ToLowerInvariant());
        w.WriteString("study", s.StudyPath);
        w.WriteString("studySha256", s.StudySha256);
        w.WriteString("toolVersion", s.ToolVersion);
        Number(w, "alpha", s.Alpha);
        w.WriteString("alphaSource", s.AlphaSource);
        w.WriteEndObject();
    }

    private static void Values(Utf8JsonWriter w, string name, IReadOnlyList<SnapshotValue> values)
    {
        w.WriteStartArray(name);
        foreach (var v in values)
        {
            w.WriteStartObject();
            Path(w, v);
            Number(w, "value", v.Value);
            w.WriteString("text", v.Text());
            w.WriteEndObject();
        }

        w.WriteEndArray();
    }

    private static void Path(Utf8JsonWriter w, SnapshotValue v)
    {
        w.WriteString("block", v.Block);
        w.WriteString("test", v.Test);
        Nullable(w, "term", v.Term);
        Nullable(w, "level", v.Level);
        Pair(w, v.Pair);
        w.WriteString("stat", v.Stat);
    }

    private static void Row(Utf8JsonWriter w, RowExample r)
    {
        w.WriteStartObject();
        w.WriteNumber("line", r.Line);
        w.WriteString("text", r.Text);
        w.WriteEndObject();
    }

    private static void Pair(Utf8JsonWriter w, IReadOnlyList<string>? pair)
    {
        if (pair is null)
        {
            w.WriteNull("pair");
            return;
        }

        Strings(w, "pair", pair);
    }

    private static void Strings(Utf8JsonWriter w, string name, IEnumerable<string> items)
    {
        w.WriteStartArray(name);
        foreach (var s in items)
        {
            w.WriteStringValue(s);
        }

        w.WriteEndArray();
    }

    private static void Nullable(Utf8JsonWriter w, string name, string? value)
    {
        if (value is null)
        {
            w.WriteNull(name);
        }
        else
        {
            w.WriteString(name, value);
        }
    }

    private static void Number(Utf8JsonWriter w, string name, double? value)
    {
        if (value is { } v)
        {
            w.WriteNumber(name, v);
        }
        else
        {
            w.WriteNull(name);
        }
    }
}
