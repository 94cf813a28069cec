using System.Globalization;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

using StudyPress.Statistics.Designs;

namespace StudyPress.Binding;

/// <summary>One declared input file.</summary>
public sealed record DatasetSpec(
    string Name,
    string Path,
    string? Sha256,
    char Delimiter,
    char Decimal,
    IReadOnlyList<string> Missing,
    SourceLocation Location,
    SourceLocation PathLocation,
    SourceLocation? ShaLocation)
{
    /// <summary>How the file is read: from 'format', else from the path's extension.</summary>
    public DataFormat Format { get; init; } = DataFormat.Csv;

    /// <summary>Spreadsheet: the sheet to read (null: the first sheet).</summary>
    public string? Sheet { get; init; }

    /// <summary>Spreadsheet: the block of cells to read, as written (e.g. "A1:F40"); null: the whole sheet.</summary>
    public string? Range { get; init; }

    /// <summary>Spreadsheet: the 1-based sheet row holding the column names (null: the range's first row).</summary>
    public int? HeaderRow { get; init; }

    /// <summary>Database or Parquet: the SQL query whose result is the table.</summary>
    public string? Query { get; init; }

    public SourceLocation? QueryLocation { get; init; }

    /// <summary>Database: load per-cell counts, means and centred sums of squares instead of rows.</summary>
    public bool Aggregate { get; init; }

    public SourceLocation? AggregateLocation { get; init; }

    /// <summary>Database or Parquet: the time limit of each query on the file, in seconds ('timeout').</summary>
    public int TimeoutSeconds { get; init; } = Data.DataLimits.DefaultQueryTimeoutSeconds;

    /// <summary>Locations of the spreadsheet keys, for messages.</summary>
    public SourceLocation? SheetLocation { get; init; }

    public SourceLocation? RangeLocation { get; init; }

    /// <summary>PostgreSQL (<c>format: postgres</c>): the server, port, database and TLS mode; null for files.</summary>
    public PostgresTarget? Server { get; init; }
}

/// <summary>The kinds of data file a dataset can name.</summary>
public enum DataFormat
{
    Csv,
    Xlsx,
    Sqlite,
    DuckDb,
    Parquet,
    Postgres,
}

/// <summary>A declared factor: which column holds it, its level order and its display label.</summary>
public sealed record FactorSpec(
    string Name,
    string Column,
    IReadOnlyList<string>? Levels,
    IReadOnlyList<SourceLocation> LevelLocations,
    string? Label,
    SourceLocation Location)
{
    public string Display => Label ?? Name;

    /// <summary>Where the column is named: the factor's <c>column:</c> value, or the factor's key when it names its own column.</summary>
    public SourceLocation ColumnLocation { get; init; } = Location;

    /// <summary>The factor's place in the layout (<c>role</c>, <c>within</c>, <c>plot</c>, <c>codes</c>).</summary>
    public FactorLayout Layout { get; init; } = FactorLayout.Treatment;

    /// <summary>True for a factor the model compares or models (not a column that only names the whole plots).</summary>
    public bool IsModelFactor => !Layout.NamesWholePlots;
}

/// <summary>
/// Where a factor sits in the layout of the study, as its header entry declares it: a treatment
/// (the default; in a split plot applied to whole, sub- or sub-sub-plots), a block, a random factor,
/// or the column naming the whole plots (used to check the layout, not a model term); the factors it
/// is nested in (<c>within</c>) and whether its codes are unique across the study or restart within
/// each parent (<c>codes</c>).
/// </summary>
public sealed record FactorLayout(
    FactorRole Role,
    bool NamesWholePlots,
    PlotLevel Plot,
    IReadOnlyList<YScalar> Within,
    bool CodesRestart)
{
    public static readonly FactorLayout Treatment = new(FactorRole.Treatment, false, PlotLevel.Unit, [], false);

    public SourceLocation? RoleLocation { get; init; }

    public SourceLocation? PlotLocation { get; init; }

    public SourceLocation? WithinLocation { get; init; }

    /// <summary>A <c>role</c> or <c>plot</c> value was not one of the choices (already reported): the layout's cross-checks are skipped, so one typo gives one message.</summary>
    public bool Unreadable { get; init; }

    /// <summary>True when the entry says anything about the layout (a role other than treatment, a plot, a nesting).</summary>
    public bool IsDeclared => Role != FactorRole.Treatment || NamesWholePlots || Plot != PlotLevel.Unit || Within.Count > 0;

    /// <summary>The factor as the design engine takes it.</summary>
    public DesignFactor ToDesignFactor(string name) => new(name, Role, [.. Within.Select(w => w.Value)], Plot);
}

