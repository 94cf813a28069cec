#!/usr/bin/env bash
# Benchmark (not a test): start-up of the whole small study, native against JIT.
#
#   tests/bench/startup.sh --native PATH/studypress [--jit PATH/studypress.dll] [--runs N] [--study STUDY.md]
#
# Times `studypress --version` (start-up alone) and `studypress build STUDY.md --force` (default:
# examples/spray-nozzles) with hyperfine, as whole processes: "warm" after 3 warm-up runs; "cold"
# with the binary's folder, the study's folder and (for the JIT build) the .NET shared framework's assemblies dropped from the page cache before
# every run (posix_fadvise DONTNEED, which evicts only these files' clean pages). hyperfine reports
# wall time (mean ± sd, median) and the CPU time (user, system). Needs hyperfine and python3.
set -euo pipefail
root=$(cd "$(dirname "$0")/../.." && pwd)
native= jit= runs=20 study="$root/examples/spray-nozzles/study.md"
while [ $# -gt 0 ]; do
  case "$1" in
    --native) native=$2; shift 2;;
    --jit) jit=$2; shift 2;;
    --runs) runs=$2; shift 2;;
    --study) study=$2; shift 2;;
    *) echo "unknown option $1" >&2; exit 64;;
  esac
done
[ -n "$native" ] || { echo "usage: $0 --native PATH/studypress [--jit PATH/studypress.dll] [--runs N]" >&2; exit 64; }
work=$(mktemp -d "${TMPDIR:-/tmp}/studypress-startup.XXXXXX")
trap 'rm -rf "$work"' EXIT
cat > "$work/evict.py" <<'PY'
import os, sys
for top in sys.argv[1:]:
    for d, _, files in os.walk(top):
        for f in files:
            try:
                fd = os.open(os.path.join(d, f), os.O_RDONLY)
            except OSError:
                continue
            try:
                os.posix_fadvise(fd, 0, 0, os.POSIX_FADV_DONTNEED)
            finally:
                os.close(fd)
PY
dir=$(dirname "$study")
framework=$(dirname "$(dotnet --list-runtimes | sed -n 's/^Microsoft.NETCore.App \([^ ]*\) \[\(.*\)\]$/\2\/\1/p' | tail -n 1)/x")
cmd() { echo "$1 build $study --force --out $work/out-$2"; }

echo "== --version, warm (start-up alone: $runs runs after 3 warm-up runs)"
args=(-N --warmup 3 --runs "$runs" -n native "$native --version")
[ -n "$jit" ] && args+=(-n jit "dotnet $jit --version")
hyperfine "${args[@]}"

echo "== warm (median of $runs after 3 warm-up runs)"
args=(-N --warmup 3 --runs "$runs" -n native "$(cmd "$native" native)")
[ -n "$jit" ] && args+=(-n jit "$(cmd "dotnet $jit" jit)")
hyperfine "${args[@]}"

echo "== cold (page cache of the binary, the study and the framework dropped before each run; $runs runs)"
args=(-N --runs "$runs" --prepare "python3 $work/evict.py $(dirname "$native") $dir" -n native "$(cmd "$native" native)")
[ -n "$jit" ] && args+=(--prepare "python3 $work/evict.py $(dirname "$jit") $dir $framework" -n jit "$(cmd "dotnet $jit" jit)")
hyperfine "${args[@]}"
