using System.Text.Encodings.Web;
using System.Text.Json;
using System.Text.Unicode;
using StudyPress.Data;

namespace StudyPress.Evaluation;

/// <summary>Identity of the tool and of the files a report depends on.</summary>
public sealed record ManifestHeader(
    string ToolVersion,
    string StudyPath,
    string StudySha256,
    string TemplateName,
    string TemplateSha256,
    string? BuildTime);

/// <summary>
/// Writes the results manifest (format studypress-results/1): the same bytes are embedded in the
/// report and written by --json. Doubles use the shortest round-trip form. HTML-significant
/// characters are escaped as \u003C etc., so the JSON can sit inside a script element unchanged.
/// </summary>
public static class Manifest
{
    public const string Format = "studypress-results/1";

    private static readonly JsonWriterOptions WriterOptions = new()
    {
        Indented = true,
        Encoder = JavaScriptEncoder.Create(UnicodeRanges.All),
    };

    public static byte[] Write(ManifestHeader header, IReadOnlyList<LoadedDataset> inputs, ResultSet results)
    {
        using var stream = new MemoryStream();
        using (var w = new Utf8JsonWriter(stream, WriterOptions))
        {
            w.WriteStartObject();
            w.WriteString("format", Format);
            w.WriteStartObject("tool");
            w.WriteString("name", "studypress");
            w.WriteString("version", header.ToolVersion);
            w.WriteEndObject();
            w.WriteStartObject("study");
            w.WriteString("path", header.StudyPath);
            w.WriteString("sha256", header.StudySha256);
            w.WriteEndObject();
            w.WriteStartObject("template");
            w.WriteString("name", header.TemplateName);
            w.WriteString("sha256", header.TemplateSha256);
            w.WriteEndObject();
            if (header.BuildTime is not null)
            {
                w.WriteString("built", header.BuildTime);
            }

            w.WriteStartArray("inputs");
            foreach (var d in inputs)
            {
                w.WriteStartObject();
                w.WriteString("name", d.Spec.Name);
                w.WriteString("path", d.Path);
                w.WriteString("sha256", d.Sha256);
                w.WriteNumber("rows", d.Rows);
                w.WriteNumber("rowsUsed", d.RowsUsed);
                if (d.Query is not null)
                {
                    w.WriteString("query", d.Query);
                    w.WriteString("resultSha256", d.ResultSha256);
                }
                w.WriteEndObject();
            }

            w.WriteEndArray();
            w.WriteStartArray("values");
            foreach (var v in results.Values)
            {
                w.WriteStartObject();
                w.WriteString("id", v.Id);
                w.WriteString("block", v.Block);
                w.WriteString("test", v.Test);
                WriteNullable(w, "term", v.Term);
                WriteNullable(w, "level", v.Level);
                if (v.Pair is null)
                {
                    w.WriteNull("pair");
                }
                else
                {
                    w.WriteStartArray("pair");
                    foreach (var p in v.Pair)
                    {
                        w.WriteStringValue(p);
                    }

                    w.WriteEndArray();
                }

                w.WriteString("stat", v.Stat);
                if (v.Value.IsDefined)
                {
                    w.WriteNumber("value", v.Value.Value);
                }
                else
                {
                    w.WriteNull("value");
                    w.WriteString("reason", v.Value.Reason);
                }

                w.WriteStartArray("inputs");
                foreach (var i in v.Inputs)
                {
                    w.WriteStringValue(i);
                }

                w.WriteEndArray();
                w.WriteEndObject();
            }

            w.WriteEndArray();
            w.WriteEndObject();
        }

        stream.WriteByte((byte)'\n');
        return stream.ToArray();
    }

    private static void WriteNullable(Utf8JsonWriter w, string name, string? value)
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
}
