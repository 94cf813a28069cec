namespace StudyPress.Data;

/// <summary>
/// Size limits on what a build reads, so an oversized input stops with a clear message instead of
/// running out of memory. The whole file is held in memory while it is read (bytes, then text), and
/// each numeric column keeps its values; see docs/errors.md for the memory a file of a given size needs.
/// </summary>
public static class DataLimits
{
    /// <summary>Largest data file read: 256 MiB.</summary>
    public const long MaxDataFileBytes = 256L * 1024 * 1024;

    /// <summary>Largest study file read: 16 MiB (a study is prose and block headers, not data).</summary>
    public const long MaxStudyFileBytes = 16L * 1024 * 1024;
}
