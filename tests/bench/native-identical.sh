#!/usr/bin/env bash
# Check (not a benchmark): the native (ahead-of-time compiled) command line writes the same bytes
# as the JIT build. Publishes the native binary into a temporary folder, then runs
# NativeBuildTests with STUDYPRESS_NATIVE_CLI pointing at it: every example, every kind's golden
# case and DuckDB and Parquet sources (loaded and aggregated) are built by both, and the report,
# manifest, figures, Word document and LaTeX fragment must be byte-identical. Exit status is the
# test run's.
#
#   tests/bench/native-identical.sh              # publish for this machine's runtime, then test
#   tests/bench/native-identical.sh --cli PATH   # test an existing native binary
#
# Publishing takes a few minutes on two cores, which is why the solution's test run skips this test.
set -euo pipefail
root=$(cd "$(dirname "$0")/../.." && pwd)
export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1
cli=
if [ "${1:-}" = "--cli" ]; then cli=$2; fi

work=$(mktemp -d "${TMPDIR:-/tmp}/studypress-native.XXXXXX")
trap 'rm -rf "$work"' EXIT
if [ -z "$cli" ]; then
  rid=$(dotnet --info | sed -n 's/^ *RID: *//p' | head -n 1)
  echo "publishing the native CLI for $rid into $work/cli ..." >&2
  dotnet publish "$root/src/StudyPress.Cli" -c Release -r "$rid" -o "$work/cli" >"$work/publish.log" 2>&1 \
    || { cat "$work/publish.log" >&2; exit 1; }
  cli="$work/cli/studypress"
fi

STUDYPRESS_NATIVE_CLI=$(cd "$(dirname "$cli")" && pwd)/$(basename "$cli") \
  dotnet test "$root/tests/StudyPress.Tests" --filter "FullyQualifiedName~NativeBuildTests"
