using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Binding.Kinds;

namespace StudyPress.Data;

/// <summary>
/// The data stage: loads every dataset the header declares, reading only the columns the bound
/// blocks need (numeric responses, factors, the run order), confined to the study's folder unless
/// allowed otherwise; files are hashed as read, servers are queried read-only.
/// </summary>
public static class DatasetLoader
{
    public static Dictionary<string, LoadedDataset> Load(
        StudyHeader header,
        IReadOnlyList<BoundBlock> blocks,
        string studyDir,
        string display,
        bool allowOutsidePaths,
        DiagnosticBag diagnostics)
    {
        var needs = header.Datasets.ToDictionary(d => d.Name, _ => new DatasetNeeds(), StringComparer.Ordinal);
        foreach (var b in blocks.Where(b => b.Options is FigureKind.Options))
        {
            // A figure reads no dataset itself, but most types draw the rows of the block they show.
            var figure = b.OptionsOf<FigureKind.Options>();
            if (!FigureKind.DrawnFromStatistics.Contains(figure.Type)
                && (figure.Source.Data ?? figure.Source.Of?.Data) is { } sourceData
                && header.Datasets.FirstOrDefault(d => d.Name == sourceData) is { Aggregate: true } aggregatedSource)
            {
                diagnostics.AggregateProblem(b.Location, aggregatedSource.Name, $"a '{figure.Type}' figure draws the rows of block '{figure.Source.Id}', and the database aggregates this dataset (aggregate: true); on aggregated data only {string.Join(" and ", FigureKind.DrawnFromStatistics.Select(t => "'" + t + "'"))} figures are drawn (declare a second dataset on the same file with a sampling query for the other figures)");
            }
        }

        foreach (var b in blocks.Where(b => b.Data is not null))
        {
            var n = needs[b.Data!];
            if (b.Kind.NeedsRows && header.Datasets.FirstOrDefault(d => d.Name == b.Data) is { Aggregate: true } aggregated)
            {
                diagnostics.AggregateProblem(b.Location, aggregated.Name, $"a '{b.Kind.Name}' block needs the rows, and the database aggregates this dataset (aggregate: true); only anova, summary and posthoc blocks run on aggregated data in this version (declare a second dataset on the same file with a sampling query for the other blocks)");
            }

            if (b.Response is not null && b.Kind.LoadsResponse(b.Options))
            {
                n.Numeric.TryAdd(b.Response, b.ResponseLocation);
                n.Responses.Add(b.Response);
            }

            foreach (var (column, at) in b.Kind.NumericRead(b.Options))
            {
                n.Numeric.TryAdd(column, at);
                n.Responses.Add(column);
            }

            foreach (var f in b.Factors.Concat(b.Kind.FactorsRead(b.Options)))
            {
                n.Factors.TryAdd(f.Name, (f, f.ColumnLocation));
            }

            foreach (var w in b.Where)
            {
                n.Factors.TryAdd(w.Factor.Name, (w.Factor, w.Factor.ColumnLocation));
            }

            if (b.WholePlots is { } plots)
            {
                n.Factors.TryAdd(plots.Name, (plots, plots.ColumnLocation));
            }

            if (header.Order is { } order && b.Kind is AnovaKind)
            {
                n.Numeric.TryAdd(order, header.OrderLocation);
                n.Order = order;
            }
        }

        // With one dataset, every declared factor is checked against it (column present, levels
        // declared), even one no block uses yet: a misspelt column must not pass silently.
        if (header.Datasets is [{ Aggregate: false } only])
        {
            foreach (var f in header.Factors)
            {
                needs[only.Name].Factors.TryAdd(f.Name, (f, f.ColumnLocation));
            }
        }

        var loaded = new Dictionary<string, LoadedDataset>(StringComparer.Ordinal);
        var studyFolder = Path.GetDirectoryName(display);
        foreach (var spec in header.Datasets)
        {
            if (spec.Format == DataFormat.Postgres)
            {
                // A server, not a file: no path rules, no file hash (see Data/Sources/PostgresSource).
                if (Sources.PostgresSource.Load(spec, needs[spec.Name], diagnostics) is { } server)
                {
                    loaded[spec.Name] = server;
                }

                continue;
            }

            // The real path (links followed as the kernel does), checked to be a regular file; it is
            // what is hashed and read.
            if (PathGuard.Locate(studyDir, spec, allowOutsidePaths, diagnostics) is not { } full)
            {
                continue;
            }

            var dataDisplay = string.IsNullOrEmpty(studyFolder) ? spec.Path : Path.Combine(studyFolder, spec.Path).Replace('\\', '/');
            if (spec.Format != DataFormat.Csv)
            {
                if (Sources.SourceLoader.Load(spec, full, dataDisplay, needs[spec.Name], diagnostics) is { } other)
                {
                    loaded[spec.Name] = other;
                }

                continue;
            }

            byte[] bytes;
            try
            {
                if (new FileInfo(full) is { Exists: true, Length: > DataLimits.MaxDataFileBytes } big)
                {
                    diagnostics.FileTooLarge(spec.PathLocation, "data file", spec.Path, big.Length, DataLimits.MaxDataFileBytes);
                    continue;
                }

                bytes = ReadFile(full);
            }
            catch (Exception e) when (e is FileNotFoundException or DirectoryNotFoundException)
            {
                diagnostics.FileNotFound(spec.PathLocation, "data file", spec.Path);
                continue;
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                diagnostics.FileUnreadable(spec.PathLocation, spec.Path, e.Message);
                continue;
            }

            if (CsvLoader.Load(spec, bytes, dataDisplay, needs[spec.Name], diagnostics) is { } ds)
            {
                loaded[spec.Name] = ds;
            }
        }

        return loaded;
    }
    /// <summary>Files at least this large are read in parts at the same time (<see cref="ReadFile"/>).</summary>
    internal const long PartReadBytes = 8L << 20;