/// <summary>
/// Presentation options: <paramref name="SignificantDigits"/> of ordinary numbers
/// (<c>significant-digits</c>), <paramref name="PDecimals"/> of p-values (<c>p-decimals</c>);
/// <paramref name="Figures"/> false stops kinds from placing their figures.
/// </summary>
public sealed record ReportOptions(int SignificantDigits, int PDecimals, bool Figures)
{
    /// <summary>Whether p-values (and α) keep their leading zero ("0.035"; false: ".035"); <c>p-leading-zero</c>, default true.</summary>
    public bool PLeadingZero { get; init; } = true;

    /// <summary>The rules every number of the report is written by (tables, text, chart labels).</summary>
    public StudyPress.Charts.NumberText Numbers => new(SignificantDigits, PDecimals, PLeadingZero);

    /// <summary>Raw HTML in prose is passed through (the page's CSP still blocks scripts); off by default.</summary>
    public bool RawHtml { get; init; }
}

public sealed record StudyHeader(
    string Title,
    string Id,
    IReadOnlyList<string> Authors,
    double Alpha,
    IReadOnlyList<DatasetSpec> Datasets,
    string? Response,
    SourceLocation ResponseLocation,
    IReadOnlyList<FactorSpec> Factors,
    string? Order,
    SourceLocation OrderLocation,
    ReportOptions Report,
    SourceLocation Location)
{
    public FactorSpec? Factor(string name) => Factors.FirstOrDefault(f => f.Name == name);

    /// <summary>Header keys that a misspelt key was probably meant to be (reported once already).</summary>
    public IReadOnlySet<string> Misspelt { get; init; } = new HashSet<string>(StringComparer.Ordinal);

    public DatasetSpec? Dataset(string name) => Datasets.FirstOrDefault(d => d.Name == name);

    /// <summary>The response's label for readers (<c>response: {column, label, unit}</c>), or null.</summary>
    public string? ResponseLabel { get; init; }

    /// <summary>The response's unit (<c>µm</c>), or null.</summary>
    public string? ResponseUnit { get; init; }

    /// <summary>
    /// How a response column is named in text, captions and axis titles: the header response's
    /// label with its unit ("Coating thickness (µm)") when the column is the header's response and
    /// a label or unit is given; otherwise the column name.
    /// </summary>
    public string ResponseDisplay(string? column)
    {
        if (column is null || !string.Equals(column, Response, StringComparison.Ordinal) || (ResponseLabel is null && ResponseUnit is null))
        {
            return column ?? string.Empty;
        }

        var label = ResponseLabel ?? column;
        return ResponseUnit is null ? label : label + " (" + ResponseUnit + ")";
    }
}

/// <summary>Binds the header map to a <see cref="StudyHeader"/>, reporting every mistake found.</summary>
internal static class HeaderBinder
{
    public static readonly string[] Keys = ["title", "id", "authors", "alpha", "data", "response", "factors", "order", "report"];

    private static readonly string[] DatasetKeys = ["path", "sha256", "delimiter", "decimal", "missing", "format", "sheet", "range", "header-row", "query", "aggregate", "timeout", "server", "port", "database", "tls"];
    private static readonly string[] FormatNames = ["csv", "tsv", "xlsx", "sqlite", "duckdb", "parquet", "postgres"];
    private static readonly string[] LayoutKeys = ["role", "within", "plot", "codes"];
    private static readonly string[] FactorKeys = ["column", "levels", "label", .. LayoutKeys];
    private static readonly string[] ReportKeys = ["template", "significant-digits", "p-decimals", "p-leading-zero", "figures", Syntax.StudyParser.RawHtmlKey];

    /// <summary>Report keys of earlier versions and the names that replaced them.</summary>
    private static readonly (string Old, string New)[] RenamedReportKeys = [("digits", "significant-digits"), ("p-digits", "p-decimals")];
    private static readonly string[] DefaultMissing = ["", "NA", "N/A", "."];

