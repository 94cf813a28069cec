#!/usr/bin/env bash
# Captures the manifest and report of every compilation the examples and the test suite make, for
# checking that a change of structure changes no number. Usage:
#   tests/tools/capture.sh OUT_DIR            # this checkout
# then compare two captures (for example one made on a clean checkout of the base commit):
#   python3 tests/tools/compare-captures.py BEFORE_DIR AFTER_DIR
# Needs what the tests need (see .ci/run); takes as long as the test suite.
set -euo pipefail
out=$(realpath -m "$1")
cd "$(dirname "$0")/../.."
rm -rf "$out"; mkdir -p "$out"
export STUDYPRESS_CAPTURE_DIR="$out"
dotnet build StudyPress.sln -nologo -v q >/dev/null
for study in examples/*/study.md; do
  SOURCE_DATE_EPOCH=1700000000 dotnet run --no-build --project src/StudyPress.Cli -- build "$study" --out "$(mktemp -d)" >/dev/null
done
# The tests run as the README runs them (no SOURCE_DATE_EPOCH: some tests check its absence).
dotnet test StudyPress.sln --no-build -nologo 2>&1 | grep -E '^(Passed|Failed)!|^  Failed ' || true
echo "captured $(ls "$out"/*.json | wc -l) manifests in $out"
