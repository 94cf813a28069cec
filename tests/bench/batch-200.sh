#!/usr/bin/env bash
# Benchmark (not a test): a cold batch build of N small studies (default 200) against a
# no-change rebuild, with the Release build of the command line. The studies are copies of the
# `studypress new` starter study, each with its own (invented) data values.
#
#   tests/bench/batch-200.sh [N] [--jobs J]
#
# Prints the wall-clock time of both builds and their ratio. Timings depend on the machine
# and its load; they are figures to compare, not a pass/fail check.
set -euo pipefail
root=$(cd "$(dirname "$0")/../.." && pwd)
n=${1:-200}
shift || true
export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1

dotnet build -c Release "$root/src/StudyPress.Cli" -nologo -v q >/dev/null
cli="$root/src/StudyPress.Cli/bin/Release/net10.0/studypress.dll"

work=$(mktemp -d "${TMPDIR:-/tmp}/studypress-bench.XXXXXX")
trap 'rm -rf "$work"' EXIT
dotnet "$cli" new "$work/template" >/dev/null

for i in $(seq 1 "$n"); do
  d="$work/studies/s$(printf %03d "$i")"
  mkdir -p "$d/data"
  cp "$work/template/study.md" "$d/study.md"
  # Vary every value by a study-specific pattern of -0.3 .. +0.3 percentage points.
  awk -F, -v i="$i" 'NR == 1 { print; next } { printf "%s,%s,%.1f\n", $1, $2, $3 + ((NR * i) % 7 - 3) / 10 }' \
    "$work/template/data/protein.csv" > "$d/data/protein.csv"
done

now() { date +%s.%N; }

t0=$(now)
dotnet "$cli" build "$work/studies" "$@" > "$work/cold.log" 2>&1 || { cat "$work/cold.log"; exit 1; }
t1=$(now)
dotnet "$cli" build "$work/studies" "$@" > "$work/warm.log" 2>&1 || { cat "$work/warm.log"; exit 1; }
t2=$(now)

awk -v a="$t0" -v b="$t1" -v c="$t2" -v n="$n" -v cores="$(nproc)" -v cold="$(tail -n 1 "$work/cold.log")" -v warm="$(tail -n 1 "$work/warm.log")" 'BEGIN {
  printf "studies:           %d (cores: %s)\n", n, cores
  printf "cold build:        %6.2f s   (%s)\n", b - a, cold
  printf "no-change rebuild: %6.2f s   (%s)\n", c - b, warm
  printf "ratio cold/no-change: %.1f\n", (b - a) / (c - b)
}'
