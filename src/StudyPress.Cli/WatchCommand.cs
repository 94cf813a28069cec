using StudyPress.Diagnostics;
using StudyPress.Reproducibility;

namespace StudyPress.Cli;

public sealed record WatchRequest(IReadOnlyList<string> Paths, string? OutDir, bool AllowOutside, long? SourceDateEpoch);

/// <summary>
/// <c>studypress watch</c>: builds the studies, then rebuilds a study when it or one of its
/// inputs changes. Changes are noticed by a file-system watcher on the folders involved and, as
/// a fallback (network drives, editors that replace files), by polling each watched file's size
/// and modification time; a burst of changes is gathered for <see cref="WatchSession.Debounce"/>
/// before building. A failed build prints its errors and watching goes on.
/// </summary>
public static class WatchCommand
{
    public static int Run(WatchRequest request, TextWriter stdout, TextWriter stderr)
    {
        using var cts = new CancellationTokenSource();
        ConsoleCancelEventHandler stop = (_, e) =>
        {
            e.Cancel = true;
            cts.Cancel();
        };
        Console.CancelKeyPress += stop;
        try
        {
            using var session = new WatchSession(request, stdout, stderr);
            return session.RunAsync(cts.Token).GetAwaiter().GetResult();
        }
        finally
        {
            Console.CancelKeyPress -= stop;
        }
    }
}

/// <summary>One build made while watching, for tests and tools that drive the watcher in-process.</summary>
public sealed record WatchBuildEvent(string Study, StudyOutcome Outcome, IReadOnlyList<string> Messages);

public sealed class WatchSession(WatchRequest request, TextWriter stdout, TextWriter stderr) : IDisposable
{
    private readonly SemaphoreSlim wake = new(0);

    /// <summary>Called after every build (on the watcher's thread).</summary>
    public Action<WatchBuildEvent>? Built { get; init; }

    /// <summary>How long changes must be quiet before a rebuild.</summary>
    public TimeSpan Debounce { get; init; } = TimeSpan.FromMilliseconds(300);

    /// <summary>How often watched files are checked when no file-system event arrives.</summary>
    public TimeSpan PollInterval { get; init; } = TimeSpan.FromMilliseconds(500);

    public void Dispose() => wake.Dispose();

    /// <summary>Runs until <paramref name="cancel"/> fires; returns 0 then, or 2 for bad arguments.</summary>
    public async Task<int> RunAsync(CancellationToken cancel)
    {
        if (StudyPressCommand.RejectOptionLike(request.Paths, "watch", stderr))
        {
            return StudyPressCommand.Usage;
        }

        var studies = StudyDiscovery.Resolve(request.Paths, stderr);
        if (studies is null)
        {
            return StudyPressCommand.BadInput;
        }

        var options = new CompileOptions
        {
            OutputDirectory = request.OutDir,
            AllowOutsidePaths = request.AllowOutside,
            SourceDateEpoch = request.SourceDateEpoch,
        };

        var watchers = new List<FileSystemWatcher>();
        try
        {
            var seen = new Dictionary<string, string>(StringComparer.Ordinal);
            foreach (var study in studies)
            {
                seen[study] = BuildAndFingerprint(study, options);
            }

            foreach (var folder in request.Paths.Select(p => Directory.Exists(p) ? p : Path.GetDirectoryName(Path.GetFullPath(p))!).Distinct(StringComparer.Ordinal))
            {
                watchers.Add(Watch(folder));
            }

            stdout.WriteLine($"watching {studies.Count} {(studies.Count == 1 ? "study" : "studies")}; press Ctrl+C to stop");
            stdout.Flush();
            // A study whose files differ from its last build waits until they have stayed the same for Debounce.
            var pending = new Dictionary<string, (string Print, DateTime Since)>(StringComparer.Ordinal);
            while (!cancel.IsCancellationRequested)
            {
                try
                {
                    await wake.WaitAsync(pending.Count > 0 ? Debounce / 3 : PollInterval, cancel).ConfigureAwait(false);
                }
                catch (OperationCanceledException)
                {
                    break;
                }

                while (wake.CurrentCount > 0)
                {
                    wake.Wait(0, CancellationToken.None);
                }

                // Folders given on the command line may gain studies.
                foreach (var study in StudyDiscovery.Resolve(request.Paths, TextWriter.Null) ?? [])
                {
                    seen.TryAdd(study, string.Empty);
                }

                var now = DateTime.UtcNow;
                foreach (var study in seen.Keys.ToList())
                {
                    if (cancel.IsCancellationRequested)
                    {
                        break;
                    }

                    var current = Fingerprint(study);
                    if (current == seen[study])
                    {
                        pending.Remove(study);
                    }
                    else if (!pending.TryGetValue(study, out var p) || p.Print != current)
                    {
                        pending[study] = (current, now);
                    }
                    else if (now - p.Since >= Debounce)
                    {
                        pending.Remove(study);
                        seen[study] = BuildAndFingerprint(study, options);
                    }
                }
            }
        }
        finally
        {
            foreach (var w in watchers)
            {
                w.Dispose();
            }
        }

        stdout.WriteLine("stopped watching");
        return StudyPressCommand.Ok;
    }

