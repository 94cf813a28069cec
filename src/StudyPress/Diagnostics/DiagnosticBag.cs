using System.Globalization;

namespace StudyPress.Diagnostics;

/// <summary>
/// Collects diagnostics. Every message a user can see is worded here, one method per message,
/// so the wording can be reviewed in one file. Codes: SP01xx syntax/YAML, SP02xx header and
/// blocks, SP03xx data, SP04xx references, SP05xx analysis, SP06xx output, SP07xx comparison
/// of builds (<c>studypress diff</c>).
/// </summary>
public sealed class DiagnosticBag
{
    /// <summary>At most this many errors are kept per file; later ones are summarised.</summary>
    public const int MaxErrorsPerFile = 50;

    private readonly List<Diagnostic> items = [];
    private readonly Dictionary<string, int> perFile = new(StringComparer.Ordinal);
    private readonly HashSet<string> truncated = new(StringComparer.Ordinal);

    public IReadOnlyList<Diagnostic> Items => items;

    public bool HasErrors => items.Exists(d => d.Severity == Severity.Error);

    /// <summary>Diagnostics sorted by file and position, each once.</summary>
    public IReadOnlyList<Diagnostic> Sorted() =>
        [.. items.Distinct()
            .OrderBy(d => d.Location.Path, StringComparer.Ordinal)
            .ThenBy(d => d.Location.Line)
            .ThenBy(d => d.Location.Column)];

    internal static Diagnostic Make(string code, string message, SourceLocation at) =>
        new(Severity.Error, code, message, at);

    public void Add(Diagnostic d)
    {
        if (d.Severity == Severity.Error)
        {
            perFile.TryGetValue(d.Location.Path, out var n);
            perFile[d.Location.Path] = n + 1;
            if (n >= MaxErrorsPerFile)
            {
                if (truncated.Add(d.Location.Path))
                {
                    items.Add(new Diagnostic(Severity.Error, "SP0001", string.Create(CultureInfo.InvariantCulture, $"too many errors; only the first {MaxErrorsPerFile} in this file are shown"), d.Location));
                }

                return;
            }
        }

        items.Add(d);
    }

    public void AddRange(IEnumerable<Diagnostic> ds)
    {
        foreach (var d in ds)
        {
            Add(d);
        }
    }

    private void Error(string code, SourceLocation at, string message) => Add(Make(code, message, at));

    private static string Suggest(string? suggestion) => suggestion is null ? string.Empty : $"; did you mean '{suggestion}'?";

    private static string Q(string s) => "'" + s + "'";

    // ---- files and encodings (SP00xx) ----
    public void FileNotFound(SourceLocation at, string what, string path) => Error("SP0002", at, $"{what} {Q(path)} not found");

    public void FileUnreadable(SourceLocation at, string path, string reason) => Error("SP0003", at, $"cannot read {Q(path)}: {reason}");

    public void NotUtf8(SourceLocation at, string detail) => Error("SP0004", at, $"the file is not valid UTF-8 ({detail})");

    public void Utf16(SourceLocation at) => Error("SP0005", at, "the file is UTF-16; save it as UTF-8");

    public void NulByte(SourceLocation at) => Error("SP0006", at, "the file contains a NUL byte; is it a binary file?");

    public void FileTooLarge(SourceLocation at, string what, string path, long size, long max) =>
        Error("SP0007", at, string.Create(CultureInfo.InvariantCulture, $"{what} {Q(path)} is {size} bytes; this version reads at most {max} bytes ({max / (1024 * 1024)} MiB)"));

    public void PathIsFolder(SourceLocation at, string path) => Error("SP0008", at, $"data path {Q(path)} is a folder; name a CSV or TSV file");

    // ---- study syntax (SP01xx) ----
    public void NoHeader(SourceLocation at) => Error("SP0101", at, "a study file must start with a YAML header between '---' lines");

    public void UnclosedHeader(SourceLocation at) => Error("SP0102", at, "the YAML header is not closed; add a line '---' after it");

    public void TabIndentation(SourceLocation at) => Error("SP0107", at, "a tab is used for indentation; YAML needs spaces");

    // These four stop the YAML reader at once, so they are made here and thrown by it.
    internal static Diagnostic DuplicateKey(SourceLocation at, string key, int firstLine) =>
        Make("SP0103", string.Create(CultureInfo.InvariantCulture, $"duplicate key {Q(key)} (first given on line {firstLine + 1})"), at);

    internal static Diagnostic YamlAlias(SourceLocation at) => Make("SP0104", "YAML aliases ('*name') are not supported in study files", at);

    internal static Diagnostic YamlTooDeep(SourceLocation at) => Make("SP0105", "the YAML is nested too deeply", at);

    internal static Diagnostic KeyNotPlain(SourceLocation at) => Make("SP0106", "a key must be a plain name", at);

    public void YamlSyntax(SourceLocation at, string message) => Error("SP0108", at, message);

    public void YamlUnclosedBracket(SourceLocation at, char bracket) =>
        Error("SP0109", at, $"invalid YAML: this '{bracket}' is not closed with '{(bracket == '[' ? ']' : '}')}'");

    public void UnclosedBlock(SourceLocation at, string kind) => Error("SP0110", at, $"the {kind} block is not closed; add a line ``` after its body");

    public void EmptyStudy(SourceLocation at) => Error("SP0111", at, "the study file is empty; it must start with a YAML header between '---' lines");

    public void UnknownKind(SourceLocation at, string kind, string suggestion) =>
        Error("SP0120", at, $"unknown analysis kind {Q(kind)}; did you mean {Q(suggestion)}?");

    public void NoBlocks(SourceLocation at) =>
        Add(new Diagnostic(Severity.Warning, "SP0112", "the study has no analysis blocks yet, so the report shows only its text and data; add one after the header, for example a fenced block ```summary```", at));

    // ---- header and blocks (SP02xx) ----
    public void UnknownKey(SourceLocation at, string key, string where, string? suggestion) =>
        Error("SP0201", at, $"unknown key {Q(key)} in {where}{Suggest(suggestion)}");

    public void MissingKey(SourceLocation at, string key, string where) => Error("SP0202", at, $"missing required key {Q(key)} in {where}");

    public void ExpectedMapping(SourceLocation at, string what) => Error("SP0203", at, $"{what} must be a map of keys to values");

    public void ExpectedScalar(SourceLocation at, string what) => Error("SP0204", at, $"{what} must be a single value, not a list or map");

    public void ExpectedList(SourceLocation at, string what) => Error("SP0205", at, $"{what} must be a list");

    public void IndentUnder(SourceLocation at, string key, string parent) =>
        Error("SP0247", at, $"indent {Q(key)} under {Q(parent + ":")}: it belongs to {Q(parent)}, so it must start further right than {Q(parent)} does");

    public void BlocksSameAsFactor(SourceLocation at, string name) =>
        Error("SP0249", at, $"{Q(name)} is the factor compared; 'blocks' names a different factor, the one whose levels are the blocks (plots, subjects, batches)");

    public void PlotOnNonTreatment(SourceLocation at, string name, string role) =>
        Error("SP0250", at, $"'plot' says which plots a treatment is applied to, but {Q(name)} has 'role: {role}'; remove 'plot' here (blocks and random factors are not applied to plots)");

    public void WithinOnLayoutFactor(SourceLocation at, string name, string role) =>
        Error("SP0251", at, role == "block"
            ? $"a block is not nested in another factor, but {Q(name)} is a block with 'within'; remove 'within', or write 'role: random' if {Q(name)} is a random factor nested in others"
            : $"{Q(name)} names the whole plots, which are nested in the blocks by definition; remove 'within' here");

    public void CodesWithoutWithin(SourceLocation at, string name) =>
        Error("SP0252", at, $"'codes' says whether the codes of a nested factor repeat under each parent, but {Q(name)} has no 'within'; add 'within: PARENT' or remove 'codes'");

    public void NestedInItself(SourceLocation at, string name) =>
        Error("SP0253", at, $"{Q(name)} cannot be nested in itself; 'within' names the factor whose levels contain those of {Q(name)} (a batch within its supplier)");

    public void WithinUnknownFactor(SourceLocation at, string name, string parent, string? suggestion) =>
        Error("SP0254", at, $"{Q(name)} is declared within {Q(parent)}, which is not a factor of the header{Suggest(suggestion)}");