    public static StudyHeader Bind(YMapping map, string studyPath, DiagnosticBag diagnostics)
    {
        // Keys written one level too shallow are the commonest indentation mistake; report each
        // once, where the indentation must change, and bind as if it were right so that nothing
        // else is reported about it.
        map = Reindent(map, e => e.Key.Value is "data" or "factors" ? c => !Keys.Contains(c.Key.Value) : null, diagnostics);
        map = ReindentChild(map, "data", DatasetKeys, diagnostics);
        map = ReindentChild(map, "factors", FactorKeys, diagnostics);
        var r = new KeyReader(map, "the header", Keys, diagnostics);
        var titleNode = r.Scalar("title");
        var title = titleNode?.Value ?? string.Empty;
        if (titleNode is null)
        {
            if (!r.Misspelt.Contains("title"))
            {
                diagnostics.MissingKey(map.Location, "title", "the header");
            }
        }
        else if (title.Trim().Length == 0)
        {
            diagnostics.EmptyTitle(titleNode.Location);
        }

        var idNode = r.Scalar("id");
        var id = idNode?.Value ?? DefaultId(studyPath);
        if (idNode is not null && !IsName(id))
        {
            // The id names the study's figure files: no path separators, dots or spaces.
            diagnostics.BadStudyId(idNode.Location, id);
        }

        var authors = r.ScalarList("authors", textMayHaveCommas: true)?.Select(a => a.Value).ToList() ?? [];

        var alpha = 0.05;
        if (r.Scalar("alpha") is { } alphaNode)
        {
            if (double.TryParse(alphaNode.Value, NumberStyles.Float, CultureInfo.InvariantCulture, out var a) && a > 0 && a < 1)
            {
                alpha = a;
            }
            else
            {
                diagnostics.AlphaOutOfRange(alphaNode.Location, alphaNode.Value);
            }
        }

        var datasets = new List<DatasetSpec>();
        switch (r.Node("data"))
        {
            case null or YScalar { IsNull: true }:
                if (!r.Misspelt.Contains("data"))
                {
                    diagnostics.MissingKey(map.Location, "data", "the header");
                }

                break;
            case YScalar single:
                // 'data: file.csv' is shorthand for one dataset named 'data'.
                datasets.Add(ShortFormSource(Make("data", single.Value, single.Location, null, null, null, null, single.Location, diagnostics), diagnostics));
                break;
            case YMapping dm:
                foreach (var e in dm.Entries)
                {
                    if (BindDataset(e, diagnostics) is { } ds)
                    {
                        datasets.Add(ds);
                    }
                }

                if (dm.Entries.Count == 0)
                {
                    diagnostics.MissingKey(dm.Location, "path", "'data' (declare at least one dataset)");
                }

                break;
            case var other:
                diagnostics.ExpectedMapping(other.Location, "'data' (dataset name -> file)");
                break;
        }

        var (responseNode, responseLabel, responseUnit) = BindResponse(r, diagnostics);
        var factors = new List<FactorSpec>();
        switch (r.Node("factors"))
        {
            case null or YScalar { IsNull: true }:
                break;
            case YMapping fm:
                foreach (var e in fm.Entries)
                {
                    factors.Add(BindFactor(e, diagnostics));
                }

                break;
            case YSequence fs:
                // A plain list of column names is shorthand for factors with default settings.
                foreach (var item in fs.Items)
                {
                    if (item is YScalar s)
                    {
                        factors.Add(new FactorSpec(s.Value, s.Value, null, [], null, s.Location));
                    }
                    else
                    {
                        diagnostics.ExpectedScalar(item.Location, "each item of 'factors'");
                    }
                }

                break;
            case var other:
                diagnostics.ExpectedMapping(other.Location, "'factors'");
                break;
        }

        CheckLayout(factors, diagnostics);
        var orderNode = r.Scalar("order");
        var digits = 3;
        var pDigits = 3;
        var pLeadingZero = true;
        var figures = true;
        var rawHtml = false;
        switch (r.Node("report"))
        {
            case null or YScalar { IsNull: true }:
                break;
            case YMapping rm:
                // An old key is reported once, with its new name, and read no further; so is a
                // misspelt old key ('digts'), with the new name as the suggestion.
                var oldKeys = RenamedReportKeys.Select(k => k.Old).ToArray();
                var dropped = new HashSet<YEntry>();
                foreach (var e in rm.Entries)
                {
                    if (Array.Find(RenamedReportKeys, k => k.Old == e.Key.Value) is { New: { } renamed })
                    {
                        diagnostics.RenamedReportKey(e.Key.Location, e.Key.Value, renamed);
                        dropped.Add(e);
                    }
                    else if (!ReportKeys.Contains(e.Key.Value) && DiagnosticBag.Nearest(e.Key.Value, ReportKeys) is null
                        && DiagnosticBag.Nearest(e.Key.Value, oldKeys) is { } near)
                    {
                        diagnostics.UnknownKey(e.Key.Location, e.Key.Value, "'report'", Array.Find(RenamedReportKeys, k => k.Old == near).New);
                        dropped.Add(e);
                    }
                }

                rm = rm with { Entries = [.. rm.Entries.Where(e => !dropped.Contains(e))] };
                var rr = new KeyReader(rm, "'report'", ReportKeys, diagnostics);
                if (rr.Scalar("template") is { } t)
                {
                    diagnostics.TemplateNotAllowed(t.Location);
                }

                digits = rr.Integer("significant-digits", 1, 15) ?? digits;
                pDigits = rr.Integer("p-decimals", 1, 15) ?? pDigits;
                if (rr.Scalar("p-leading-zero") is { } lz)
                {
                    switch (lz.Value)
                    {
                        case "true" or "True" or "yes":
                            break;
                        case "false" or "False" or "no":
                            pLeadingZero = false;
                            break;
                        default:
                            diagnostics.BadPLeadingZero(lz.Location, lz.Value);
                            break;
                    }
                }

                figures = (rr.Choice("figures", ["auto", "none"]) ?? "auto") == "auto";
                rawHtml = rr.Boolean(Syntax.StudyParser.RawHtmlKey) ?? false;
                break;
            case var other:
                diagnostics.ExpectedMapping(other.Location, "'report'");
                break;
        }

        return new StudyHeader(
            title,
            id,
            authors,
            alpha,
            datasets,
            responseNode?.Value,
            responseNode?.Location ?? map.Location,
            factors,
            orderNode?.Value,
            orderNode?.Location ?? map.Location,
            new ReportOptions(digits, pDigits, figures) { RawHtml = rawHtml, PLeadingZero = pLeadingZero },
            map.Location)
        {
            // A response that could not be read was reported once; blocks do not report it missing again.
            Misspelt = r.Has("response") && responseNode is null ? new HashSet<string>(r.Misspelt.Append("response"), StringComparer.Ordinal) : r.Misspelt,
            ResponseLabel = responseLabel,
            ResponseUnit = responseUnit,
        };
    }

