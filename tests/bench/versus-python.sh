#!/usr/bin/env bash
# Times the StudyPress CLI against the same work done with the Python stack (pandas, SciPy,
# statsmodels, matplotlib; tests/bench/versus-python.py) and prints the ratios.
#
#   tests/bench/versus-python.sh [--cli PATH] [--rows 1000000] [--runs 5] [--work DIR] [--out FILE]
#
#   --cli PATH   the studypress executable (default: publish the CLI ReadyToRun into WORK/cli,
#                as tests/bench/run-benchmarks.sh does)
#   --rows LIST  row counts of the large one-way studies (default 1000000; e.g. 1000000,10000000)
#   --runs N     whole processes per case; the median is reported (default 5)
#   --work DIR   scratch folder (default /tmp/studypress-bench; data are generated, never committed)
#   --out FILE   also write the table to FILE
#
# Cases: the small study (40 rows, 4 groups) and a one-way study of each row count (5 groups), both
# with summary, anova, assumptions and Tukey post-hoc, with the figures StudyPress draws for them.
# Python needs Debian's python3-pandas python3-scipy python3-statsmodels python3-matplotlib for
# /usr/bin/python3; the script installs them with apt-get when it runs as root and they are missing,
# otherwise it says what to install. Wall time and peak resident memory come from /usr/bin/time -v.
# The ratio is Python's median time / StudyPress's median time (above 1: StudyPress is faster).
set -euo pipefail

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
root="$(cd "$here/../.." && pwd)"
work=/tmp/studypress-bench
cli=""
rows=1000000
runs=5
out=""
while [ $# -gt 0 ]; do
  case "$1" in
    --cli) cli="$2"; shift 2 ;;
    --rows) rows="$2"; shift 2 ;;
    --runs) runs="$2"; shift 2 ;;
    --work) work="$2"; shift 2 ;;
    --out) out="$2"; shift 2 ;;
    -h|--help) sed -n '2,19p' "$0"; exit 0 ;;
    *) echo "versus-python.sh: unknown option $1" >&2; exit 2 ;;
  esac
done

# Debian's Python with Debian's packages (a python3 earlier on PATH, e.g. pyenv, would not see them).
py=/usr/bin/python3
packages="python3-pandas python3-scipy python3-statsmodels python3-matplotlib"
have_stack() { [ -x "$py" ] && "$py" -c 'import pandas, scipy, statsmodels, matplotlib' 2>/dev/null; }
if ! have_stack || [ ! -x /usr/bin/time ]; then
  if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null; then
    echo "installing $packages time with apt-get ..." >&2
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -q >/dev/null
    # shellcheck disable=SC2086
    apt-get install -y -q --no-install-recommends python3 $packages time >"$work.apt.log" 2>&1 \
      || { cat "$work.apt.log" >&2; exit 1; }
  else
    echo "versus-python.sh: needs /usr/bin/python3 with pandas, SciPy, statsmodels and matplotlib, and /usr/bin/time:" >&2
    echo "  sudo apt-get install $packages time" >&2
    exit 2
  fi
fi
have_stack || { echo "versus-python.sh: $py still cannot import the Python stack" >&2; exit 1; }

mkdir -p "$work"
studies="$work/studies"
reports="$work/versus"
mkdir -p "$reports"

if [ -z "$cli" ]; then
  echo "publishing the CLI (ReadyToRun) into $work/cli ..." >&2
  dotnet publish "$root/src/StudyPress.Cli" -c Release -r linux-x64 --self-contained false -p:PublishAot=false \
    -p:PublishReadyToRun=true -o "$work/cli" >"$work/publish.log" 2>&1 \
    || { cat "$work/publish.log" >&2; exit 1; }
  cli="$work/cli/studypress"
fi

echo "generating studies into $studies ..." >&2
"$py" "$here/gen-studies.py" "$studies" --sizes "$rows"

