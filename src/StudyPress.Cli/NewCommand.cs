using System.Text;
using StudyPress.Rendering;
using StudyPress.Reproducibility;

namespace StudyPress.Cli;

/// <summary><c>studypress new DIR</c>: a small, working study with invented data to start from.</summary>
public static class NewCommand
{
    public const string StudyFile = "study.md";

    public const string DataFile = "data/protein.csv";

    public static int Run(string dir, TextWriter stdout, TextWriter stderr)
    {
        if (StudyPressCommand.RejectOptionLike([dir], "new", stderr))
        {
            return StudyPressCommand.Usage;
        }

        var files = new[] { (Path: Path.Combine(dir, StudyFile), Text: Study), (Path: Path.Combine(dir, DataFile), Text: Data) };
        var exit = StudyPressCommand.Ok;
        foreach (var (path, _) in files)
        {
            if (File.Exists(path) || Directory.Exists(path))
            {
                stderr.WriteLine($"{Show(path)}:1:1: error: the file already exists; 'studypress new' never overwrites files (choose another folder)");
                exit = StudyPressCommand.BadInput;
            }
        }

        if (exit != StudyPressCommand.Ok)
        {
            return exit;
        }

        try
        {
            // The data first: a study without its data would not build.
            foreach (var (path, text) in files.Reverse())
            {
                AtomicFile.Write(path, new UTF8Encoding(false).GetBytes(text));
            }
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            stderr.WriteLine($"{Show(dir)}:1:1: error: cannot write the new study: {e.Message}");
            return StudyPressCommand.BadInput;
        }

        foreach (var (path, _) in files)
        {
            stdout.WriteLine("wrote " + Show(path));
        }

        stdout.WriteLine("next: studypress build " + Quote(Show(files[0].Path)));
        return StudyPressCommand.Ok;
    }

    private static string Show(string path) => path.Replace('\\', '/');

    private static string Quote(string path) => path.Any(c => c is ' ' or '\'' or '"' or '$' or '&' or ';' or '(' or ')') ? "'" + path.Replace("'", "'\\''", StringComparison.Ordinal) + "'" : path;

    /// <summary>The study text of the starter study.</summary>
    public const string Study = """
        ---
        title: Fertiliser blend and grain protein in winter wheat
        authors: [StudyPress starter study (invented scenario and data)]
        alpha: 0.05
        data:
          plots: data/protein.csv
        response: protein_pct
        factors:
          blend:
            levels: [standard, split-n, sulphur-plus]
            label: Fertiliser blend
        order: plot
        ---

        > **Invented example.** This study was written by `studypress new`. The scenario and every
        > number in `data/protein.csv` are made up; replace them with your own study and data.

        # Design

        Eighteen field plots of winter wheat were given one of three fertiliser blends, six plots
        each, in a random layout: the standard compound, the same nitrogen split over two dates
        (`split-n`), and the standard compound with added sulphur (`sulphur-plus`). Grain protein
        (% of dry matter) was measured on a sample from each plot at harvest.

        ```summary groups
        caption: Grain protein (%) by fertiliser blend
        ```

        # Does grain protein depend on the blend?

        ```anova main
        factors: [blend]
        ```

        The blend explains an estimated [=main.blend.omega2] of the variance in grain protein
        (ω²), with F = [=main.blend.f] on [=main.blend.df] and [=main.residual.df]
        degrees of freedom ([=main.blend.p]). The split-nitrogen plots averaged
        [=groups.split-n.mean] % against [=groups.standard.mean] % for the standard blend.

        # Are the assumptions reasonable?

        ```assumptions checks
        of: main
        ```

        # Which blends differ?

        ```posthoc pairs
        of: main
        method: auto
        ```

        ```figure spread
        type: box
        caption: Grain protein by blend
        ```

        """;

    /// <summary>The starter study's invented data.</summary>
    public const string Data = """
        plot,blend,protein_pct
        1,split-n,12.9
        2,standard,11.6
        3,sulphur-plus,12.2
        4,standard,11.9
        5,split-n,13.4
        6,sulphur-plus,12.5
        7,standard,11.2
        8,sulphur-plus,11.8
        9,split-n,12.7
        10,standard,12.1
        11,split-n,13.1
        12,sulphur-plus,12.6
        13,standard,11.5
        14,split-n,12.6
        15,sulphur-plus,12.0
        16,standard,11.8
        17,sulphur-plus,12.9
        18,split-n,13.2

        """;
}