    private static readonly string[] ResponseKeys = ["column", "label", "unit"];

    /// <summary>
    /// <c>response: col</c>, or <c>response: {column: col, label: Text, unit: µm}</c>: the column
    /// node (its location is where a missing column is reported), the label and the unit.
    /// </summary>
    private static (YScalar? Column, string? Label, string? Unit) BindResponse(KeyReader r, DiagnosticBag diagnostics)
    {
        switch (r.Node("response"))
        {
            case null or YScalar { IsNull: true }:
                return (null, null, null);
            case YScalar s:
                return (s, null, null);
            case YMapping m:
                var rr = new KeyReader(m, "'response'", ResponseKeys, diagnostics);
                var column = rr.Scalar("column");
                if (column is null && !rr.Misspelt.Contains("column"))
                {
                    diagnostics.MissingKey(m.Location, "column", "'response'");
                }

                string? Text(string key)
                {
                    if (rr.Scalar(key) is not { } t)
                    {
                        return null;
                    }

                    if (t.Value.Trim().Length == 0)
                    {
                        diagnostics.ResponseTextEmpty(t.Location, key);
                        return null;
                    }

                    return t.Value.Trim();
                }

                return (column, Text("label"), Text("unit"));
            case var other:
                diagnostics.ResponseForm(other.Location);
                return (null, null, null);
        }
    }

    /// <summary>
    /// Finds an entry with no value followed by entries that belong under it (by
    /// <paramref name="opener"/>), reports the first of those once and returns the map with them
    /// moved under the entry.
    /// </summary>
    private static YMapping Reindent(YMapping map, Func<YEntry, Func<YEntry, bool>?> opener, DiagnosticBag diagnostics)
    {
        var entries = new List<YEntry>();
        var changed = false;
        for (var i = 0; i < map.Entries.Count; i++)
        {
            var e = map.Entries[i];
            if (e.Value is YScalar { IsNull: true } && opener(e) is { } belongs)
            {
                var j = i + 1;
                while (j < map.Entries.Count && belongs(map.Entries[j]))
                {
                    j++;
                }

                if (j > i + 1)
                {
                    var first = map.Entries[i + 1].Key;
                    diagnostics.IndentUnder(first.Location, first.Value, e.Key.Value);
                    entries.Add(new YEntry(e.Key, new YMapping([.. map.Entries.Skip(i + 1).Take(j - i - 1)], first.Location)));
                    i = j - 1;
                    changed = true;
                    continue;
                }
            }

            entries.Add(e);
        }

        return changed ? new YMapping(entries, map.Location) : map;
    }

    /// <summary>The same, inside the map under <paramref name="key"/> (a dataset's or a factor's own keys).</summary>
    private static YMapping ReindentChild(YMapping map, string key, string[] childKeys, DiagnosticBag diagnostics)
    {
        if (map[key] is not YMapping inner)
        {
            return map;
        }

        // Layout keys (role, plot, within, codes) are also plausible column names ('plot'): an entry
        // with no value is a factor, so only a written value marks one as indented too little.
        var fixedInner = Reindent(
            inner,
            e => childKeys.Contains(e.Key.Value) ? null : c => childKeys.Contains(c.Key.Value) && (!LayoutKeys.Contains(c.Key.Value) || c.Value is YScalar { IsNull: false } or YSequence),
            diagnostics);
        return ReferenceEquals(fixedInner, inner)
            ? map
            : new YMapping([.. map.Entries.Select(e => e.Key.Value == key ? new YEntry(e.Key, fixedInner) : e)], map.Location);
    }

