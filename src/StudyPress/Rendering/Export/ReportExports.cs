namespace StudyPress.Rendering.Export;

/// <summary>
/// The Word and LaTeX views of a built report: both read the report's own HTML (its structure is
/// ours: ReportRenderer, HtmlWriter, templates/report.sbn-html) and its manifest, so they say what
/// the HTML says, with the same numbers and ids, without a renderer per analysis kind.
/// </summary>
public static class ReportExports
{
    /// <summary>The report as a .docx file.</summary>
    /// <param name="figures">The compilation's figures in order: chart type and PNG bytes.</param>
    /// <param name="manifest">The results manifest, kept inside the document (see <see cref="DocxWriter"/>).</param>
    public static byte[] Docx(string html, byte[] manifest, IReadOnlyList<(string Type, byte[] Png)> figures)
    {
        var report = ReportDocument.Read(html);
        Check(report, figures.Select(f => f.Type).ToList());
        return DocxWriter.Write(report, [.. figures.Select(f => f.Png)], manifest);
    }

    /// <summary>The LaTeX fragment (<see cref="LatexWriter.FragmentName"/>) and the figure files to put beside it, by file name.</summary>
    /// <param name="figures">The compilation's figures in order: file name, chart type and PNG bytes.</param>
    public static IReadOnlyList<(string FileName, byte[] Bytes)> Latex(string html, byte[] manifest, NumberFormat format, IReadOnlyList<(string FileName, string Type, byte[] Png)> figures)
    {
        var report = ReportDocument.Read(html);
        Check(report, figures.Select(f => f.Type).ToList());
        var tex = LatexWriter.Write(report, ManifestValues.Read(manifest), format, [.. figures.Select(f => f.FileName)]);
        var files = new List<(string, byte[])> { (LatexWriter.FragmentName, new System.Text.UTF8Encoding(false).GetBytes(tex)) };
        files.AddRange(figures.Select(f => (f.FileName, f.Png)));
        return files;
    }

    /// <summary>The report's figures are the compilation's, in the same order (a bug otherwise).</summary>
    private static void Check(ReportDocument report, IReadOnlyList<string> types)
    {
        var shown = report.Blocks.OfType<ExportFigure>().Select(f => f.Type).ToList();
        if (!shown.SequenceEqual(types, StringComparer.Ordinal))
        {
            throw new InvalidOperationException("the report's figures (" + string.Join(", ", shown) + ") are not the compilation's (" + string.Join(", ", types) + ")");
        }
    }
}
