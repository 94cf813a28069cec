#!/usr/bin/env bash
# Font independence: renders the sample charts (SVG and PNG) twice, once normally and once with
# FONTCONFIG_FILE pointing at an empty fontconfig (no <dir>, so no system fonts are visible), and
# compares the SHA-256 of every output. Exits non-zero when any byte differs.
# Usage: tests/StudyPress.Charts.Tests/font-independence.sh   (from anywhere)
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
cat > "$work/fonts.conf" <<'CONF'
<?xml version="1.0"?>
<!DOCTYPE fontconfig SYSTEM "fonts.dtd">
<fontconfig>
  <cachedir>CACHE</cachedir>
</fontconfig>
CONF
sed -i "s|CACHE|$work/cache|" "$work/fonts.conf"
filter="FullyQualifiedName~Hashes_AllSamples_WrittenForFontIndependenceScript"
dotnet build "$here" -v q -nologo >/dev/null
STUDYPRESS_CHART_HASHES="$work/normal.txt" dotnet test "$here" --no-build --filter "$filter" -v q -nologo >/dev/null
FONTCONFIG_FILE="$work/fonts.conf" FONTCONFIG_PATH="$work" STUDYPRESS_CHART_HASHES="$work/nofonts.txt" \
  dotnet test "$here" --no-build --filter "$filter" -v q -nologo >/dev/null
if ! [ -s "$work/normal.txt" ] || ! [ -s "$work/nofonts.txt" ]; then
  echo "font-independence: no hashes written" >&2
  exit 2
fi
if diff -u "$work/normal.txt" "$work/nofonts.txt"; then
  echo "font-independence: identical ($(wc -l < "$work/normal.txt") charts, SVG and PNG)"
else
  echo "font-independence: outputs differ without system fonts" >&2
  exit 1
fi