    /// <summary>
    /// The study id when the header gives none: a study kept as <c>study.md</c> in a folder of its
    /// own is named by that folder (<c>examples/spray-nozzles/study.md</c> is <c>spray-nozzles</c>),
    /// any other study by its file name. A folder name that is not a valid id (a letter first, then
    /// letters, digits, <c>-</c> and <c>_</c>) is not used: the file name is.
    /// </summary>
    internal static string DefaultId(string studyPath)
    {
        var file = Path.GetFileNameWithoutExtension(studyPath);
        if (!string.Equals(file, "study", StringComparison.Ordinal))
        {
            return file;
        }

        var folder = Path.GetFileName(Path.GetDirectoryName(Path.GetFullPath(studyPath)) ?? string.Empty);
        return folder is { Length: > 0 } && IsName(folder) ? folder : file;
    }

    internal static bool IsName(string s) =>
        s.Length > 0 && char.IsAsciiLetter(s[0]) && s.All(c => char.IsAsciiLetterOrDigit(c) || c is '_' or '-');

    private static DatasetSpec? BindDataset(YEntry e, DiagnosticBag diagnostics)
    {
        var name = e.Key.Value;
        if (!IsName(name))
        {
            diagnostics.ReservedDatasetName(e.Key.Location, name);
        }

        if (Keys.Contains(name) && e.Value is not YMapping)
        {
            diagnostics.HeaderKeyIndented(e.Key.Location, name, "data");
            return null;
        }

        if (e.Value is YScalar { IsNull: false } s)
        {
            return ShortFormSource(Make(name, s.Value, s.Location, null, null, null, null, e.Key.Location, diagnostics), diagnostics);
        }

        if (e.Value is not YMapping m)
        {
            diagnostics.ExpectedMapping(e.Value.Location, $"dataset '{name}'");
            return null;
        }

        var r = new KeyReader(m, $"dataset '{name}'", DatasetKeys, diagnostics);
        if (m["format"] is YScalar { Value: "postgres" })
        {
            return PostgresDataset.Bind(name, e.Key.Location, m, r, diagnostics);
        }

        foreach (var serverKey in PostgresDataset.OwnKeys)
        {
            if (r.Has(serverKey))
            {
                diagnostics.SourceKeyNotApplicable(r.KeyLocation(serverKey), serverKey, name, "a PostgreSQL server (format: postgres)");
            }
        }

        var pathNode = r.Scalar("path");
        if (pathNode is null)
        {
            // A misspelt 'path' already has its "did you mean"; one mistake, one message.
            if (!m.Entries.Any(x => !DatasetKeys.Contains(x.Key.Value) && DiagnosticBag.Nearest(x.Key.Value, DatasetKeys) == "path"))
            {
                diagnostics.MissingKey(m.Location, "path", $"dataset '{name}'");
            }

            return null;
        }

        var spec = Make(name, pathNode.Value, pathNode.Location, r.Scalar("sha256"), r.Scalar("delimiter"), r.Scalar("decimal"), r.ScalarList("missing"), e.Key.Location, diagnostics);
        return BindSource(spec, r, diagnostics);
    }

