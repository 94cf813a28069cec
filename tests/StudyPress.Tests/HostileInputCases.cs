using System.Text;

namespace StudyPress.Tests;

/// <summary>
/// More bad input for <see cref="DiagnosticsTests"/>: header, YAML, data, blocks, references, paths,
/// encodings and numerics. Every expected line is the exact FILE:LINE:COLUMN: error: MESSAGE the
/// build prints (1-based); the rules behind each decision are in docs/errors.md.
/// </summary>
public sealed partial class DiagnosticsTests
{
    private const string Hdr = "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\n";

    private static readonly string LongTitle = new('T', 1_000_000);

    private static readonly string LongProse = string.Concat(Enumerable.Repeat("word ", 400_000));

    public static TheoryData<string, string, string, string> MoreCases() => new()
    {
        // ---- header and YAML ----
        { "unclosed brace in header", "---\ntitle: T\ndata: {d: data.csv\nresponse: y\n---\n", Csv, "study.md:3:7: error: invalid YAML: this '{' is not closed with '}'" },
        { "unclosed bracket in block", Study(body: "```anova main\nfactors: [dose\n```\n"), Csv, "study.md:10:10: error: invalid YAML: this '[' is not closed with ']'" },
        { "unclosed brace in block", Study(body: "```anova main\nwhere: {dose: a\n```\n"), Csv, "study.md:10:8: error: invalid YAML: this '{' is not closed with '}'" },
        { "bracket inside a plain value is not blamed", "---\ntitle: a[1]\ndata: {d: data.csv\n---\n", Csv, "study.md:3:7: error: invalid YAML: this '{' is not closed with '}'" },
        { "tab in block body", Study(body: "```anova main\nwhere:\n\tdose: a\n```\n"), Csv, "study.md:11:1: error: a tab is used for indentation; YAML needs spaces" },
        { "tab after spaces in block body", Study(body: "```anova main\nfactors:\n  \t- dose\n```\n"), Csv, "study.md:11:3: error: a tab is used for indentation; YAML needs spaces" },
        { "tab after spaces in header", "---\ntitle: T\ndata:\n  \td: data.csv\n---\n", Csv, "study.md:4:3: error: a tab is used for indentation; YAML needs spaces" },
        { "duplicate key in block", Study(body: "```anova main\nwelch: yes\nwelch: no\n```\n"), Csv, "study.md:11:1: error: duplicate key 'welch' (first given on line 10)" },
        { "duplicate dataset name", "---\ntitle: T\ndata:\n  d: data.csv\n  d: data.csv\n---\n", Csv, "study.md:5:3: error: duplicate key 'd' (first given on line 4)" },
        { "near-miss dataset key", "---\ntitle: T\ndata:\n  d:\n    pth: data.csv\nresponse: y\n---\n", Csv, "study.md:5:5: error: unknown key 'pth' in dataset 'd'; did you mean 'path'?" },
        { "near-miss block key", Study(body: "```anova main\nss_type: 2\n```\n"), Csv, "study.md:10:1: error: unknown key 'ss_type' in the anova block; did you mean 'ss-type'?" },
        { "near-miss report key", "---\ntitle: T\ndata: data.csv\nreport:\n  significant-digts: 2\n---\n", Csv, "study.md:5:3: error: unknown key 'significant-digts' in 'report'; did you mean 'significant-digits'?" },
        { "near-miss of an old report key", "---\ntitle: T\ndata: data.csv\nreport:\n  digts: 2\n---\n", Csv, "study.md:5:3: error: unknown key 'digts' in 'report'; did you mean 'significant-digits'?" },
        { "alpha zero", "---\ntitle: T\nalpha: 0\ndata: data.csv\n---\n", Csv, "study.md:3:8: error: alpha must be a number strictly between 0 and 1, not '0'" },
        { "alpha negative", "---\ntitle: T\nalpha: -0.05\ndata: data.csv\n---\n", Csv, "study.md:3:8: error: alpha must be a number strictly between 0 and 1, not '-0.05'" },
        { "alpha NaN", "---\ntitle: T\nalpha: .nan\ndata: data.csv\n---\n", Csv, "study.md:3:8: error: alpha must be a number strictly between 0 and 1, not '.nan'" },
        { "significant digits out of range", "---\ntitle: T\ndata: data.csv\nreport:\n  significant-digits: 99\n---\n", Csv, "study.md:5:23: error: 'significant-digits' must be a whole number from 1 to 15, not '99'" },
        { "raw-html not a boolean", "---\ntitle: T\ndata: data.csv\nreport:\n  raw-html: maybe\n---\n", Csv, "study.md:5:13: error: 'raw-html' must be one of true, false, not 'maybe'" },
        { "header is a list", "---\n- a\n- b\n---\n", Csv, "study.md:2:1: error: the header must be a map of keys to values" },
        { "header is a sentence", "---\njust a sentence\n---\n", Csv, "study.md:2:1: error: the header must be a map of keys to values" },
        { "block body is a list", Study(body: "```anova main\n- a\n```\n"), Csv, "study.md:10:1: error: the body of the anova block must be a map of keys to values" },
        { "authors is a map", "---\ntitle: T\nauthors: {a: b}\ndata: data.csv\n---\n", Csv, "study.md:3:10: error: 'authors' must be a list" },
        { "unterminated quote in header", "---\ntitle: \"T\ndata: data.csv\n---\n", Csv, "study.md:2:8: error: invalid YAML: this quoted string is not closed" },
        { "unterminated single quote in header", "---\ntitle: 'T\ndata: data.csv\n---\n", Csv, "study.md:2:8: error: invalid YAML: this quoted string is not closed" },
        { "unterminated quote in block", Study(body: "```anova main\ncaption: \"abc\n```\n"), Csv, "study.md:10:10: error: invalid YAML: this quoted string is not closed" },
        { "nested too deeply", "---\ntitle: T\ndata: data.csv\nx: " + new string('[', 100) + new string(']', 100) + "\n---\n", Csv, "study.md:4:68: error: the YAML is nested too deeply" },
        { "empty study", "", Csv, "study.md:1:1: error: the study file is empty; it must start with a YAML header between '---' lines" },
        { "blank study", "  \n\n", Csv, "study.md:1:1: error: the study file is empty; it must start with a YAML header between '---' lines" },
        { "unclosed analysis block", Study(body: "```anova main\nwelch: yes\n\nProse swallowed by the block.\n"), Csv, "study.md:9:1: error: the anova block is not closed; add a line ``` after its body" },
        { "very long header line", "---\ntitle: " + LongTitle + "\ndata: data.csv\nrespons: y\n---\n", Csv, "study.md:4:1: error: unknown key 'respons' in the header; did you mean 'response'?" },
        { "very long prose line", Study(body: "```anova main\n```\n\n" + LongProse + "[=main.dose.fx]\n"), Csv, "study.md:12:2000001: error: unknown reference 'main.dose.fx'; did you mean 'main.dose.f'?" },

        // ---- data ----
        { "Infinity and -inf cells", Study(), "plot,dose,y\n1,a,Infinity\n2,a,1\n3,b,-inf\n4,b,2\n", "data.csv:2:5: error: 'Infinity' is not a finite number in column 'y'; mark missing values with one of the 'missing' strings\ndata.csv:4:5: error: '-inf' is not a finite number in column 'y'; mark missing values with one of the 'missing' strings" },
        { "number too large", Study(), "plot,dose,y\n1,a,1e400\n2,a,1\n3,b,2\n4,b,3\n", "data.csv:2:5: error: '1e400' in column 'y' is too large to compute with" },
        { "two decimal points", Study(), "plot,dose,y\n1,a,1.2.3\n2,a,1\n3,b,2\n4,b,3\n", "data.csv:2:5: error: '1.2.3' is not a number in column 'y'" },
        { "thousands separator", Study(), "plot,dose,y\n1,a,\"1,234.5\"\n2,a,1\n3,b,2\n4,b,3\n", "data.csv:2:5: error: '1,234.5' is not a number in column 'y'" },
        { "non-numeric cell after a long one", Study(), "plot,dose,y,note\n1,a,1.0," + new string('x', 1_000_000) + "\n2,a,zz,\n3,b,3.5,\n4,b,4.0,\n", "data.csv:3:5: error: 'zz' is not a number in column 'y'" },
        { "ragged row with too many fields", Study(), "plot,dose,y\n1,a,1\n2,b,2,9\n3,b,2\n", "data.csv:3:1: error: this row has 4 fields but the header line has 3" },
        { "unterminated quote in the last row", Study(), "plot,dose,y\n1,a,1\n2,b,\"2\n", "data.csv:3:5: error: a quoted field is not closed" },
        { "blank column name", Study(), "plot,,y\n1,a,1\n", "data.csv:1:6: error: column 2 of the header line has no name\nstudy.md:6:3: error: column 'dose' is not in 'data.csv'" },
        { "factor column missing", "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n    column: dosage\n---\n\n```anova\n```\n", Csv, "study.md:7:13: error: column 'dosage' is not in 'data.csv'; did you mean 'dose'?" },
        { "block response column missing", Study(body: "```anova main\nresponse: yield\n```\n"), Csv, "study.md:10:11: error: column 'yield' is not in 'data.csv'" },
        { "every response missing", Study(), "plot,dose,y\n1,a,NA\n2,a,NA\n3,b,NA\n", "study.md:9:1: error: no rows are left after dropping missing values and applying 'where'" },
        { "empty group after where", Study(body: "```anova main\nwhere:\n  dose: [a, b]\n```\n"), "plot,dose,y\n1,a,1\n2,a,2\n3,b,NA\n4,b,NA\n5,c,3\n6,c,4\n", "study.md:9:1: error: factor 'dose' has 1 level with data here; a comparison needs at least 2" },
        { "undeclared level in where", "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n    levels: [a, b, c]\n---\n\n```anova main\nwhere:\n  dose: [a, bb]\n```\n", Csv, "study.md:12:13: error: factor 'dose' has no level 'bb'; did you mean 'b'?" },
        { "unknown factor in where", Study(body: "```anova main\nwhere:\n  dse: a\n```\n"), Csv, "study.md:11:3: error: unknown factor 'dse'; did you mean 'dose'?" },
        { "bad decimal mark", "---\ntitle: T\ndata:\n  d:\n    path: data.csv\n    decimal: ';'\nresponse: y\n---\n", Csv, "study.md:6:14: error: decimal must be '.' or ',', not ';'" },
        { "decimal mark equals delimiter", "---\ntitle: T\ndata:\n  d:\n    path: data.csv\n    decimal: ','\nresponse: y\n---\n", Csv, "study.md:6:14: error: the decimal mark cannot be the same as the delimiter; use delimiter ';' with decimal ','" },
        { "bad delimiter", "---\ntitle: T\ndata:\n  d:\n    path: data.csv\n    delimiter: '|'\nresponse: y\n---\n", Csv, "study.md:6:16: error: delimiter must be ',', ';' or '\\t' (tab), not '|'" },
        { "data path through home folder", "---\ntitle: T\ndata: ~/data.csv\nresponse: y\n---\n", Csv, "study.md:3:7: error: data path '~/data.csv' must be relative to the study file" },

        // ---- blocks ----
        { "of names an unknown block", Study(body: "```anova main\n```\n\n```posthoc\nof: mian\n```\n"), Csv, "study.md:13:5: error: no anova block with id 'mian' above this block; did you mean 'main'?" },
        { "of names a summary block", Study(body: "```summary s\n```\n\n```anova main\n```\n\n```posthoc\nof: s\n```\n"), Csv, "study.md:16:5: error: 'of' must name an anova block; 's' is a summary block" },
        { "of names a later block", Study(body: "```posthoc\nof: main\n```\n\n```anova main\n```\n"), Csv, "study.md:10:5: error: block 'main' comes after this posthoc block; 'of' must name an anova block above it" },
        { "assumptions with no anova", Study(body: "```assumptions\n```\n"), Csv, "study.md:9:1: error: the assumptions block checks an anova block, but there is none above it; add one or name it with 'of'" },
        { "posthoc method misspelt", Study(body: "```anova main\n```\n\n```posthoc\nmethod: tukye\n```\n"), Csv, "study.md:13:9: error: 'method' must be one of auto, tukey, games-howell, holm, bonferroni, dunnett, not 'tukye'; did you mean 'tukey'?" },
        { "posthoc control not a level", Study(body: "```anova main\n```\n\n```posthoc\ncontrol: z\n```\n"), Csv, "study.md:13:10: error: control 'z' is not a level of factor 'dose' with data" },
        { "figure type unknown", Study(body: "```anova main\n```\n\n```figure\ntype: pie\n```\n"), Csv, "study.md:13:7: error: 'type' must be one of box, means, interaction, qq, residual-histogram, residuals-fitted, f-distribution, power-curve, intervals, not 'pie'" },
        { "figure without its source block", Study(body: "```summary s\n```\n\n```figure\ntype: qq\n```\n"), Csv, "study.md:12:1: error: a qq figure is drawn from an anova block, and there is none above this one" },
        { "power without effect or n", Study(body: "```power\ngroups: 3\n```\n"), Csv, "study.md:9:1: error: the power block needs 'effect' (Cohen's f), or 'of' naming an anova block\nstudy.md:9:1: error: the power block needs 'n' (per group) for the power, or 'target' for the sample size" },
        { "power given a data key", Study(body: "```power\ngroups: 3\neffect: 0.4\nn: 5\nresponse: y\n```\n"), Csv, "study.md:13:1: error: 'response' has no use in a power block, which reads no data" },
        { "power target out of range", Study(body: "```power\ngroups: 3\neffect: 0.4\ntarget: 1.2\n```\n"), Csv, "study.md:12:9: error: 'target' is a power strictly between 0 and 1, not '1.2'" },

        // ---- references ----
        { "reference with an empty part", Study(body: "```anova main\n```\n\nF [=main..f]\n"), Csv, "study.md:12:3: error: cannot read reference 'main..f': unexpected '.'; write parts as names separated by '.', and quote names with other characters" },
        { "empty reference", Study(body: "```anova main\n```\n\nF [=]\n"), Csv, "study.md:12:3: error: cannot read reference '': it is empty" },
        { "reference with a quoted bracket", Study(body: "```anova main\n```\n\nF [=main.\"dose]\".f]\n"), Csv, "study.md:12:3: error: unknown reference 'main.\"dose]\".f'; did you mean 'main.dose.f'?" },
        { "reference with an unclosed quote", Study(body: "```anova main\n```\n\nF [=main.\"dose.f] and more\n"), Csv, "study.md:12:3: error: cannot read reference 'main.\"dose.f': a quoted part is not closed" },
        { "reference with a filter", Study(body: "```anova main\n```\n\nF [=main.dose.f, upcase]\n"), Csv, "study.md:12:3: error: unknown formatting 'upcase' (known: result, N decimals, no leading zero, as percent, as df, number only)" },
        { "old brace form with an unknown filter", Study(body: "```anova main\n```\n\nF {{ main.dose.f | upcase }}\n"), Csv, "study.md:12:3: error: '{{ main.dose.f | upcase }}' is not a reference form; write [=main.dose.f]" },
        { "template loop in prose is not run", Study(body: "```anova main\n```\n\n{{ for i in 1..3 }}x{{ end }}\n"), Csv, "study.md:12:1: error: '{{ for i in 1..3 }}' is not a reference form; write [=block.statistic], for example [=main.dose.f]\nstudy.md:12:21: error: '{{ end }}' is not a reference form; write [=end]" },
        { "template loop in the reference form is not run", Study(body: "```anova main\n```\n\n[=for i in 1..3]x[=end]\n"), Csv, "study.md:12:1: error: cannot read reference 'for i in 1..3': unexpected 'i' after 'for'\nstudy.md:12:18: error: cannot read reference 'end': name a block and a statistic, for example [=main.dose.f]" },
        { "reference to an undefined value", Study(body: "```anova main\n```\n\nF [=main.dose.f]\n"), "plot,dose,y\n1,a,1\n2,a,1\n3,b,2\n4,b,2\n5,c,3\n6,c,3\n", "study.md:12:3: error: reference 'main.dose.f' has no value: the residual variance is zero" },
    };