    public void WithinWholePlotColumn(SourceLocation at, string name, string parent) =>
        Error("SP0255", at, $"{Q(name)} is declared within {Q(parent)}, the column that names the whole plots; give a treatment 'plot: sub' instead of nesting it in the whole plots");

    public void NestingCircle(SourceLocation at, string circle) =>
        Error("SP0256", at, $"the nesting goes round in a circle ({circle}); a factor can only be nested in factors above it");

    public void WholePlotColumnWithoutSplitPlot(SourceLocation at, string name) =>
        Error("SP0257", at, $"{Q(name)} names the whole plots of a split plot, but no treatment says 'plot: whole'; declare the plot level of each treatment, or remove 'role: whole-plot'");

    public void SecondWholePlotColumn(SourceLocation at, string name, string first) =>
        Error("SP0258", at, $"{Q(first)} already names the whole plots; only one column may have 'role: whole-plot'");

    public void SplitPlotWithoutBlocks(SourceLocation at, string name) =>
        Error("SP0259", at, $"{Q(name)} is applied to plots of a split plot, but no factor has 'role: block'; declare the blocks (replicates), without which the whole plots cannot be told apart from the treatments");

    public void TreatmentWithoutPlot(SourceLocation at, string name) =>
        Error("SP0260", at, $"in a split plot every treatment says which plots it is applied to; add 'plot: whole', 'plot: sub' or 'plot: sub-sub' to {Q(name)}");

    public void PlotLevelSkipped(SourceLocation at, string name, string level, string missing) =>
        Error("SP0261", at, $"{Q(name)} is applied to {level}-plots, but no treatment is applied to {missing}-plots; the plot levels go whole, sub, sub-sub without a gap");

    public void WholePlotColumnInModel(SourceLocation at, string name) =>
        Error("SP0262", at, $"{Q(name)} names the whole plots ('role: whole-plot'), which the model derives from the blocks and the whole-plot treatments; leave it out of the anova block's factors");

    public void HeaderKeyIndented(SourceLocation at, string key, string parent) =>
        Error("SP0248", at, $"{Q(key)} is a header key, but it is indented under {Q(parent + ":")}; start it in column 1");

    public void ListWrittenAsText(SourceLocation at, string key, string text) =>
        Error("SP0246", at, $"{Q(key)} is a list, but this is one text; write it as [{string.Join(", ", text.Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries))}]");

    public void AlphaOutOfRange(SourceLocation at, string text) => Error("SP0206", at, $"alpha must be a number strictly between 0 and 1, not {Q(text)}");

    public void NotANumber(SourceLocation at, string key, string text) => Error("SP0207", at, $"{Q(key)} must be a number, not {Q(text)}");

    public void NotAnInteger(SourceLocation at, string key, string text, int min, int max) =>
        Error("SP0208", at, string.Create(CultureInfo.InvariantCulture, $"{Q(key)} must be a whole number from {min} to {max}, not {Q(text)}"));

    public void BadChoice(SourceLocation at, string key, string text, IEnumerable<string> choices, string? suggestion) =>
        Error("SP0209", at, $"{Q(key)} must be one of {string.Join(", ", choices)}, not {Q(text)}{Suggest(suggestion)}");

    public void BadDelimiter(SourceLocation at, string text) => Error("SP0210", at, $"delimiter must be ',', ';' or '\\t' (tab), not {Q(text)}");

    public void BadDecimal(SourceLocation at, string text) => Error("SP0211", at, $"decimal must be '.' or ',', not {Q(text)}");

    public void DecimalEqualsDelimiter(SourceLocation at) => Error("SP0212", at, "the decimal mark cannot be the same as the delimiter; use delimiter ';' with decimal ','");

    public void BadSha256(SourceLocation at, string text) => Error("SP0213", at, $"sha256 must be 64 hexadecimal digits, not {Q(text)}");

    public void UnknownDataset(SourceLocation at, string name, string? suggestion) => Error("SP0214", at, $"unknown dataset {Q(name)}{Suggest(suggestion)}");

    public void DatasetNeeded(SourceLocation at) => Error("SP0215", at, "the header declares several datasets; say which one with 'data:'");

    public void UnknownFactor(SourceLocation at, string name, string? suggestion) => Error("SP0216", at, $"unknown factor {Q(name)}{Suggest(suggestion)}");

    public void ResponseNeeded(SourceLocation at) => Error("SP0217", at, "no response column: set 'response' in the block or in the header");

    public void FactorsNeeded(SourceLocation at, string kind) => Error("SP0218", at, $"the {kind} block needs at least one factor: set 'factors' here or declare factors in the header");

    public void DuplicateBlockId(SourceLocation at, string id, int firstLine) =>
        Error("SP0219", at, string.Create(CultureInfo.InvariantCulture, $"duplicate block id {Q(id)} (first used on line {firstLine + 1})"));

    public void BadBlockId(SourceLocation at, string id) => Error("SP0220", at, $"block id {Q(id)} must start with a letter and use only letters, digits, '_' and '-'");

    public void TooManyFactorsForOneWay(SourceLocation at, string kind) => Error("SP0221", at, $"this version's {kind} handles one factor only");

    public void DuplicateFactorInList(SourceLocation at, string name) => Error("SP0222", at, $"factor {Q(name)} is listed twice");

    public void EmptyTitle(SourceLocation at) => Error("SP0223", at, "the title must not be empty");

    public void DuplicateLevel(SourceLocation at, string factor, string level) => Error("SP0224", at, $"level {Q(level)} is listed twice for factor {Q(factor)}");

    public void UnknownLevelInFilter(SourceLocation at, string factor, string level, string? suggestion) =>
        Error("SP0225", at, $"factor {Q(factor)} has no level {Q(level)}{Suggest(suggestion)}");

    public void TemplateNotAllowed(SourceLocation at) => Error("SP0226", at, "custom report templates are not supported in this version; remove 'template'");

    public void ReservedDatasetName(SourceLocation at, string name) => Error("SP0227", at, $"dataset name {Q(name)} must start with a letter and use only letters, digits, '_' and '-'");

    public void TooManyBlocks(SourceLocation at, int max) =>
        Error("SP0228", at, string.Create(CultureInfo.InvariantCulture, $"a study may hold at most {max} analysis blocks"));

    public void OfMustComeBefore(SourceLocation at, string id, string kind) => Error("SP0229", at, $"block {Q(id)} comes after this {kind} block; 'of' must name an anova block above it");

    public void UnknownOf(SourceLocation at, string id, string? suggestion) => Error("SP0230", at, $"no anova block with id {Q(id)} above this block{Suggest(suggestion)}");

    public void OfNotAnova(SourceLocation at, string id, string kind) => Error("SP0231", at, $"'of' must name an anova block; {Q(id)} is a {kind} block");

    public void NoAnovaAbove(SourceLocation at, string kind) => Error("SP0232", at, $"the {kind} block checks an anova block, but there is none above it; add one or name it with 'of'");

    public void KeyTakenFromAnova(SourceLocation at, string key, string anovaId) => Error("SP0233", at, $"{Q(key)} is taken from the anova block {Q(anovaId)} here; set it there");

    public void FactorNotInAnova(SourceLocation at, string factor, string anovaId, string? suggestion) => Error("SP0234", at, $"factor {Q(factor)} is not in the anova block {Q(anovaId)}{Suggest(suggestion)}");

    public void FactorChoiceNeeded(SourceLocation at, string anovaId) => Error("SP0235", at, $"the anova block {Q(anovaId)} has several factors; say which one to compare with 'factor'");

    public void UnknownControl(SourceLocation at, string level, string factor, string? suggestion) => Error("SP0236", at, $"control {Q(level)} is not a level of factor {Q(factor)} with data{Suggest(suggestion)}");

    public void OneFactorOnly(SourceLocation at, string kind) => Error("SP0237", at, $"the {kind} block compares the levels of one factor; name it with 'factor'");

    public void PowerNeeds(SourceLocation at, string what) => Error("SP0238", at, $"the power block needs {what}");

    public void PowerTargetRange(SourceLocation at, string text) => Error("SP0239", at, $"'target' is a power strictly between 0 and 1, not {Q(text)}");