    /// <summary>
    /// The whole file's bytes, as <see cref="File.ReadAllBytes"/> reads them: the length is taken
    /// once when the file is opened and exactly that many bytes are read (a file that shrinks
    /// meanwhile is an <see cref="EndOfStreamException"/>, one that grows is read to its first
    /// length). A large file is read as consecutive parts, one per core, each into its own place
    /// in the array at the same time: copying the pages and the first touches of the array are
    /// shared between the cores. The bytes are the same whatever the number of parts.
    /// </summary>
    internal static byte[] ReadFile(string path)
    {
        using var handle = File.OpenHandle(path, FileMode.Open, FileAccess.Read, FileShare.Read, FileOptions.SequentialScan);
        var length = RandomAccess.GetLength(handle);
        var parts = (int)Math.Clamp(length / PartReadBytes, 1, Math.Max(1, Environment.ProcessorCount));
        if (length == 0 || length > Array.MaxLength || parts == 1)
        {
            // Small, empty (as some special files report) or too large for one array: the library's read.
            return File.ReadAllBytes(path);
        }

        var bytes = GC.AllocateUninitializedArray<byte>((int)length);
        void Read(int part)
        {
            var at = length * part / parts;
            var end = length * (part + 1) / parts;
            while (at < end)
            {
                var n = RandomAccess.Read(handle, bytes.AsSpan((int)at, (int)(end - at)), at);
                if (n == 0)
                {
                    // The exception and message File.ReadAllBytes throws when the file ends early.
                    throw new EndOfStreamException("Unable to read beyond the end of the stream.");
                }

                at += n;
            }
        }

        try
        {
            Parallel.For(0, parts, Read);
        }
        catch (AggregateException e) when (e.InnerExceptions.Count > 0)
        {
            // The first part's failure as the single read would have thrown it.
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Capture(e.InnerExceptions[0]).Throw();
        }

        return bytes;
    }
}
