using StudyPress.Diagnostics;
using StudyPress.Reproducibility;

namespace StudyPress.Cli;

/// <summary>
/// <c>studypress verify</c>: one line per report on stdout, <c>REPORT: fresh</c>,
/// <c>REPORT: stale (changed: …; missing: …)</c> or <c>REPORT: altered (…)</c>; an unreadable
/// report is an error on stderr. Exit 0 all fresh, 1 any stale or altered, 2 any unreadable.
/// </summary>
public static class VerifyCommand
{
    public static int Run(IReadOnlyList<string> reports, bool recompute, bool allowOutside, TextWriter stdout, TextWriter stderr)
    {
        if (StudyPressCommand.RejectOptionLike(reports, "verify", stderr))
        {
            return StudyPressCommand.Usage;
        }

        var exit = StudyPressCommand.Ok;
        foreach (var report in reports)
        {
            var verdict = ReportVerifier.Verify(report, recompute, allowOutside);
            if (verdict.State == Freshness.Unreadable)
            {
                stderr.WriteLine(UnsafeText.Escape($"{report}:1:1: error: {verdict.Detail}"));
                exit = StudyPressCommand.BadInput;
                continue;
            }

            stdout.WriteLine(UnsafeText.Escape(verdict.Line(report)));
            if (verdict.State != Freshness.Fresh && exit == StudyPressCommand.Ok)
            {
                exit = StudyPressCommand.NotFresh;
            }
        }

        return exit;
    }
}