    /// <summary>The keys of the non-CSV kinds: format, sheet/range/header-row, query, aggregate.</summary>
    private static DatasetSpec BindSource(DatasetSpec spec, KeyReader r, DiagnosticBag diagnostics)
    {
        var format = FormatOf(spec.Path);
        if (r.Choice("format", FormatNames) is { } f)
        {
            format = f switch
            {
                "xlsx" => DataFormat.Xlsx,
                "sqlite" => DataFormat.Sqlite,
                "duckdb" => DataFormat.DuckDb,
                "parquet" => DataFormat.Parquet,
                _ => DataFormat.Csv,
            };
            if (f == "tsv" && !r.Has("delimiter"))
            {
                spec = spec with { Delimiter = '\t' };
            }
        }

        var sheet = r.Scalar("sheet");
        var range = r.Scalar("range");
        var headerRowLocation = r.Has("header-row") ? r.KeyLocation("header-row") : (SourceLocation?)null;
        var headerRow = r.Integer("header-row", 1, 1048576);
        var query = r.Scalar("query");
        var aggregateLocation = r.Has("aggregate") ? r.KeyLocation("aggregate") : (SourceLocation?)null;
        var aggregate = r.Boolean("aggregate") ?? false;
        var timeoutLocation = r.Has("timeout") ? r.KeyLocation("timeout") : (SourceLocation?)null;
        var timeout = r.Integer("timeout", 1, Data.DataLimits.MaxQueryTimeoutSeconds);
        if (timeoutLocation is { } tl && format is not (DataFormat.Sqlite or DataFormat.DuckDb or DataFormat.Parquet))
        {
            diagnostics.SourceKeyNotApplicable(tl, "timeout", spec.Name, "a database or Parquet file");
        }

        if (format != DataFormat.Xlsx)
        {
            foreach (var (key, at) in new[] { ("sheet", sheet?.Location), ("range", range?.Location), ("header-row", headerRowLocation) })
            {
                if (at is { } loc)
                {
                    diagnostics.SourceKeyNotApplicable(loc, key, spec.Name, "a spreadsheet (.xlsx)");
                }
            }
        }

        if (format is DataFormat.Csv or DataFormat.Xlsx && query is not null)
        {
            diagnostics.SourceKeyNotApplicable(query.Location, "query", spec.Name, "a database or Parquet file");
        }

        if (format is DataFormat.Sqlite or DataFormat.DuckDb && query is null)
        {
            diagnostics.QueryNeeded(r.KeyLocation("path"), spec.Name);
        }

        if (aggregate && aggregateLocation is { } al && (format is not (DataFormat.Sqlite or DataFormat.DuckDb or DataFormat.Parquet)))
        {
            diagnostics.SourceKeyNotApplicable(al, "aggregate", spec.Name, "a database or Parquet file");
        }

        if (range is not null && CellReference.ParseRange(range.Value) is null)
        {
            diagnostics.BadCellRange(range.Location, range.Value);
        }

        return spec with
        {
            Format = format,
            Sheet = sheet?.Value,
            SheetLocation = sheet?.Location,
            Range = range?.Value,
            RangeLocation = range?.Location,
            HeaderRow = headerRow,
            Query = query?.Value,
            QueryLocation = query?.Location,
            Aggregate = aggregate,
            AggregateLocation = aggregateLocation,
            TimeoutSeconds = timeout ?? Data.DataLimits.DefaultQueryTimeoutSeconds,
        };
    }

    /// <summary>A dataset written as a bare path: spreadsheets and Parquet files are fine, databases need a query.</summary>
    private static DatasetSpec ShortFormSource(DatasetSpec spec, DiagnosticBag diagnostics)
    {
        var format = FormatOf(spec.Path);
        if (format is DataFormat.Sqlite or DataFormat.DuckDb)
        {
            diagnostics.QueryNeeded(spec.PathLocation, spec.Name);
        }

        return spec with { Format = format };
    }

    /// <summary>The format a path implies by its extension (CSV for anything not listed).</summary>
    internal static DataFormat FormatOf(string path)
    {
        var ext = System.IO.Path.GetExtension(path).ToLowerInvariant();
        return ext switch
        {
            ".xlsx" or ".xlsm" => DataFormat.Xlsx,
            ".sqlite" or ".sqlite3" or ".db" => DataFormat.Sqlite,
            ".duckdb" => DataFormat.DuckDb,
            ".parquet" => DataFormat.Parquet,
            _ => DataFormat.Csv,
        };
    }

    private static DatasetSpec Make(
        string name,
        string path,
        SourceLocation pathLocation,
        YScalar? sha,
        YScalar? delimiterNode,
        YScalar? decimalNode,
        IReadOnlyList<YScalar>? missing,
        SourceLocation location,
        DiagnosticBag diagnostics)
    {
        string? sha256 = null;
        if (sha is not null)
        {
            var v = sha.Value.Trim();
            if (v.Length == 64 && v.All(char.IsAsciiHexDigit))
            {
                sha256 = v.ToLowerInvariant();
            }
            else
            {
                diagnostics.BadSha256(sha.Location, sha.Value);
            }
        }

        var delimiter = path.EndsWith(".tsv", StringComparison.OrdinalIgnoreCase) ? '\t' : ',';
        if (delimiterNode is not null)
        {
            switch (delimiterNode.Value)
            {
                case ",":
                    delimiter = ',';
                    break;
                case ";":
                    delimiter = ';';
                    break;
                case "\t" or "\\t" or "tab":
                    delimiter = '\t';
                    break;
                default:
                    diagnostics.BadDelimiter(delimiterNode.Location, delimiterNode.Value);
                    break;
            }
        }

        var dec = '.';
        if (decimalNode is not null)
        {
            switch (decimalNode.Value)
            {
                case ".":
                    dec = '.';
                    break;
                case ",":
                    dec = ',';
                    break;
                default:
                    diagnostics.BadDecimal(decimalNode.Location, decimalNode.Value);
                    break;
            }

            if (dec == delimiter)
            {
                diagnostics.DecimalEqualsDelimiter(decimalNode.Location);
            }
        }

        return new DatasetSpec(
            name,
            path,
            sha256,
            delimiter,
            dec,
            missing?.Select(m => m.Value).ToList() ?? [.. DefaultMissing],
            location,
            pathLocation,
            sha?.Location);
    }

