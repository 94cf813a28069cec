using System.Security.Cryptography;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Data.Sources;

/// <summary>Loads a dataset that is not CSV/TSV: checks the file, hashes it (pinned hash too) and hands it to its reader.</summary>
public static class SourceLoader
{
    public static LoadedDataset? Load(DatasetSpec spec, string fullPath, string displayPath, DatasetNeeds needs, DiagnosticBag diagnostics)
    {
        string sha;
        byte[]? bytes = null;
        try
        {
            if (spec.Format == DataFormat.Xlsx)
            {
                // A spreadsheet is read whole, as a CSV file is: the same size limit.
                if (new FileInfo(fullPath) is { Exists: true, Length: > DataLimits.MaxDataFileBytes } big)
                {
                    diagnostics.FileTooLarge(spec.PathLocation, "data file", spec.Path, big.Length, DataLimits.MaxDataFileBytes);
                    return null;
                }

                bytes = File.ReadAllBytes(fullPath);
                sha = ContentHash.Hex(bytes);
            }
            else
            {
                using var stream = File.OpenRead(fullPath);
                sha = Convert.ToHexStringLower(SHA256.HashData(stream));
            }
        }
        catch (Exception e) when (e is FileNotFoundException or DirectoryNotFoundException)
        {
            diagnostics.FileNotFound(spec.PathLocation, "data file", spec.Path);
            return null;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            diagnostics.FileUnreadable(spec.PathLocation, spec.Path, e.Message);
            return null;
        }

        if (spec.Sha256 is { } pinned && pinned != sha)
        {
            diagnostics.HashMismatch(spec.ShaLocation ?? spec.PathLocation, spec.Path, pinned, sha);
            return null;
        }

        return spec.Format switch
        {
            DataFormat.Xlsx => SpreadsheetSource.Load(spec, bytes!, sha, displayPath, needs, diagnostics),
            _ => DatabaseSource.Load(spec, fullPath, sha, displayPath, needs, diagnostics),
        };
    }
}
