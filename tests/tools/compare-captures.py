#!/usr/bin/env python3
"""Compares two captures made by tests/tools/capture.sh (before and after a change).

Every compilation present in both must have a byte-identical manifest (the study's path, which
names the checkout's folder, is replaced by a placeholder first); reports are compared too
and listed when they differ. Compilations present on one side only are listed (tests added or
removed, or tests whose inputs are random or name a server's port). Exit status 1 when any manifest differs, else 0.
"""
import difflib
import json
import re
import pathlib
import sys


def normalised(path):
    """The file's bytes with the study's path (relative to where the report went, so it names the
    checkout's folder) replaced by a placeholder; everything else is compared as is. The path is
    read from the file's own manifest (embedded in a report)."""
    data = path.read_bytes()
    m = re.search(rb'"study": \{\s*"path": "([^"]*)"', data)
    return data if m is None else data.replace(m.group(1), b"<study>")


def load(folder):
    d = pathlib.Path(folder)
    kept = {p.stem: p for p in d.glob("*.json")}
    # The same inputs built to two output folders differ only in the study's relative path.
    odd = sorted(p.name for p in d.glob("*.differs-*")
                 if normalised(p) != normalised(d / (p.name.split(".")[0] + "." + p.name.split(".")[1])))
    return kept, odd


def main():
    before, before_odd = load(sys.argv[1])
    after, after_odd = load(sys.argv[2])
    both = sorted(set(before) & set(after))
    manifest_diffs, report_diffs = [], []
    for key in both:
        if normalised(before[key]) != normalised(after[key]):
            manifest_diffs.append(key)
        hb, ha = before[key].with_suffix(".html"), after[key].with_suffix(".html")
        if hb.exists() and ha.exists() and normalised(hb) != normalised(ha):
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