# The large studies of gen-studies.py have no post-hoc block; these add Tukey on the same data.
IFS=, read -r -a row_list <<<"$rows"
for n in "${row_list[@]}"; do
  cat >"$studies/versus-$n.md" <<EOF
---
title: Benchmark - one-way study with Tukey, $n rows
data:
  d: oneway-$n.csv
response: y
factors:
  group:
    levels: [g1, g2, g3, g4, g5]
order: run
---

\`\`\`summary groups
\`\`\`

\`\`\`anova main
factors: [group]
\`\`\`

\`\`\`assumptions checks
of: main
\`\`\`

\`\`\`posthoc pairs
of: main
method: tukey
\`\`\`

F = [=main.group.f].
EOF
done

flags=(--out "$reports/sp")
help="$("$cli" build --help 2>&1 || true)"
if grep -q -- '--force' <<<"$help"; then flags+=(--force); fi
if grep -q -- '--quiet' <<<"$help"; then flags+=(--quiet); fi

# timed CMD... -> prints "SECONDS KB" (or exits on failure).
timed() {
  local t="$work/versus-time.txt"
  if ! /usr/bin/time -v -o "$t" "$@" >/dev/null 2>"$work/versus-stderr.txt"; then
    echo "versus-python.sh: failed: $*" >&2
    cat "$work/versus-stderr.txt" >&2
    exit 1
  fi
  local wall kb
  wall=$(awk -F': ' '/Elapsed \(wall clock\)/ {print $2}' "$t")
  kb=$(awk -F': ' '/Maximum resident set size/ {print $2}' "$t")
  awk -v w="$wall" -v kb="$kb" 'BEGIN { n = split(w, p, ":"); s = 0; for (i = 1; i <= n; i++) s = s * 60 + p[i]; printf "%.2f %d\n", s, kb }'
}

median() { sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }

# measure NAME CMD... -> sets M_WALL and M_KB (medians of $runs, after one unmeasured warm-up).
measure() {
  local walls=() kbs=() w k
  timed "$@" >/dev/null
  for _ in $(seq 1 "$runs"); do
    read -r w k < <(timed "$@")
    walls+=("$w"); kbs+=("$k")
  done
  M_WALL=$(printf '%s\n' "${walls[@]}" | median)
  M_KB=$(printf '%s\n' "${kbs[@]}" | median)
}

mb() { awk -v kb="$1" 'BEGIN { printf "%.0f MB", kb / 1024 }'; }

table="$work/versus.md"
{
  echo "| study | StudyPress | Python stack | Python time / StudyPress time |"
  echo "|---|---:|---:|---:|"
} >"$table"

run_case() {
  local label="$1" study="$2" csv="$3" levels="$4"
  measure bash -c 'cd "$1" && shift && exec "$@"' _ "$studies" "$cli" build "$study" "${flags[@]}"
  local sw="$M_WALL" sk="$M_KB"
  measure "$py" "$here/versus-python.py" "$studies/$csv" "$reports/py-${study%.md}" --levels "$levels" --posthoc
  local pw="$M_WALL" pk="$M_KB"
  local ratio
  ratio=$(awk -v p="$pw" -v s="$sw" 'BEGIN { printf "%.2f", p / s }')
  echo "| $label | $sw s, $(mb "$sk") | $pw s, $(mb "$pk") | $ratio |" >>"$table"
}

run_case "small (40 rows, 4 groups)" small.md small.csv g1,g2,g3,g4
for n in "${row_list[@]}"; do
  run_case "one-way, $(printf "%'d" "$n" 2>/dev/null || echo "$n") rows, 5 groups" "versus-$n.md" "oneway-$n.csv" g1,g2,g3,g4,g5
done

{
  echo ""
  echo "Median of $runs whole processes each (wall time, peak resident memory); summary, anova,"
  echo "assumptions and Tukey with their figures. $(nproc) cores; load average at the end: $(cut -d' ' -f1-3 /proc/loadavg)."
} >>"$table"

cat "$table"
if [ -n "$out" ]; then cp "$table" "$out"; fi