    public void KeyNotUsed(SourceLocation at, string key, string kind) => Error("SP0240", at, $"{Q(key)} has no use in a {kind} block, which reads no data");

    public void FigureSource(SourceLocation at, string type, string kinds, string id, string kind) => Error("SP0241", at, $"{A(type)} {type} figure is drawn from {A(kinds)} {kinds} block; {Q(id)} is {A(kind)} {kind} block");

    public void UnknownMethodsOf(SourceLocation at, string id, string? suggestion) => Error("SP0243", at, $"no analysis block with id {Q(id)} to describe{Suggest(suggestion)}");

    public void MethodsOfNotDescribed(SourceLocation at, string id, string kind) => Error("SP0244", at, $"{Q(id)} is a {kind} block, which a methods block does not describe; name analysis blocks");

    public void DuplicateInList(SourceLocation at, string key, string item) => Error("SP0245", at, $"{Q(item)} is listed twice in {Q(key)}");

    public void FigureNoSource(SourceLocation at, string type, string kinds) => Error("SP0242", at, $"{A(type)} {type} figure is drawn from {A(kinds)} {kinds} block, and there is none above this one");

    private static string A(string word) => word.Length > 0 && "aeio".Contains(word[0], StringComparison.Ordinal) ? "an" : "a";

    // ---- data (SP03xx) ----
    public void PathAbsolute(SourceLocation at, string path) => Error("SP0301", at, $"data path {Q(path)} must be relative to the study file");

    public void PathEscapes(SourceLocation at, string path) => Error("SP0302", at, $"data path {Q(path)} leads outside the study's folder");

    public void HashMismatch(SourceLocation at, string path, string expected, string actual) =>
        Error("SP0303", at, $"{Q(path)} has SHA-256 {actual}, but the header pins {expected}");

    public void EmptyDataFile(SourceLocation at) => Error("SP0304", at, "the data file is empty; the first line must name the columns");

    public void NoDataRows(SourceLocation at) => Error("SP0305", at, "the data file has a header line but no data rows");

    public void DuplicateColumn(SourceLocation at, string column, int firstCol) =>
        Error("SP0306", at, string.Create(CultureInfo.InvariantCulture, $"column {Q(column)} appears twice in the header line (first at column {firstCol + 1})"));

    public void EmptyColumnName(SourceLocation at, int index) =>
        Error("SP0307", at, string.Create(CultureInfo.InvariantCulture, $"column {index + 1} of the header line has no name"));

    public void UnknownColumn(SourceLocation at, string column, string dataPath, string? suggestion) =>
        Error("SP0308", at, $"column {Q(column)} is not in {Q(dataPath)}{Suggest(suggestion)}");

