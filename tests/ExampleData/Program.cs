using System.Globalization;
using DocumentFormat.OpenXml;
using DocumentFormat.OpenXml.Packaging;
using DocumentFormat.OpenXml.Spreadsheet;
using Microsoft.Data.Sqlite;

// Writes the INVENTED data of two examples (no real measurements):
//   examples/greenhouse-sqlite/data/greenhouse.sqlite
//   examples/spreadsheet-trial/data/trial.xlsx
// Usage: dotnet run --project tests/ExampleData -- EXAMPLES_FOLDER
// The numbers come from a fixed linear congruential generator, so every run writes the same values.
var examples = args.Length > 0 ? args[0] : "examples";
var seed = 20240301u;
double Next()
{
    seed = unchecked((seed * 1664525u) + 1013904223u);
    return seed / 4294967296.0;
}

double Noise(double sd) => (Next() + Next() + Next() + Next() - 2) * sd;

// ---- greenhouse-sqlite: plant height by variety and light regime, measured over six days ----
var db = Path.Combine(examples, "greenhouse-sqlite", "data", "greenhouse.sqlite");
Directory.CreateDirectory(Path.GetDirectoryName(db)!);
File.Delete(db);
using (var c = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = db, Pooling = false }.ToString()))
{
    c.Open();
    using var tx = c.BeginTransaction();
    Run(c, "create table plants (id integer primary key, bench integer, variety text, light text, measured text, height_cm real, note text)");
    Run(c, "create table about (text text)");
    Run(c, "insert into about values ('INVENTED DATA for a StudyPress example; not real measurements')");
    string[] varieties = ["Aurora", "Bristol", "Calder"];
    string[] lights = ["natural", "supplemented"];
    double[] varietyEffect = [0, 1.8, -0.9];
    var id = 0;
    for (var rep = 0; rep < 4; rep++)
    {
        for (var v = 0; v < varieties.Length; v++)
        {
            for (var l = 0; l < lights.Length; l++)
            {
                var height = Math.Round(24.0 + varietyEffect[v] + (l * 2.4) + Noise(1.1), 1);
                var day = new DateOnly(2024, 3, 4).AddDays(id % 6);
                using var cmd = c.CreateCommand();
                cmd.CommandText = "insert into plants values ($id, $bench, $variety, $light, $measured, $height, null)";
                cmd.Parameters.AddWithValue("$id", ++id);
                cmd.Parameters.AddWithValue("$bench", rep + 1);
                cmd.Parameters.AddWithValue("$variety", varieties[v]);
                cmd.Parameters.AddWithValue("$light", lights[l]);
                cmd.Parameters.AddWithValue("$measured", day.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture));
                cmd.Parameters.AddWithValue("$height", height);
                cmd.ExecuteNonQuery();
            }
        }
    }

    tx.Commit();
}

// ---- spreadsheet-trial: wheat yield by fertiliser in four field blocks ----
var xlsx = Path.Combine(examples, "spreadsheet-trial", "data", "trial.xlsx");
Directory.CreateDirectory(Path.GetDirectoryName(xlsx)!);
using (var doc = SpreadsheetDocument.Create(xlsx, SpreadsheetDocumentType.Workbook))
{
    var book = doc.AddWorkbookPart();
    book.Workbook = new Workbook();
    var sheets = book.Workbook.AppendChild(new Sheets());
    var notes = AddSheet(book, sheets, "Notes", 1);
    notes.Append(MakeRow(1, ["INVENTED DATA for a StudyPress example; not real measurements."]));
    var plots = AddSheet(book, sheets, "Plots", 2);
    plots.Append(MakeRow(1, ["Field trial 2024 (invented)"]));
    plots.Append(MakeRow(3, ["plot", "block", "fertiliser", "yield_t_ha"]));
    string[] fertilisers = ["control", "N60", "N120", "N180"];
    double[] effect = [0, 0.62, 1.05, 1.12];
    var row = 4u;
    var plot = 0;
    for (var b = 1; b <= 4; b++)
    {
        foreach (var f in Enumerable.Range(0, fertilisers.Length).OrderBy(_ => Next()))
        {
            var y = Math.Round(6.20 + effect[f] + ((b - 2.5) * 0.15) + Noise(0.25), 2);
            plots.Append(MakeRow(row++, [++plot, b, fertilisers[f], y]));
        }
    }

    book.Workbook.Save();
}

Console.WriteLine("wrote " + db + " and " + xlsx);

static void Run(SqliteConnection c, string sql)
{
    using var cmd = c.CreateCommand();
    cmd.CommandText = sql;
    cmd.ExecuteNonQuery();
}

static SheetData AddSheet(WorkbookPart book, Sheets sheets, string name, uint id)
{
    var part = book.AddNewPart<WorksheetPart>();
    var data = new SheetData();
    part.Worksheet = new Worksheet(data);
    sheets.Append(new Sheet { Id = book.GetIdOfPart(part), SheetId = id, Name = name });
    return data;
}

static Row MakeRow(uint index, object[] values)
{
    var row = new Row { RowIndex = index };
    for (var i = 0; i < values.Length; i++)
    {
        var reference = ((char)('A' + i)).ToString() + index.ToString(CultureInfo.InvariantCulture);
        row.Append(values[i] switch
        {
            string s => new Cell { CellReference = reference, DataType = CellValues.InlineString, InlineString = new InlineString(new Text(s)) },
            double d => new Cell { CellReference = reference, CellValue = new CellValue(d.ToString("R", CultureInfo.InvariantCulture)) },
            var x => new Cell { CellReference = reference, CellValue = new CellValue(Convert.ToString(x, CultureInfo.InvariantCulture)!) },
        });
    }

    return row;
}
