#!/usr/bin/env bash
# Times one `studypress build` of a large nested study analysed by REML and prints wall time,
# peak resident memory and the outcome (not a test: nothing asserts on time).
#
#   tests/bench/reml-nested.sh [--cli PATH] [--work DIR] [--suppliers N] [--batches N]
#                              [--operators N] [--repeats N]
#
#   --cli PATH      the studypress executable (default: build the CLI in Release into WORK/cli)
#   --work DIR      scratch folder for the CLI, the generated study and its report
#                   (default /tmp/studypress-reml-bench; nothing is committed)
#   --suppliers N   suppliers, a fixed treatment (default 50)
#   --batches N     batches per supplier, random and nested in supplier (default 10)
#   --operators N   operators, random, each measuring every batch (default 5)
#   --repeats N     measurements per batch and operator (default 2; a few cells get one fewer
#                   or one more, so the data are unbalanced and the total stays
#                   suppliers × batches × operators × repeats: 5,000 rows by default)
#
# Invented data from a fixed linear congruential sequence. The model has random terms batch
# (500 levels), operator, supplier × operator and batch × operator (2,500 levels) besides the
# residual, and 50 fixed-effect columns: 3,305 columns in all, so a fit that factorizes every
# column densely is out of reach. Wall time and peak memory come from /usr/bin/time -v.
set -euo pipefail

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
root="$(cd "$here/../.." && pwd)"
work=/tmp/studypress-reml-bench
cli=""
suppliers=50
batches=10
operators=5
repeats=2
while [ $# -gt 0 ]; do
  case "$1" in
    --cli) cli="$2"; shift 2 ;;
    --work) work="$2"; shift 2 ;;
    --suppliers) suppliers="$2"; shift 2 ;;
    --batches) batches="$2"; shift 2 ;;
    --operators) operators="$2"; shift 2 ;;
    --repeats) repeats="$2"; shift 2 ;;
    -h|--help) sed -n '2,23p' "$0"; exit 0 ;;
    *) echo "reml-nested.sh: unknown option $1" >&2; exit 2 ;;
  esac
done

[ -x /usr/bin/time ] || { echo "reml-nested.sh: /usr/bin/time is needed (apt-get install time)" >&2; exit 2; }
mkdir -p "$work/study/data" "$work/out"

if [ -z "$cli" ]; then
  echo "building the CLI (Release) into $work/cli ..." >&2
  dotnet build "$root/src/StudyPress.Cli" -c Release -o "$work/cli" >"$work/build.log" 2>&1 \
    || { cat "$work/build.log" >&2; exit 1; }
  cli="$work/cli/studypress"
fi

python3 - "$work/study" "$suppliers" "$batches" "$operators" "$repeats" <<'EOF'
import sys
folder, S, B, O, R = sys.argv[1], *map(int, sys.argv[2:])
state = 20261204
def u():
    global state
    state = (state * 6364136223846793005 + 1442695040888963407) % (1 << 64)
    return (state >> 11) / float(1 << 53)
op_effect = [0.3 * u() for _ in range(O)]
rows = ["supplier,batch,operator,viscosity"]
cell = 0
for s in range(S):
    for b in range(B):
        batch_effect = 0.6 * u()
        for o in range(O):
            cell += 1
            reps = R - 1 if cell % 50 == 0 else R + 1 if cell % 50 == 25 else R
            inter = 0.1 * u()
            for _ in range(reps):
                y = 12 + 0.02 * (s % 7) + batch_effect + op_effect[o] + inter + 0.2 * u()
                rows.append(f"S{s + 1:03d},S{s + 1:03d}-B{b + 1:02d},op-{o + 1},{y:.4f}")
with open(f"{folder}/data/viscosity.csv", "w", encoding="utf-8", newline="\n") as f:
    f.write("\n".join(rows) + "\n")
with open(f"{folder}/study.md", "w", encoding="utf-8", newline="\n") as f:
    f.write(f"""---
title: REML benchmark (invented data)
data:
  lab: data/viscosity.csv
response: viscosity
factors:
  supplier:
    label: Supplier
  batch:
    role: random
    within: supplier
  operator:
    role: random
---

{len(rows) - 1} invented rows: {S} suppliers, {S * B} batches, {O} operators.

```anova main
fit: reml
```
""")
EOF

flags=(--out "$work/out")
help="$("$cli" build --help 2>&1 || true)"
if grep -q -- '--force' <<<"$help"; then flags+=(--force); fi
t="$work/time.txt"
set +e
( cd "$work/study" && /usr/bin/time -v -o "$t" "$cli" build study.md "${flags[@]}" >"$work/stdout.txt" 2>"$work/stderr.txt" )
status=$?
set -e
wall=$(awk -F': ' '/Elapsed \(wall clock\)/ {print $2}' "$t")
kb=$(awk -F': ' '/Maximum resident set size/ {print $2}' "$t")
rows=$(($(wc -l <"$work/study/data/viscosity.csv") - 1))
echo "rows: $rows; exit status: $status; wall: $wall; peak resident memory: $((kb / 1024)) MB"
if [ "$status" -ne 0 ]; then
  head -3 "$work/stderr.txt"
fi