    public void RaggedRow(SourceLocation at, int got, int expected, int rows = 1, bool decimalCommas = false) =>
        Error("SP0309", at, string.Create(CultureInfo.InvariantCulture, $"this row has {got} fields but the header line has {expected}{rows switch { <= 1 => string.Empty, 2 => "; 1 more row has a different number of fields too", _ => $"; {rows - 1} more rows have a different number of fields too" }}{(decimalCommas ? "; if the numbers use decimal commas, set 'decimal: \",\"' and 'delimiter: \";\"' for this dataset (and separate the file's columns with ';')" : string.Empty)}"));

    public void UnterminatedQuote(SourceLocation at) => Error("SP0310", at, "a quoted field is not closed");

    public void NotNumeric(SourceLocation at, string text, string column, int cells = 1) => Error("SP0311", at, $"{Q(text)} is not a number in column {Q(column)}{MoreCells(cells)}");

    public void WrongDelimiter(SourceLocation at, string dataset, char declared, char likely) =>
        Error("SP0319", at, $"the columns of dataset {Q(dataset)} are separated by {CharName(likely)}, not {CharName(declared)}; add 'delimiter: \"{(likely == '\t' ? "\\t" : likely.ToString())}\"' under the dataset");

    private static string CharName(char c) => c switch
    {
        '\t' => "tabs",
        ';' => "semicolons (';')",
        ',' => "commas (',')",
        '|' => "bars ('|')",
        _ => Q(c.ToString()),
    };

    private static string MoreCells(int cells) => cells switch
    {
        <= 1 => string.Empty,
        2 => "; 1 more cell in this column has the same problem",
        _ => string.Create(CultureInfo.InvariantCulture, $"; {cells - 1} more cells in this column have the same problem"),
    };

    public void NotFiniteNumber(SourceLocation at, string text, string column, int cells = 1) =>
        Error("SP0312", at, $"{Q(text)} is not a finite number in column {Q(column)}{MoreCells(cells)}; mark missing values with one of the 'missing' strings");

    public void DecimalCommaHint(SourceLocation at, string text, string column, int cells = 1) =>
        Error("SP0313", at, $"{Q(text)} is not a number in column {Q(column)}{(cells > 1 ? string.Create(CultureInfo.InvariantCulture, $" ({cells} such cells in this file)") : string.Empty)}; if the file uses decimal commas, set 'decimal: \",\"' (and a ';' delimiter) for this dataset");

    public void UndeclaredLevel(SourceLocation at, string level, string factor, string? suggestion, int rows = 1) =>
        Error("SP0314", at, $"{Q(level)} is not a declared level of factor {Q(factor)}{Rows(rows)}{Suggest(suggestion)}");

    public void ManyUndeclaredLevels(SourceLocation at, string factor, string column, IReadOnlyList<string> examples, int count) =>
        Error("SP0355", at, string.Create(CultureInfo.InvariantCulture, $"{count} different values of column {Q(column)} are not declared levels of factor {Q(factor)} ({string.Join(", ", examples.Select(Q))}, …); is 'column' right, and are the factor's 'levels' complete?"));

    public void DeclaredLevelNotInData(SourceLocation at, string level, string factor, string dataLevel, int rows) =>
        Error("SP0318", at, string.Create(CultureInfo.InvariantCulture, $"level {Q(level)} of factor {Q(factor)} declared here has no rows; the data have {Q(dataLevel)} ({rows} {(rows == 1 ? "row" : "rows")}): correct the spelling here or in the data"));

    private static string Rows(int rows) => rows <= 1 ? string.Empty : string.Create(CultureInfo.InvariantCulture, $" ({rows} rows; the first is here)");

    public void AbsentLevel(SourceLocation at, string level, string factor, string dataPath) =>
        Error("SP0315", at, $"declared level {Q(level)} of factor {Q(factor)} has no rows in {Q(dataPath)}");

    public void NumberOutOfRange(SourceLocation at, string text, string column, int cells = 1) =>
        Error("SP0316", at, $"{Q(text)} in column {Q(column)} is too large to compute with{MoreCells(cells)}");

    public void RowsTooMany(SourceLocation at, long max) =>
        Error("SP0317", at, string.Create(CultureInfo.InvariantCulture, $"the data file has more than {max} rows, the most this version loads"));

    // ---- limits on every input (SP0360-SP0379 data, SP0113-SP0119 study file) ----

    public void QuoteInUnquotedField(SourceLocation at) =>
        Error("SP0360", at, "a quote inside an unquoted field; quote the whole field and double the quote (\"a\"\"b\")");

    public void TextAfterClosingQuote(SourceLocation at) =>
        Error("SP0361", at, "text after the closing quote of a quoted field; double a quote inside a quoted field (\"\")");

    public void FieldTooLong(SourceLocation at, long max) =>
        Error("SP0362", at, string.Create(CultureInfo.InvariantCulture, $"this field is longer than {max} bytes ({max / (1024 * 1024)} MiB), the most a cell may hold"));

    public void TooManyLevels(SourceLocation at, string factor, string column, int max) =>
        Error("SP0363", at, string.Create(CultureInfo.InvariantCulture, $"factor {Q(factor)} has more than {max} levels (distinct values of column {Q(column)}), the most a factor may have; is the column an identifier or a measurement?"));

    public void SpreadsheetExpandsTooMuch(SourceLocation at, string path, string part, long max) =>
        Error("SP0364", at, string.Create(CultureInfo.InvariantCulture, $"{Q(path)} expands to more than {max} bytes ({max / (1024 * 1024)} MiB) by its part {Q(part)}, the most this version reads from a spreadsheet"));

    public void SpreadsheetTooManyCells(SourceLocation at, string path, string sheet, long max) =>
        Error("SP0365", at, string.Create(CultureInfo.InvariantCulture, $"sheet {Q(sheet)} of {Q(path)} has more than {max} cells with values, the most this version reads from a spreadsheet; give a 'range'"));

    public void QueryTimedOut(SourceLocation at, string dataset, int seconds) =>
        Error("SP0366", at, string.Create(CultureInfo.InvariantCulture, $"the query of dataset {Q(dataset)} ran longer than {seconds} s and was stopped; simplify it, or raise the dataset's 'timeout' (seconds)"));

    public void QueryTooManyRows(SourceLocation at, string dataset, long max) =>
        Error("SP0367", at, string.Create(CultureInfo.InvariantCulture, $"the query of dataset {Q(dataset)} returns more than {max} rows, the most this version loads; aggregate in the query or use 'aggregate: true'"));

    public void NumberTooSmall(SourceLocation at, string text, string column, int cells = 1) =>
        Error("SP0368", at, $"{Q(text)} in column {Q(column)}{MoreCells(cells)} is too close to zero to compute with (nearer to 0 than 1e-300, it would be read as 0); rescale the column");

    public void ValueTooSmall(SourceLocation at, string text, string column, string where) =>
        Error("SP0369", at, $"{Q(text)} in column {Q(column)} ({where}) is too close to zero to compute with (nearer to 0 than 1e-300, it would be read as 0); rescale the column");

    public void InvisibleCharacter(SourceLocation at, string level, string factor, string character) =>
        Error("SP0370", at, $"level {Q(level)} of factor {Q(factor)} contains the invisible character {character}; remove it, or two levels could look the same");

    public void MarkdownTooDeep(SourceLocation at, int max) =>
        Error("SP0113", at, string.Create(CultureInfo.InvariantCulture, $"the text is nested more than {max} levels deep here (block quotes, lists, emphasis or links inside each other); flatten it"));

    public void HeaderNumberTooSmall(SourceLocation at, string key, string text) =>
        Error("SP0114", at, $"{Q(key)} is {Q(text)}, too close to zero to compute with (nearer to 0 than 1e-300, it would be read as 0)");

    public void HeaderInvisibleCharacter(SourceLocation at, string level, string factor, string character) =>
        Error("SP0115", at, $"declared level {Q(level)} of factor {Q(factor)} contains the invisible character {character}; remove it");

    // ---- other data sources: spreadsheets, databases, Parquet (SP032x-SP034x) ----
    public void SourceKeyNotApplicable(SourceLocation at, string key, string dataset, string applies) =>
        Error("SP0320", at, $"{Q(key)} of dataset {Q(dataset)} applies only to {applies}");

    public void QueryNeeded(SourceLocation at, string dataset) =>
        Error("SP0321", at, $"dataset {Q(dataset)} is a database: give the table to read as 'query', e.g. query: \"select * from plots\"");

    public void BadCellRange(SourceLocation at, string text) =>
        Error("SP0322", at, $"{Q(text)} is not a cell range; write it as two corners, e.g. A1:F40");

    public void NoSuchSheet(SourceLocation at, string sheet, string path, IEnumerable<string> sheets, string? suggestion) =>
        Error("SP0323", at, $"{Q(path)} has no sheet {Q(sheet)}{Suggest(suggestion)} (sheets: {string.Join(", ", sheets)})");

    public void NotASpreadsheet(SourceLocation at, string path, string reason) =>
        Error("SP0324", at, $"cannot read {Q(path)} as a spreadsheet (.xlsx): {reason}");

    public void EmptySheet(SourceLocation at, string sheet) =>
        Error("SP0325", at, $"sheet {Q(sheet)} has no cells in the range read; the first row read must name the columns");

    public void NoSheetRows(SourceLocation at, string sheet) =>
        Error("SP0326", at, $"sheet {Q(sheet)} has a row of column names but no data rows");

    public void CellNotNumeric(SourceLocation at, string text, string column, string cell) =>
        Error("SP0327", at, $"{Q(text)} is not a number in column {Q(column)} (cell {cell})");

    public void CellError(SourceLocation at, string text, string column, string cell) =>
        Error("SP0328", at, $"cell {cell} in column {Q(column)} holds the spreadsheet error {text}; fix the formula or mark the cell missing");

    public void SheetColumnUnnamed(SourceLocation at, string cell) =>
        Error("SP0329", at, $"the column-name cell {cell} is empty");

    public void SheetDuplicateColumn(SourceLocation at, string column, string cell, string firstCell) =>
        Error("SP0330", at, $"column {Q(column)} at {cell} is named twice (first at {firstCell})");

    public void QueryFailed(SourceLocation at, string dataset, string message) =>
        Error("SP0331", at, $"the query of dataset {Q(dataset)} failed: {message}");

    public void DatabaseUnreadable(SourceLocation at, string path, string message) =>
        Error("SP0332", at, $"cannot open {Q(path)} as a database: {message}");

    public void UnknownQueryColumn(SourceLocation at, string column, string dataset, IEnumerable<string> columns, string? suggestion) =>
        Error("SP0333", at, $"column {Q(column)} is not in the result of the query of dataset {Q(dataset)}{Suggest(suggestion)} (its columns: {string.Join(", ", columns)})");

    public void QueryNoRows(SourceLocation at, string dataset) =>
        Error("SP0334", at, $"the query of dataset {Q(dataset)} returned no rows");

    public void QueryDuplicateColumn(SourceLocation at, string dataset, string column) =>
        Error("SP0335", at, $"the query of dataset {Q(dataset)} returns column {Q(column)} twice; give each column its own name with 'as'");

    public void ValueNotNumeric(SourceLocation at, string text, string column, string where) =>
        Error("SP0336", at, $"{Q(text)} is not a number in column {Q(column)} ({where})");

    public void ValueNotFinite(SourceLocation at, string text, string column, string where) =>
        Error("SP0337", at, $"{Q(text)} is not a finite number in column {Q(column)} ({where}); store missing values as NULL");

    public void AggregateProblem(SourceLocation at, string dataset, string why) =>
        Error("SP0338", at, $"dataset {Q(dataset)}: {why}");

    public void ParquetUnreadable(SourceLocation at, string path, string message) =>
        Error("SP0339", at, $"cannot read {Q(path)} as a Parquet file: {message}");

    // ---- PostgreSQL server (SP0030-SP0034 connection, SP0380-SP0389 data); never a user name or password in the text ----
    public void ServerUnreachable(SourceLocation at, string server, string reason) =>
        Error("SP0030", at, $"cannot connect to the PostgreSQL server {server}: {reason}");

    public void ServerAuthenticationFailed(SourceLocation at, string server, string reason) =>
        Error("SP0031", at, $"the PostgreSQL server {server} refused the credentials ({reason}); set PGUSER and PGPASSWORD, or the password file (~/.pgpass or PGPASSFILE), before building");

    public void ServerUnknownDatabase(SourceLocation at, string database, string server) =>
        Error("SP0032", at, $"the PostgreSQL server {server} has no database {Q(database)}");

    public void ServerTimeLimit(SourceLocation at, string dataset, int seconds) =>
        Error("SP0033", at, string.Create(CultureInfo.InvariantCulture, $"the query of dataset {Q(dataset)} ran longer than the time limit of {seconds} s and was cancelled by the server"));

    public void ServerTlsFailed(SourceLocation at, string server, string reason) =>
        Error("SP0034", at, $"cannot open a TLS connection to the PostgreSQL server {server}: {reason}");

    public void ServerQueryFailed(SourceLocation at, string dataset, string message, int? position) =>
        Error("SP0380", at, $"the query of dataset {Q(dataset)} failed: {message}" + (position is { } p ? string.Create(CultureInfo.InvariantCulture, $" (at character {p} of the query)") : string.Empty));

    public void ServerReadOnly(SourceLocation at, string dataset, string message) =>
        Error("SP0381", at, $"the query of dataset {Q(dataset)} tried to change the database, and a study only reads: {message}");

    public void ServerMultipleStatements(SourceLocation at, string dataset) =>
        Error("SP0382", at, $"the query of dataset {Q(dataset)} holds more than one statement; give one SELECT (or WITH ... SELECT) without ';' between statements");

    public void ServerTooManyRows(SourceLocation at, string dataset, long max) =>
        Error("SP0383", at, string.Create(CultureInfo.InvariantCulture, $"the query of dataset {Q(dataset)} returns more than {max} rows, the most loaded from a server; add 'aggregate: true' to let the server summarise the rows, or narrow the query"));

    // ---- data confinement and text safety (SP0020-SP0029 files, SP0340-SP0354 data) ----
    public void DataPathNotRegular(SourceLocation at, string path, string kind) =>
        Error("SP0020", at, $"data path {Q(path)} is {kind}, not a regular file; only regular files are read as data");

    public void DataPathLinkLoop(SourceLocation at, string path, int max) =>
        Error("SP0021", at, string.Create(CultureInfo.InvariantCulture, $"data path {Q(path)} goes through more than {max} symbolic links; is there a loop of links?"));

    public void LevelNotUtf8(SourceLocation at, string column, string detail, string? where) =>
        Error("SP0341", at, $"the text in column {Q(column)}{Where(where)} is not valid UTF-8 ({detail})");

    public void PathPatternCharacter(SourceLocation at, string path, char character) =>
        Error("SP0342", at, $"data path {Q(path)} contains '{character}', which the Parquet reader takes as a file-name pattern; rename the file or folder without '*', '?' or '['");

    public void DatabaseSideFile(SourceLocation at, string path, string side) =>
        Error("SP0343", at, $"{Q(path)} has a write-ahead log beside it ({Q(side)}), which the database would also read but which is not hashed; checkpoint the database (close it in the program that wrote it) so the log is merged and removed");

    private static string Where(string? where) => where is null ? string.Empty : " (" + where + ")";

    // ---- references (SP04xx) ----
    public void UnknownReference(SourceLocation at, string text, string? suggestion) => Error("SP0401", at, $"unknown reference {Q(text)}{Suggest(suggestion)}");

    public void AmbiguousReference(SourceLocation at, string text, IEnumerable<string> candidates) =>
        Error("SP0402", at, $"reference {Q(text)} is ambiguous; write one of: {string.Join(", ", candidates)}");

    public void BadReferenceSyntax(SourceLocation at, string text, string why) => Error("SP0403", at, $"cannot read reference {Q(text)}: {why}");

    public void UnclosedReference(SourceLocation at, int maxLength) =>
        Error("SP0404", at, string.Create(CultureInfo.InvariantCulture, $"a reference '[=' is not closed with ']' (a reference is at most {maxLength} characters)"));

    public void UndefinedReference(SourceLocation at, string text, string reason) => Error("SP0405", at, $"reference {Q(text)} has no value: {reason}");

    public void FunctionOnNonValue(SourceLocation at, string word, string words, string path, string what, string? example) =>
        Error("SP0409", at, $"{Q(word)} formats one value, but {Q(path)} names {what}; add the statistic to the path{(example is null ? string.Empty : $", for example [={example}{words}]")}");

    public void UnknownBlockReference(SourceLocation at, string id, string? suggestion) => Error("SP0406", at, $"no block with id {Q(id)}{Suggest(suggestion)}");

    public void UnknownReferenceFunction(SourceLocation at, string name, string? suggestion, IEnumerable<string> known) =>
        Error("SP0407", at, $"unknown formatting {Q(name)}{Suggest(suggestion)} (known: {string.Join(", ", known)})");

    public void BadReferenceFunction(SourceLocation at, string name, string why) => Error("SP0408", at, $"formatting {Q(name)} does not apply here: {why}");

    public void ReferenceReadAsLinkDefinition(SourceLocation at, string label) =>
        Error("SP0122", at, $"'[{label}]:' at the start of a line is read as a Markdown link definition, so the line would not be shown; put a word before the reference or drop the ':' after it");

    /// <summary>The brace form of earlier versions, with the reference form to write instead (null when its inside is no path).</summary>
    public void OldReferenceForm(SourceLocation at, string written, string? rewritten)
    {
        const int max = 80;
        var shown = written.Length <= max ? written : written[..max] + "…";
        Error("SP0121", at, $"{Q(shown)} is not a reference form; write {rewritten ?? "[=block.statistic], for example [=main.dose.f]"}");
    }

    // ---- analysis (SP05xx) ----
    public void TooFewGroups(SourceLocation at, string factor, int groups) =>
        Error("SP0501", at, string.Create(CultureInfo.InvariantCulture, $"factor {Q(factor)} has {StudyPress.Charts.NumberText.Count(groups, "level")} with data here; a comparison needs at least 2"));

    public void NoRowsSelected(SourceLocation at) => Error("SP0502", at, "no rows are left after dropping missing values and applying 'where'");

    public void NoResidualDf(SourceLocation at) => Error("SP0503", at, "every group has a single observation, so there is no residual variance to test against");

    public void EmptyCell(SourceLocation at, string cell) => Error("SP0504", at, $"the cell {cell} has no observations, so the interaction cannot be estimated; set 'interaction: false' or collect data for it");

    public void DesignProblem(SourceLocation at, string message) => Error("SP0505", at, message);

    public void ContradictoryNesting(SourceLocation at, string message, string name) =>
        Error("SP0390", at, $"{message}; if the codes of {Q(name)} start again under each parent (1, 2, 3 in every one), write 'codes: restart' under {Q(name)}, otherwise correct the data");

    public void VariesWithinWholePlot(SourceLocation at, string name, string plot, string first, int firstLine, string second, int secondLine, bool isBlock) =>
        Error("SP0391", at, string.Create(CultureInfo.InvariantCulture, $"{Q(name)} varies within whole plot {Q(plot)} ({Q(first)} on data line {firstLine}, {Q(second)} on data line {secondLine}), but {(isBlock ? "a whole plot lies in one block" : "it is declared applied to whole plots (plot: whole)")}; correct the data or the plot level"));

    public void LayoutFactorSingleLevel(SourceLocation at, string name, string what, string level) =>
        Error("SP0392", at, $"{Q(name)} is a {what} with a single level{(level.Length > 0 ? $" ({Q(level)})" : string.Empty)} in the rows analysed, so its variance cannot be estimated; declare it a treatment, or analyse data with more than one {what.Replace("random factor", "level", StringComparison.Ordinal)}");

    public void ClassicalNeedsBalance(SourceLocation at, string reason) =>
        Error("SP0393", at, $"'fit: classical' needs balanced data, but {reason}; write 'fit: reml' (or leave 'fit' out) to fit the mixed model, which keeps unbalanced data, or complete the data");

    public void DesignDataProblem(SourceLocation at, string message) => Error("SP0394", at, message);

    public void DesignNeedsRows(SourceLocation at, string dataset) =>
        Error("SP0395", at, $"the header declares a layout (blocks, plots, random or nested factors), whose analysis needs the rows, and the database aggregates {Q(dataset)} (aggregate: true); declare a second dataset on the same file without 'aggregate' for this block");

    public void DesignOptionUnavailable(SourceLocation at, string option, string instead) =>
        Error("SP0396", at, $"{Q(option)} is not available in an anova block of a study with a declared layout in this version; {instead}");

    public void MixedModelTooLarge(SourceLocation at, string message) =>
        Error("SP0398", at, $"{message}; analyse one row per plot (the mean of its sub-samples), or balance the data so that the classical strata apply");

    public void DesignViewUnavailable(SourceLocation at, string kind, string of, string why) =>
        Error("SP0397", at, $"a '{kind}' block cannot analyse {Q(of)}: {why}");


    public void TransformDomain(SourceLocation at, string transform, string message) => Error("SP0506", at, $"transform {Q(transform)} cannot be applied: {message}");

    public void TransformRow(SourceLocation at, string transform, string column, string value, string need) =>
        Error("SP0507", at, $"transform {Q(transform)} needs {need} values, but column {Q(column)} has {value} here");

    public void OrderNotNumeric(SourceLocation at, string column) => Error("SP0508", at, $"run-order column {Q(column)} must hold numbers");

    public void ReplicatedBlockCell(SourceLocation at, string blocks, string block, string factor, string level, int count) =>
        Error("SP0509", at, string.Create(CultureInfo.InvariantCulture, $"the friedman test needs one value per block and treatment, but {blocks} {Q(block)} has {count} values for {factor} {Q(level)}; summarise replicates into one value per cell first (for example their mean, in the data), or analyse the block as a factor with anova"));

    public void TooFewCompleteBlocks(SourceLocation at, string blocks, int complete, int dropped) =>
        Error("SP0510", at, string.Create(CultureInfo.InvariantCulture, $"the friedman test needs at least 2 complete blocks (a value for every treatment); {blocks} has {complete} complete and {dropped} incomplete"));

    // ---- repeated measures (SP0263-SP0269 keys, SP0511-SP0519 analysis) ----
    public void RepeatedFactorsKey(SourceLocation at) =>
        Error("SP0263", at, "a repeated block names its factors with 'subject', 'within' and 'between'; remove 'factors'");

    public void RepeatedFactorTwice(SourceLocation at, string name, string first, string second) =>
        Error("SP0264", at, first == second
            ? $"factor {Q(name)} is listed twice in {Q(second)}"
            : $"factor {Q(name)} is already the block's {Q(first)}; 'subject', 'within' and 'between' name different factors (a factor is either measured within each subject or splits the subjects into groups)");

    public void RepeatedCompareNotWithin(SourceLocation at, string name, string? suggestion) =>
        Error("SP0265", at, $"'compare' names a within-subject factor of this block (one listed in 'within'), but {Q(name)} is not one{Suggest(suggestion)}");

    public void RepeatedAdjustWithoutCompare(SourceLocation at) =>
        Error("SP0266", at, "'adjust' sets the adjustment of the paired comparisons, which 'compare' asks for; add 'compare: FACTOR' (a within-subject factor) or remove 'adjust'");

    public void RepeatedWideColumns(SourceLocation at, string what) =>
        Error("SP0267", at, "'columns' names the measurement columns of wide data: " + what);

    public void RepeatedWideOneWithin(SourceLocation at) =>
        Error("SP0268", at, "with 'columns' (wide data), 'within' names the one factor the measurement columns form; list a single name");

    public void RepeatedRanksLayout(SourceLocation at, string reason) =>
        Error("SP0295", at, $"'ranks: always' asks for the Friedman test, which ranks each subject's measurements over the levels of one within factor with no between-subject groups, on complete subjects; {reason}. Write 'ranks: auto' or 'never', or analyse that factor in a 'friedman' block");

    public void ResponseForm(SourceLocation at) =>
        Error("SP0290", at, "'response' is a column name or a mapping such as '{column: thickness_um, label: Coating thickness, unit: µm}'");

    public void ResponseTextEmpty(SourceLocation at, string key) =>
        Error("SP0291", at, $"the response's {Q(key)} must not be empty; remove the key or write the text");

    public void RepeatedSubjectInTwoGroups(SourceLocation at, string message) =>
        Error("SP0511", at, message + "; correct the data, or write 'labels: per-group' if subjects are numbered again within each group");

    public void RepeatedDesignProblem(SourceLocation at, string message) =>
        Error("SP0512", at, message);

    public void RepeatedWithinDoesNotVary(SourceLocation at, string name, string subject) =>
        Error("SP0513", at, $"{Q(name)} does not vary within any {Q(subject)}: each subject is measured under one level only, so it is a between-subject factor; move it to 'between'");

    public void RepeatedTooFewComplete(SourceLocation at, string subject, int complete, int dropped, string reason) =>
        Error("SP0514", at, string.Create(CultureInfo.InvariantCulture, $"the classical repeated-measures analysis needs complete subjects, and {Q(subject)} has {complete} complete and {dropped} incomplete: {reason}; write 'fit: reml' to analyse every measurement with the mixed model"));

    public void RepeatedMixedModelProblem(SourceLocation at, string message) =>
        Error("SP0515", at, "the mixed-model route cannot be fitted: " + message + "; write 'fit: classical' to analyse the complete subjects only");

    // ---- analysis of covariance (SP0270-SP0274 keys, SP0520-SP0524 analysis) ----
    public void CovariatesWith(SourceLocation at, string other, string why) =>
        Error("SP0270", at, $"'covariates' cannot be combined with {Q(other)}: {why}");

    public void CovariatesOnLayout(SourceLocation at, string factor, string why) =>
        Error("SP0271", at, $"'covariates' cannot be used here: factor {Q(factor)} {why}");

    public void CovariatesOnAggregate(SourceLocation at, string dataset) =>
        Error("SP0272", at, $"'covariates' needs each row's covariate value, and the database aggregates dataset {Q(dataset)} into per-cell statistics (aggregate: true), which keep no covariate; declare a second dataset on the same file without 'aggregate' for this block");

    public void CovariateName(SourceLocation at, string column, string what) =>
        Error("SP0273", at, $"covariate {Q(column)} is {what}; a covariate is a further numeric column measured on each unit (list each once, and neither the response nor a factor)");

    public void CovariatesEmpty(SourceLocation at) =>
        Error("SP0274", at, "'covariates' lists no column; name one numeric column or a list of them, or remove the key");

    public void AncovaCannotFit(SourceLocation at, string message) =>
        Error("SP0520", at, $"the analysis of covariance cannot be fitted: {message}");

    public void AncovaPostHocMethod(SourceLocation at, string method) =>
        Error("SP0521", at, $"the comparisons of an analysis of covariance compare adjusted means, and {Q(method)} estimates a variance per group of raw values, which would ignore the covariates; use 'method: tukey' (the default), 'holm' or 'bonferroni'");

    public void AncovaPostHocBlock(SourceLocation at, string factor) =>
        Error("SP0523", at, $"{Q(factor)} is a block of the analysis of covariance: its levels are units, not treatments to compare, so its adjusted means are not compared; name a treatment factor");

    public void AncovaCovariateMissing(SourceLocation at, string column) =>
        Error("SP0524", at, $"covariate {Q(column)} has no value in any selected row, so nothing is left to analyse; check the column or the block's 'where'");
    // ---- contrasts (SP0280-SP0284 keys, SP0530-SP0534 analysis) ----
    public void ContrastSumNotZero(SourceLocation at, string name, string sum) =>
        Error("SP0280", at, $"the coefficients of contrast {Q(name)} sum to {sum}, not 0; a contrast compares levels, so its coefficients must cancel (unlisted levels count as 0)");

    public void ContrastCoefficientRange(SourceLocation at, string name, string text) =>
        Error("SP0281", at, $"contrast {Q(name)} needs some coefficient other than 0, and every coefficient other than 0 between 0.000001 and 1000000 in size, not {Q(text)}; coefficients only weigh the levels against each other, so write them as e.g. 'A: 1, B: 1, C: -2'");

    public void ContrastsOneFamily(SourceLocation at) =>
        Error("SP0282", at, "a contrasts block asks for one family: 'compare' (named contrasts, each a map of level to coefficient) or 'trend' (polynomial trends over numeric levels, with 'values' when the level names are not numbers); for both, write two contrasts blocks");

    public void TooManyContrasts(SourceLocation at, int count, int max) =>
        Error("SP0283", at, string.Create(CultureInfo.InvariantCulture, $"'compare' lists {count} contrasts, and a contrasts block holds at most {max}; planned contrasts are few (a factor with k levels has k − 1 independent ones), so split the family or choose the contrasts that answer the study's questions"));

    public void TrendDegreeText(SourceLocation at, string text) =>
        Error("SP0284", at, $"'trend' is the highest polynomial degree (a whole number from 1) or 'true' for every degree the levels allow, not {Q(text)}");

    public void ContrastUnknownLevel(SourceLocation at, string level, string factor, string? suggestion) =>
        Error("SP0530", at, $"{Q(level)} is not a level of factor {Q(factor)} with data{Suggest(suggestion)}");

    public void TrendLevelWithoutNumber(SourceLocation at, string factor, string level) =>
        Error("SP0531", at, $"a trend needs a number for each level, and level {Q(level)} of factor {Q(factor)} has none (its name is not a number, and 'values' gives none); give every level with data its number with 'values' (a map of level to number)");

    public void TrendTooManyLevels(SourceLocation at, string factor, int levels, int max) =>
        Error("SP0532", at, string.Create(CultureInfo.InvariantCulture, $"factor {Q(factor)} has {levels} levels with data, and polynomial trends are fitted over at most {max} levels (polynomials of a higher degree describe nothing the data can show); compare chosen levels with 'compare', or group the levels"));

    public void TrendDegreeTooHigh(SourceLocation at, int degree, string factor, int levels) =>
        Error("SP0533", at, string.Create(CultureInfo.InvariantCulture, $"factor {Q(factor)} has {levels} levels with data, which allow polynomial trends up to degree {levels - 1}, not {degree}; write 'trend: {levels - 1}' or 'trend: true'"));

    public void TrendValuesRepeat(SourceLocation at, string factor, string level, string other, string value, string otherValue) =>
        Error("SP0534", at, $"levels {Q(other)} and {Q(level)} of factor {Q(factor)} have numbers ({otherValue} and {value}) that a trend cannot tell apart (equal, or closer than a billionth of the range of the numbers); give each level a distinct number");
    // ---- marginal means (SP0275-SP0279 keys, SP0525-SP0529 analysis) ----
    public void MarginalMeansAtIsBy(SourceLocation at, string factor) =>
        Error("SP0275", at, $"'at' names {Q(factor)}, which 'by' names too; the simple effects are those of the 'by' factor at each level of another factor");

    public void MarginalMeansAtWithCrossing(SourceLocation at, string atFactor) =>
        Error("SP0276", at, $"with 'at: {atFactor}', 'by' names the one factor whose simple effects are tested at each level of {Q(atFactor)}; remove the other names from 'by' (or remove 'at' for the means of the cells of their crossing)");

    public void MarginalMeansTooMany(SourceLocation at, string term, long count, int max) =>
        Error("SP0277", at, string.Create(CultureInfo.InvariantCulture, $"the means of {term} would be {count} (the product of the factors' numbers of levels); a 'marginal-means' table holds at most {max}: name fewer factors in 'by', or a factor with fewer levels"));

    public void MarginalMeansOfLayoutFactor(SourceLocation at, string factor, string role) =>
        Error("SP0278", at, $"{Q(factor)} is {role} of the layout, whose levels are a sample of units rather than treatments; marginal means are those of treatment factors (its variance component is in the anova block)");

    public void MarginalMeansAtNeedsBy(SourceLocation at, string atFactor, string anovaId, string blockKind = "anova") =>
        Error("SP0279", at, $"the {blockKind} block {Q(anovaId)} has several other factors; say with 'by' which one's simple effects to test at each level of {Q(atFactor)}");

    public void MarginalMeansAtWithoutInteraction(SourceLocation at, string atFactor, string anovaId) =>
        Error("SP0525", at, $"the anova block {Q(anovaId)} fits no interaction ('interaction: false'), so its model makes every effect the same at each level of {Q(atFactor)}; remove 'at' for the main-effect means, or fit the interaction");

    public void MarginalMeansNoSingleError(SourceLocation at, string term, string anovaId) =>
        Error("SP0527", at, $"{term} has no single error mean square in the anova block {Q(anovaId)} (its F test is approximate, against a combination of mean squares), so its marginal means would have no exact standard error");

    public void MarginalMeansMixedErrors(SourceLocation at, string what, string first, string second, string suggestion) =>
        Error("SP0528", at, $"{what} would mix two error terms ({first} and {second}): their standard errors need a combination of mean squares, which this version does not compute; {suggestion}");

    public void MarginalMeansNoTreatment(SourceLocation at, string anovaId) =>
        Error("SP0529", at, $"the anova block {Q(anovaId)} has no treatment factor (only blocks and random factors), so it has no marginal means; its variance components are in the anova block");

    // ---- marginal means of a repeated block (SP0292-SP0294 keys, SP0539-SP0540 analysis) ----
    public void MarginalMeansOfSubject(SourceLocation at, string factor, string repeatedId, IEnumerable<string> factors) =>
        Error("SP0292", at, $"{Q(factor)} is the subject of the repeated block {Q(repeatedId)} (the unit measured repeatedly), whose levels are a sample of units, not conditions with marginal means; name one of its within- or between-subject factors ({string.Join(", ", factors.Select(Q))})");

    public void FactorNotInRepeated(SourceLocation at, string factor, string repeatedId, string? suggestion) =>
        Error("SP0293", at, $"factor {Q(factor)} is not a within- or between-subject factor of the repeated block {Q(repeatedId)}{Suggest(suggestion)}");

    public void MarginalMeansCompareNeedsRepeated(SourceLocation at, string anovaId) =>
        Error("SP0294", at, $"'compare' asks for pairwise comparisons of the means of a repeated block, and {Q(anovaId)} is an anova block; compare its means with a posthoc block ('of: {anovaId}'), or its simple effects with 'at'");

    public void MarginalMeansRepeatedUnavailable(SourceLocation at, string repeatedId, string reason) =>
        Error("SP0539", at, $"the marginal means of the repeated block {Q(repeatedId)} cannot be estimated: {reason}");

    public void MarginalMeansCompareNotDefensible(SourceLocation at, string compare, string what, string reason) =>
        Error("SP0540", at, $"'compare: {compare}' cannot be applied to {what}: {reason}");

    /// <summary>SP0540 for Tukey over means whose differences do not rest on one error (from the mixed model, or from several strata).</summary>
    public void MarginalMeansTukeyNotOneError(SourceLocation at, string what, bool fromMixedModel) =>
        MarginalMeansCompareNotDefensible(at, "tukey", what, fromMixedModel
            ? "the means come from the mixed model (incomplete subjects kept), where each difference has its own standard error and Satterthwaite df, and Tukey's studentized range needs one error for all of them; write 'compare: holm' or 'compare: bonferroni'"
            : "their differences do not all rest on one error (differences between the levels of a between-subject factor rest on the subjects' error, those of a within-subject factor on its own error, and cells of a crossing mix both), and Tukey's studentized range needs one error for all of them; write 'compare: holm' or 'compare: bonferroni' (each pair on its own error, Satterthwaite df)");

    // ---- output (SP06xx) ----
    public void CannotWrite(SourceLocation at, string path, string reason) => Error("SP0601", at, $"cannot write {Q(path)}: {reason}");

    public void CannotPin(SourceLocation at, string name, string why) =>
        Error("SP0602", at, $"cannot pin the hash of {Q(name)}: {why}; write it as a map with 'path' and 'sha256'");

    public void RenamedReportKey(SourceLocation at, string old, string renamed) =>
        Error("SP0604", at, $"{Q(old)} is not a report key; write {Q(renamed)} ({(renamed == "p-decimals" ? "the decimals shown for p-values" : "the significant digits shown for other numbers")})");

    public void BadPLeadingZero(SourceLocation at, string value) =>
        Error("SP0605", at, $"'p-leading-zero' is {Q(value)}; write true (p-values as 0.035, < 0.001) or false (as .035, < .001)");

    public void BadStudyId(SourceLocation at, string id) => Error("SP0603", at, $"study id {Q(id)} must start with a letter and use only letters, digits, '_' and '-' (it names the study's figure files)");

    // ---- the trimmed-means kind (its own codes: SP0608, SP0609, SP0399) ----
    public void TrimOutOfRange(SourceLocation at, string text) =>
        Error("SP0608", at, $"'trim' is {Q(text)}; write the proportion trimmed from each tail, at least 0 and below 0.5 (0.2, the default, trims the lowest and the highest 20 % of each level's values; 0 compares ordinary means by Welch's test)");

    public void TooFewAfterTrimming(SourceLocation at, string factor, string level, int n, int trimmed, bool trimWritten) =>
        Error("SP0609", at, string.Create(CultureInfo.InvariantCulture, $"level {Q(level)} of factor {Q(factor)} has {StudyPress.Charts.NumberText.Count(n, "value")}, and trimming {trimmed} from each tail leaves {n - (2 * trimmed)}; each level needs at least 2 values left after trimming to estimate its spread: {(trimWritten ? "lower 'trim', or" : "write a smaller 'trim', or")} collect more values for this level"));

    public void ZeroWinsorizedVariance(SourceLocation at, string factor, bool trimWritten) =>
        Error("SP0399", at, $"every level of factor {Q(factor)} has zero winsorized variance: once the trimmed values are replaced by their nearest kept neighbours, the values within each level are all equal, so there is no spread to compare the trimmed means against; {(trimWritten ? "lower 'trim'" : "write a smaller 'trim'")}, or check the response column");

    // ---- Word and LaTeX exports (SP0620-SP0639) ----
    public void ExportFolderMissing(SourceLocation at, string option, string path, string folder) =>
        Error("SP0620", at, $"{option} {Q(path)}: the folder {Q(folder)} does not exist; create it first or name another place");

    public void ExportNotAFile(SourceLocation at, string path) =>
        Error("SP0621", at, $"--docx {Q(path)} is a folder; name the Word file to write (for example {Q(System.IO.Path.Combine(path, "report.docx"))})");

    public void ExportNotAFolder(SourceLocation at, string option, string path) =>
        Error("SP0622", at, $"{option} {Q(path)} is a file, but it names the folder to write into; name a folder");

    public void ExportWrongExtension(SourceLocation at, string path) =>
        Error("SP0623", at, $"--docx {Q(path)} must end in '.docx' (the file is a Word document; this also keeps a typing slip from overwriting the study or its data)");

    public void ExportCollision(SourceLocation at, string path, string first, string second) =>
        Error("SP0624", at, $"{Q(path)} would be written twice, as {first} and as {second}; name different places");

    // ---- comparison of builds (SP07xx) ----
    public void DiffUnknownKind(SourceLocation at, string path) =>
        Error("SP0701", at, $"cannot compare {Q(path)}: name a report (.html), a results manifest (.json) or a study file (.md)");

    public void DiffUnreadable(SourceLocation at, string path, string why) => Error("SP0702", at, $"cannot compare {Q(path)}: {why}");

    public void NotInGitRepository(SourceLocation at, string path) =>
        Error("SP0703", at, $"{Q(path)} is not inside a git repository, so --rev has nothing to read the older study from");

    public void GitRevisionMissing(SourceLocation at, string revision, string path, string why) =>
        Error("SP0704", at, $"revision {Q(revision)} has no {Q(path)} ({why})");

    public void GitUnavailable(SourceLocation at, string why) => Error("SP0705", at, $"cannot run git: {why}");

    public void DiffUsage(SourceLocation at, string message) => Error("SP0706", at, message);

    public void DiffDataMissingInRevision(SourceLocation at, string revision, string path) =>
        Error("SP0707", at, $"data file {Q(path)} does not exist at revision {Q(revision)}");

    public void DiffBadAlpha(SourceLocation at, string text) => Error("SP0708", at, $"--alpha must be a number between 0 and 1 (exclusive), not {Q(text)}");

    public void EquivalenceComparisonChoice(SourceLocation at, bool both) => Error("SP0285", at, both
        ? "write either 'pair' (two levels to compare) or 'reference' (the level every other level is compared with), not both"
        : "an equivalence block needs 'pair' (two levels to compare, e.g. [new, old]) or 'reference' (the level every other level is compared with)");

    public void EquivalencePair(SourceLocation at, int count) => Error("SP0286", at, count == 2
        ? "'pair' names the same level twice; name two different levels, e.g. [new, old] (the difference is first minus second)"
        : string.Create(CultureInfo.InvariantCulture, $"'pair' names two levels, e.g. [new, old] (the difference is first minus second), not {count}"));

    public void EquivalenceMargin(SourceLocation at, string text, bool nonInferiority) => Error("SP0287", at, nonInferiority
        ? $"a non-inferiority 'margin' is one positive number in the response's units (how much worse still counts as not inferior), not {(text is "a list" or "a mapping" ? text : Q(text))}"
        : $"'margin' is a positive number m (the interval -m to m) or a list [low, high] with low < 0 < high, in the response's units, not {(text is "a list" or "a mapping" or "this list" ? text : Q(text))}");

    public void EquivalenceBetterWithoutGoal(SourceLocation at) =>
        Error("SP0288", at, "'better' says which direction is better for a non-inferiority test; write 'goal: non-inferiority' too, or remove 'better' for a test of equivalence");

    public void DirectionMisplaced(SourceLocation at, string? method) => Error("SP0289", at, method is null
        ? "'direction' says which way the levels are expected to differ from the control; it needs 'control'"
        : $"a one-sided 'direction' is tested by Dunnett's comparisons with the control ('method: tukey' or 'auto'), not by {Q(method)}");

    public void EquivalenceUnknownLevel(SourceLocation at, string level, string factor, string? suggestion) =>
        Error("SP0535", at, $"{Q(level)} is not a level of factor {Q(factor)} with data{Suggest(suggestion)}");

    public void EquivalenceAlphaTooLarge(SourceLocation at, double alpha) =>
        Error("SP0537", at, string.Create(CultureInfo.InvariantCulture, $"an equivalence test needs the study's alpha below 0.5 (its interval has coverage 1 - 2 alpha), but alpha is {alpha}; lower 'alpha' in the header"));

    public void CovariateViewUnavailable(SourceLocation at, string kind, string of) =>
        Error("SP0538", at, $"a '{kind}' block works on the raw level means and the plain analysis of variance, but anova block {Q(of)} adjusts for covariates (an analysis of covariance); its adjusted means are in that block's report and a 'posthoc' block of it compares them; for this block, use an anova block without 'covariates'");

    public void DirectionNeedsPooledVariance(SourceLocation at, string test, string pText) =>
        Error("SP0536", at, $"a one-sided 'direction' is tested by Dunnett's comparisons on the pooled variance, but {test} finds the variances unequal ({pText}); write 'method: tukey' to use the pooled variance anyway, or remove 'direction' for the two-sided Games-Howell comparisons");

    // ---- posthoc of adjusted means: Dunnett with a control (SP0296-SP0297, SP0541-SP0542) ----
    public void DunnettNeedsControl(SourceLocation at) =>
        Error("SP0296", at, "'method: dunnett' compares every level with a control; name the control level with 'control', or choose a pairwise method ('tukey', 'holm', 'bonferroni')");

    /// <summary>SP0541: the multivariate t probabilities of Dunnett's comparisons of adjusted means missed the required accuracy within the work limit (many levels).</summary>
    public void DunnettAccuracyNotReached(SourceLocation at, string control, int comparisons, double reached, double required, string of, bool mixedModel = false) =>
        Error("SP0541", at, string.Create(CultureInfo.InvariantCulture, $"comparing {comparisons} {(mixedModel ? "marginal means of the mixed model" : "adjusted means")} with control {Q(control)} needs multivariate t probabilities in {comparisons} dimensions, and within the work limit their estimated error is {reached:G2}, above the {required:G2} the p-values need; compare fewer levels with the control (a 'where' in anova block {Q(of)} that keeps the levels of interest), or write 'method: holm' (or 'bonferroni') to compare each level with the control without the multivariate t"));

    /// <summary>Closest candidate within a small edit distance, for "did you mean".</summary>
    public static string? Nearest(string word, IEnumerable<string> candidates)
    {
        if (word.Length > 256)
        {
            return null; // no one mistypes a name this long, and the distance table would be large
        }

        string? best = null;
        var bestD = int.MaxValue;
        foreach (var c in candidates)
        {
            var d = Distance(word.ToLowerInvariant(), c.ToLowerInvariant());
            if (d < bestD)
            {
                bestD = d;
                best = c;
            }
        }

        var limit = Math.Max(1, Math.Min(3, (word.Length + 1) / 2));
        return bestD <= limit && bestD < word.Length ? best : null;
    }

    private static int Distance(string a, string b)
    {
        // Optimal string alignment distance (Levenshtein plus adjacent transpositions).
        var d = new int[a.Length + 1, b.Length + 1];
        for (var i = 0; i <= a.Length; i++)
        {
            d[i, 0] = i;
        }

        for (var j = 0; j <= b.Length; j++)
        {
            d[0, j] = j;
        }

        for (var i = 1; i <= a.Length; i++)
        {
            for (var j = 1; j <= b.Length; j++)
            {
                var cost = a[i - 1] == b[j - 1] ? 0 : 1;
                d[i, j] = Math.Min(Math.Min(d[i - 1, j] + 1, d[i, j - 1] + 1), d[i - 1, j - 1] + cost);
                if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1])
                {
                    d[i, j] = Math.Min(d[i, j], d[i - 2, j - 2] + 1);
                }
            }
        }

        return d[a.Length, b.Length];
    }
}
