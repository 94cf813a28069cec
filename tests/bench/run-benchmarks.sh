#!/usr/bin/env bash
# Times whole `studypress build` processes and writes a Markdown table.
#
#   tests/bench/run-benchmarks.sh [--cli PATH] [--sizes 1000000,10000000] [--runs N]
#                                 [--work DIR] [--out FILE] [--label TEXT]
#
#   --cli PATH    the studypress executable to time (default: publish the CLI ReadyToRun into
#                 WORK/cli first, as a user would install it)
#   --sizes LIST  row counts of the large one-way and two-way studies (default 1000000,10000000)
#   --runs N      runs of the small study, the median is reported (default 10)
#   --work DIR    scratch folder for the CLI, the generated data and the reports
#                 (default /tmp/studypress-bench; the data are never committed)
#   --out FILE    also write the table to FILE
#   --label TEXT  a heading for the table (e.g. "before", "after")
#
# Wall time and peak resident memory come from /usr/bin/time -v. CSV ingest throughput is measured
# in-process by the benchmark project's `ingest` command against `cat FILE > /dev/null`.
# If tests/bench/batch-200.sh exists its output is appended to the table.
set -euo pipefail

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
root="$(cd "$here/../.." && pwd)"
work=/tmp/studypress-bench
cli=""
sizes=1000000,10000000
runs=10
out=""
label=""
while [ $# -gt 0 ]; do
  case "$1" in
    --cli) cli="$2"; shift 2 ;;
    --sizes) sizes="$2"; shift 2 ;;
    --runs) runs="$2"; shift 2 ;;
    --work) work="$2"; shift 2 ;;
    --out) out="$2"; shift 2 ;;
    --label) label="$2"; shift 2 ;;
    -h|--help) sed -n '2,18p' "$0"; exit 0 ;;
    *) echo "run-benchmarks.sh: unknown option $1" >&2; exit 2 ;;
  esac
done

[ -x /usr/bin/time ] || { echo "run-benchmarks.sh: /usr/bin/time is needed (apt-get install time)" >&2; exit 2; }
mkdir -p "$work"
studies="$work/studies"
reports="$work/reports"
mkdir -p "$reports"

if [ -z "$cli" ]; then
  echo "publishing the CLI (ReadyToRun) into $work/cli ..." >&2
  dotnet publish "$root/src/StudyPress.Cli" -c Release -r linux-x64 --self-contained false -p:PublishAot=false \
    -p:PublishReadyToRun=true -o "$work/cli" >"$work/publish.log" 2>&1 \
    || { cat "$work/publish.log" >&2; exit 1; }
  cli="$work/cli/studypress"
fi

echo "building the benchmark project into $work/bench ..." >&2
dotnet build "$root/tests/StudyPress.Benchmarks" -c Release -o "$work/bench" >"$work/bench-build.log" 2>&1 \
  || { cat "$work/bench-build.log" >&2; exit 1; }

echo "generating studies into $studies ..." >&2
python3 "$here/gen-studies.py" "$studies" --sizes "$sizes"

flags=(--out "$reports")
help="$("$cli" build --help 2>&1 || true)"
if grep -q -- '--force' <<<"$help"; then flags+=(--force); fi
if grep -q -- '--quiet' <<<"$help"; then flags+=(--quiet); fi

# time_build STUDY -> prints "SECONDS KB", or "failed MESSAGE" when the build fails.
time_build() {
  local study="$1"
  local t="$work/time.txt"
  if ! ( cd "$studies" && /usr/bin/time -v -o "$t" "$cli" build "$study" "${flags[@]}" >/dev/null 2>"$work/stderr.txt" ); then
    echo "failed $(grep -v -e '^Command exited' -e '^\s' "$work/stderr.txt" | head -1 | cut -c1-100)"
    return 0
  fi
  local wall kb
  wall=$(awk -F': ' '/Elapsed \(wall clock\)/ {print $2}' "$t")
  kb=$(awk -F': ' '/Maximum resident set size/ {print $2}' "$t")
  # wall is [h:]m:ss.ss
  awk -v w="$wall" -v kb="$kb" 'BEGIN { n = split(w, p, ":"); s = 0; for (i = 1; i <= n; i++) s = s * 60 + p[i]; printf "%.2f %d\n", s, kb }'
}

mb() { awk -v kb="$1" 'BEGIN { printf "%.0f MB", kb / 1024 }'; }

table="$work/table.md"
{
  [ -n "$label" ] && printf '### %s\n\n' "$label"
  echo "| case | wall time | peak memory |"
  echo "|---|---:|---:|"
} >"$table"

# 1. Small study, cold process: median of N runs (after one warm-up of the disk cache).
time_build small.md >/dev/null
walls=()
kbs=()
for _ in $(seq 1 "$runs"); do
  read -r w k < <(time_build small.md)
  walls+=("$w"); kbs+=("$k")
done
median_wall=$(printf '%s\n' "${walls[@]}" | sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}')
median_kb=$(printf '%s\n' "${kbs[@]}" | sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}')
figs=$(grep -o '<figure' "$reports/small.html" | wc -l || true)
echo "| small study (40 rows, summary + anova + assumptions + posthoc, $figs figures), cold process, median of $runs | ${median_wall} s | $(mb "$median_kb") |" >>"$table"

# 2. Large studies.
IFS=, read -r -a size_list <<<"$sizes"
for rows in "${size_list[@]}"; do
  for kind in oneway twoway; do
    read -r w k < <(time_build "$kind-$rows.md")
    if [ "$w" = failed ]; then cells="failed: $k | –"; else cells="${w} s | $(mb "$k")"; fi
    case $kind in
      oneway) what="one-way (5 groups), summary + anova + assumptions" ;;
      twoway) what="two-way (3 × 4, interaction), anova + assumptions" ;;
    esac
    echo "| $(printf "%'d" "$rows" 2>/dev/null || echo "$rows") rows, $what | $cells |" >>"$table"
  done
done

# 3. CSV ingest throughput against the raw read speed of the same file.
largest="${size_list[${#size_list[@]}-1]}"
csv="$studies/oneway-$largest.csv"
bytes=$(stat -c %s "$csv")
cat "$csv" >/dev/null
start=$(date +%s.%N); cat "$csv" >/dev/null; end=$(date +%s.%N)
raw=$(awk -v b="$bytes" -v s="$start" -v e="$end" 'BEGIN { printf "%.0f", b / 1048576 / (e - s) }')
ingest=$(dotnet "$work/bench/StudyPress.Benchmarks.dll" ingest "$csv" 2>/dev/null | awk '/MB\/s/ {print $1}' | tail -1)
{
  echo ""
  echo "| CSV ingest ($(mb $((bytes / 1024))) file, $largest rows, one numeric + one factor column) | throughput |"
  echo "|---|---:|"
  echo "| \`cat file > /dev/null\` (raw read, page cache warm) | ${raw} MB/s |"
  echo "| CsvLoader.Load (hash + decode + parse + centre), best of 3 | ${ingest:-?} MB/s |"
} >>"$table"

# 4. The 200-study batch belongs to tests/bench/batch-200.sh.
if [ -x "$here/batch-200.sh" ]; then
  { echo ""; echo "Batch of 200 studies (tests/bench/batch-200.sh):"; echo ""; "$here/batch-200.sh" 2>&1 | sed 's/^/    /'; } >>"$table"
else
  { echo ""; echo "Batch of 200 studies: measured by tests/bench/batch-200.sh (not present in this checkout)."; } >>"$table"
fi

cat "$table"
if [ -n "$out" ]; then cp "$table" "$out"; fi