    public static TheoryData<string, byte[], byte[], string> EncodingCases()
    {
        var study = Study();
        var utf8 = (string s) => Encoding.UTF8.GetBytes(s);
        var csv = utf8(Csv);
        return new()
        {
            { "UTF-16 study without BOM", Encoding.Unicode.GetBytes(study), csv, "study.md:1:1: error: the file is UTF-16; save it as UTF-8" },
            { "UTF-16 big-endian study with BOM", [.. Encoding.BigEndianUnicode.GetPreamble(), .. Encoding.BigEndianUnicode.GetBytes(study)], csv, "study.md:1:1: error: the file is UTF-16; save it as UTF-8" },
            { "UTF-16 data with BOM", utf8(study), [.. Encoding.Unicode.GetPreamble(), .. Encoding.Unicode.GetBytes(Csv)], "data.csv:1:1: error: the file is UTF-16; save it as UTF-8" },
            { "UTF-16 data without BOM", utf8(study), Encoding.Unicode.GetBytes(Csv), "data.csv:1:1: error: the file is UTF-16; save it as UTF-8" },
            { "invalid UTF-8 in the study", [.. utf8("---\ntitle: T"), 0xE9, .. utf8("st\ndata: data.csv\n---\n")], csv, "study.md:2:9: error: the file is not valid UTF-8 (byte 0xE9 at offset 12)" },
            { "Latin-1 level name in the data", utf8(study), [.. utf8("plot,dose,y\n1,a,1\n2,caf"), 0xE9, .. utf8(",2\n")], "data.csv:3:6: error: the file is not valid UTF-8 (byte 0xE9 at offset 23)" },
            { "NUL byte in the study", [.. utf8("---\ntitle: Test\ndata: data.csv\n---\nabc"), 0, .. utf8("def\n")], csv, "study.md:5:4: error: the file contains a NUL byte; is it a binary file?" },
            { "UTF-8 BOM study with a bad key", [0xEF, 0xBB, 0xBF, .. utf8("---\ntitle: T\nalfa: 1\ndata: data.csv\n---\n")], csv, "study.md:3:1: error: unknown key 'alfa' in the header; did you mean 'alpha'?" },
        };
    }
}