    private FileSystemWatcher Watch(string folder)
    {
        var w = new FileSystemWatcher(folder)
        {
            IncludeSubdirectories = true,
            NotifyFilter = NotifyFilters.FileName | NotifyFilters.LastWrite | NotifyFilters.Size | NotifyFilters.DirectoryName,
        };
        FileSystemEventHandler poke = (_, e) =>
        {
            // Our own writes (reports, cache, temporary files) are not changes to react to.
            if (!e.FullPath.EndsWith(".html", StringComparison.Ordinal) && !e.FullPath.Contains(BuildCache.FolderName, StringComparison.Ordinal) && !e.FullPath.EndsWith(".tmp", StringComparison.Ordinal))
            {
                wake.Release();
            }
        };
        w.Changed += poke;
        w.Created += poke;
        w.Deleted += poke;
        w.Renamed += (s, e) => poke(s, e);
        w.Error += (_, _) => wake.Release();
        try
        {
            w.EnableRaisingEvents = true;
        }
        catch (Exception e) when (e is IOException or ArgumentException or PlatformNotSupportedException)
        {
            // Polling alone still sees every change.
        }

        return w;
    }

    /// <summary>Builds the study (rebuilding even if the cache says it is current) and returns the fingerprint taken before.</summary>
    private string BuildAndFingerprint(string study, CompileOptions options)
    {
        var before = Fingerprint(study);
        var result = StudyBuilder.Build(study, options, useCache: false);
        foreach (var m in result.Messages)
        {
            stderr.WriteLine(UnsafeText.Escape(m));
        }

        stdout.WriteLine(result.Outcome == StudyOutcome.Failed
            ? $"failed {BuildCommand.Display(study)}; waiting for changes"
            : $"wrote {BuildCommand.Display(result.OutputPath)}");
        stdout.Flush();
        stderr.Flush();
        Built?.Invoke(new WatchBuildEvent(study, result.Outcome, result.Messages));
        return before;
    }

    /// <summary>Size and modification time of the study and each input its header names.</summary>
    private static string Fingerprint(string study)
    {
        var files = new List<string> { Path.GetFullPath(study) };
        var header = StudyHeaderReader.Read(study, new DiagnosticBag());
        if (header is not null)
        {
            files.AddRange(StudyHeaderReader.InputPaths(study, header.Header));
        }

        var parts = files.Select(f =>
        {
            var info = new FileInfo(f);
            return info.Exists ? $"{f}|{info.Length}|{info.LastWriteTimeUtc.Ticks}" : $"{f}|missing";
        });
        return string.Join('\n', parts);
    }
}
