#!/usr/bin/env bash
# Regenerates StudyPressSans.ttf, the font subset that the charts measure and draw with and that
# the report embeds as a data: URI. Needs hb-subset (Debian: libharfbuzz-bin) and DejaVu Sans
# (Debian: fonts-dejavu-core). The licence of DejaVu/Bitstream Vera allows modified copies under
# a name without "Bitstream" or "Vera" (see LICENSE-DejaVu.txt).
#
# Kept: Basic Latin, Latin-1 Supplement, the Greek alphabet, and the signs statistics text uses:
# – — ‘ ’ “ ” • … − √ ∞ ≈ ≠ ≤ ≥. (², ³, ±, ×, ·, µ are in Latin-1.)
# Dropped: hinting (the charts draw unhinted), and the layout tables GSUB/GPOS/GDEF/kern, so a
# browser lays the text out with plain advance widths, exactly as the chart code measures it.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
src="${1:-/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf}"
hb-subset \
  --font-file="$src" \
  --unicodes="20-7E,A0-FF,391-3A1,3A3-3A9,3B1-3C9,2013,2014,2018,2019,201C,201D,2022,2026,2212,221A,221E,2248,2260,2264,2265" \
  --no-hinting \
  --drop-tables+=GSUB,GPOS,GDEF,kern,FFTM \
  --name-IDs=0,1,2,3,4,5,6 \
  --output-file="$here/StudyPressSans.ttf"
ls -l "$here/StudyPressSans.ttf"
sha256sum "$here/StudyPressSans.ttf"