    private static FactorSpec BindFactor(YEntry e, DiagnosticBag diagnostics)
    {
        var name = e.Key.Value;
        if (e.Value is YScalar { IsNull: true })
        {
            return new FactorSpec(name, name, null, [], null, e.Key.Location);
        }

        if (e.Value is not YMapping && Keys.Contains(name))
        {
            diagnostics.HeaderKeyIndented(e.Key.Location, name, "factors");
            return new FactorSpec(name, name, null, [], null, e.Key.Location);
        }

        if (e.Value is not YMapping m)
        {
            diagnostics.ExpectedMapping(e.Value.Location, $"factor '{name}'");
            return new FactorSpec(name, name, null, [], null, e.Key.Location);
        }

        var r = new KeyReader(m, $"factor '{name}'", FactorKeys, diagnostics);
        var levelNodes = r.ScalarList("levels");
        List<string>? levels = null;
        if (levelNodes is not null)
        {
            levels = [];
            var distinct = new HashSet<string>(StringComparer.Ordinal);
            foreach (var l in levelNodes)
            {
                // Levels are compared in NFC and may not hold invisible characters (LevelText).
                var value = LevelText.Normal(l.Value);
                if (LevelText.FirstInvisible(value) is { } invisible)
                {
                    diagnostics.HeaderInvisibleCharacter(l.Location, LevelText.Visible(value), name, LevelText.Describe(invisible));
                }

                if (!distinct.Add(value))
                {
                    diagnostics.DuplicateLevel(l.Location, name, value);
                }
                else if (distinct.Count > Data.DataLimits.MaxLevelsPerFactor)
                {
                    diagnostics.TooManyLevels(l.Location, name, r.String("column") ?? name, Data.DataLimits.MaxLevelsPerFactor);
                    break;
                }
                else
                {
                    levels.Add(value);
                }
            }
        }

        var columnNode = r.Scalar("column");
        return new FactorSpec(name, r.String("column") ?? name, levels, levelNodes?.Select(l => l.Location).ToList() ?? [], r.String("label"), e.Key.Location)
        {
            ColumnLocation = columnNode?.Location ?? e.Key.Location,
            Layout = BindLayout(r, name, diagnostics),
        };
    }

    private static readonly string[] RoleNames = ["treatment", "block", "random", "whole-plot"];
    private static readonly string[] PlotNames = ["whole", "sub", "sub-sub"];

    /// <summary>A factor's own layout keys; what involves other factors is checked by <see cref="CheckLayout"/>.</summary>
    private static FactorLayout BindLayout(KeyReader r, string name, DiagnosticBag diagnostics)
    {
        var roleNode = r.Scalar("role");
        var roleChoice = r.Choice("role", RoleNames);
        var role = roleChoice ?? "treatment";
        var plotNode = r.Scalar("plot");
        var plotChoice = r.Choice("plot", PlotNames);
        var plot = plotChoice switch
        {
            "whole" => PlotLevel.WholePlot,
            "sub" => PlotLevel.SubPlot,
            "sub-sub" => PlotLevel.SubSubPlot,
            _ => PlotLevel.Unit,
        };
        var within = r.ScalarList("within") ?? [];
        var codesNode = r.Scalar("codes");
        var codes = r.Choice("codes", ["unique", "restart"]);
        if (plotNode is not null && plot != PlotLevel.Unit && role != "treatment")
        {
            diagnostics.PlotOnNonTreatment(plotNode.Location, name, role);
            plot = PlotLevel.Unit;
        }

        if (within.Count > 0 && role is "block" or "whole-plot")
        {
            diagnostics.WithinOnLayoutFactor(r.KeyLocation("within"), name, role);
            within = [];
        }

        if (codesNode is not null && within.Count == 0 && !r.Has("within"))
        {
            diagnostics.CodesWithoutWithin(codesNode.Location, name);
        }

        return new FactorLayout(
            role switch { "block" => FactorRole.Block, "random" => FactorRole.Random, _ => FactorRole.Treatment },
            role == "whole-plot",
            plot,
            within,
            codes == "restart")
        {
            RoleLocation = roleNode?.Location,
            PlotLocation = plotNode?.Location,
            Unreadable = (roleNode is not null && roleChoice is null) || (plotNode is not null && plotChoice is null),
            WithinLocation = within.Count > 0 ? r.KeyLocation("within") : null,
        };
    }

