#!/usr/bin/env python3
"""Compares two captures made by tests/tools/capture.sh (before and after a change).

Every compilation present in both must have a byte-identical manifest; reports are compared too
and listed when they differ. Compilations present on one side only are listed (tests added or
removed). Exit status 1 when any manifest differs, else 0.
"""
import difflib
import pathlib
import sys


def load(folder):
    d = pathlib.Path(folder)
    return {p.stem: p for p in d.glob("*.json")}, sorted(p.name for p in d.glob("*.differs-*"))


def main():
    before, before_odd = load(sys.argv[1])
    after, after_odd = load(sys.argv[2])
    both = sorted(set(before) & set(after))
    manifest_diffs, report_diffs = [], []
    for key in both:
        if before[key].read_bytes() != after[key].read_bytes():
            manifest_diffs.append(key)
        hb, ha = before[key].with_suffix(".html"), after[key].with_suffix(".html")
        if hb.exists() and ha.exists() and hb.read_bytes() != ha.read_bytes():
            report_diffs.append(key)
    print(f"{len(both)} compilations in both captures; {len(set(before) - set(after))} only before, "
          f"{len(set(after) - set(before))} only after")
    print(f"manifests differing: {len(manifest_diffs)}; reports differing: {len(report_diffs)}")
    for odd in before_odd + after_odd:
        print(f"non-deterministic within one capture: {odd}")
    for key in manifest_diffs[:20]:
        print(f"--- manifest {key}")
        a = before[key].read_text(encoding="utf-8").splitlines()
        b = after[key].read_text(encoding="utf-8").splitlines()
        sys.stdout.writelines(line + "\n" for line in list(difflib.unified_diff(a, b, lineterm="", n=2))[:40])
    for key in report_diffs[:10]:
        print(f"--- report {key}")
        a = before[key].with_suffix(".html").read_text(encoding="utf-8").splitlines()
        b = after[key].with_suffix(".html").read_text(encoding="utf-8").splitlines()
        sys.stdout.writelines(line + "\n" for line in list(difflib.unified_diff(a, b, lineterm="", n=1))[:30])
    return 1 if manifest_diffs or before_odd or after_odd else 0


if __name__ == "__main__":
    sys.exit(main())