    /// <summary>
    /// Checks what the factors' layouts say about each other: nesting names other factors and does
    /// not go round in a circle; a split plot has blocks, gives every treatment a plot level and skips
    /// no level; at most one column names the whole plots, and only in a split plot.
    /// </summary>
    private static void CheckLayout(List<FactorSpec> factors, DiagnosticBag diagnostics)
    {
        var names = factors.Select(f => f.Name).ToList();
        foreach (var f in factors)
        {
            foreach (var w in f.Layout.Within)
            {
                if (w.Value == f.Name)
                {
                    diagnostics.NestedInItself(w.Location, f.Name);
                }
                else if (!names.Contains(w.Value))
                {
                    diagnostics.WithinUnknownFactor(w.Location, f.Name, w.Value, DiagnosticBag.Nearest(w.Value, names));
                }
                else if (factors.First(g => g.Name == w.Value).Layout.NamesWholePlots)
                {
                    diagnostics.WithinWholePlotColumn(w.Location, f.Name, w.Value);
                }
            }
        }

        // A circle: report it once, at the 'within' entry that closes it (the last factor on it in header order).
        var reported = new HashSet<string>(StringComparer.Ordinal);
        foreach (var f in factors)
        {
            var path = new List<string>();
            if (Circle(f.Name, factors, path, []) && path.Count > 0 && reported.Add(string.Join(",", path.Order(StringComparer.Ordinal))))
            {
                var closer = factors.Last(g => path.Contains(g.Name));
                var at = closer.Layout.Within.FirstOrDefault(w => path.Contains(w.Value));
                diagnostics.NestingCircle(at?.Location ?? closer.Location, string.Join(" within ", [.. path, path[0]]));
            }
        }

        if (factors.Any(f => f.Layout.Unreadable))
        {
            return;
        }

        var plotted = factors.Where(f => f.Layout.Plot != PlotLevel.Unit).ToList();
        var ids = factors.Where(f => f.Layout.NamesWholePlots).ToList();
        if (plotted.Count == 0)
        {
            foreach (var id in ids)
            {
                diagnostics.WholePlotColumnWithoutSplitPlot(id.Layout.RoleLocation ?? id.Location, id.Name);
            }

            return;
        }

        foreach (var extra in ids.Skip(1))
        {
            diagnostics.SecondWholePlotColumn(extra.Layout.RoleLocation ?? extra.Location, extra.Name, ids[0].Name);
        }

        if (!factors.Any(f => f.Layout.Role == FactorRole.Block))
        {
            // One mistake: the blocks are missing (a factor meant as blocks would otherwise also be
            // reported as a treatment without a plot level).
            diagnostics.SplitPlotWithoutBlocks(plotted[0].Layout.PlotLocation ?? plotted[0].Location, plotted[0].Name);
            return;
        }

        foreach (var t in factors.Where(f => f.Layout.Role == FactorRole.Treatment && !f.Layout.NamesWholePlots && f.Layout.Plot == PlotLevel.Unit))
        {
            diagnostics.TreatmentWithoutPlot(t.Location, t.Name);
        }

        var levels = plotted.Select(f => f.Layout.Plot).ToHashSet();
        foreach (var f in plotted)
        {
            var below = f.Layout.Plot - 1;
            if (below >= PlotLevel.WholePlot && !levels.Contains(below))
            {
                diagnostics.PlotLevelSkipped(f.Layout.PlotLocation ?? f.Location, f.Name, PlotWord(f.Layout.Plot), PlotWord(below));
                break;
            }
        }
    }

    private static string PlotWord(PlotLevel level) => level switch
    {
        PlotLevel.WholePlot => "whole",
        PlotLevel.SubPlot => "sub",
        _ => "sub-sub",
    };

    /// <summary>Whether following 'within' from <paramref name="start"/> comes back to it; <paramref name="path"/> gets the circle.</summary>
    private static bool Circle(string start, List<FactorSpec> factors, List<string> path, HashSet<string> seen)
    {
        var stack = new List<string> { start };
        return Walk(start);

        bool Walk(string current)
        {
            var spec = factors.FirstOrDefault(f => f.Name == current);
            if (spec is null || !seen.Add(current))
            {
                return false;
            }

            foreach (var w in spec.Layout.Within)
            {
                if (w.Value == start && w.Value != current)
                {
                    path.AddRange(stack);
                    return true;
                }

                stack.Add(w.Value);
                if (Walk(w.Value))
                {
                    return true;
                }

                stack.RemoveAt(stack.Count - 1);
            }

            return false;
        }
    }
}
