#!/usr/bin/env python3
"""Compares two captures made by tests/tools/capture.sh (before and after a change).

Every compilation present in both must have a byte-identical manifest (the study's path, which
names the checkout's folder, is replaced by a placeholder first); reports are compared too
and listed when they differ. Compilations present on one side only are listed (tests added or
removed, or tests whose inputs are random or name a server's port). Exit status 1 when any manifest differs, else 0.

With `--tolerance REL` (a deliberate numerical change, such as a new algorithm for a
distribution), manifests are compared as JSON instead: every number may differ by at most REL
relative to the larger of the two magnitudes (numbers below 1e-300 in both count as equal);
anything else must be equal. It prints the largest relative difference found and where, and lists
the values beyond REL; exit status 1 when any value is beyond REL or any non-number differs.
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


def numeric_differences(a, b, path, out):
    """Walks two parsed manifests in step; appends (relative difference, path, a, b) per number
    pair that differs and (inf, path, a, b) for any other difference."""
    if isinstance(a, bool) or isinstance(b, bool):
        if a != b:
            out.append((float("inf"), path, a, b))
    elif isinstance(a, (int, float)) and isinstance(b, (int, float)):
        if a != b:
            scale = max(abs(a), abs(b))
            out.append((0.0 if scale < 1e-300 else abs(a - b) / scale, path, a, b))
    elif isinstance(a, dict) and isinstance(b, dict):
        if set(a) != set(b):
            out.append((float("inf"), path + "{keys}", sorted(set(a) - set(b)), sorted(set(b) - set(a))))
        for k in sorted(set(a) & set(b)):
            numeric_differences(a[k], b[k], f"{path}.{k}", out)
    elif isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            out.append((float("inf"), path + "[len]", len(a), len(b)))
        for i, (x, y) in enumerate(zip(a, b)):
            label = x.get("stat") if isinstance(x, dict) and "stat" in x else None
            numeric_differences(x, y, f"{path}[{i}{'=' + str(label) if label else ''}]", out)
    elif a != b:
        out.append((float("inf"), path, a, b))


def compare_with_tolerance(before, after, both, tolerance):
    worst, beyond, changed = (0.0, None, None, None), [], 0
    for key in both:
        if normalised(before[key]) == normalised(after[key]):
            continue
        changed += 1
        a = json.loads(normalised(before[key]))
        b = json.loads(normalised(after[key]))
        diffs = []
        numeric_differences(a, b, "", diffs)
        for d in diffs:
            if d[0] > worst[0]:
                worst = (d[0], key + d[1], d[2], d[3])
            if d[0] > tolerance:
                beyond.append((key,) + d)
    print(f"{len(both)} compilations in both captures; {changed} manifests not byte-identical")
    if worst[1] is None:
        print("largest relative difference: 0")
    else:
        print(f"largest relative difference: {worst[0]:.3g} at {worst[1]} ({worst[2]!r} -> {worst[3]!r})")
    print(f"values beyond {tolerance:g}: {len(beyond)}")
    for key, rel, path, a, b in beyond[:40]:
        print(f"  {key}{path}: {a!r} -> {b!r} (relative {rel:.3g})")
    return 1 if beyond else 0


def main():
    args = sys.argv[1:]
    tolerance = None
    if "--tolerance" in args:
        i = args.index("--tolerance")
        tolerance = float(args[i + 1])
        del args[i:i + 2]
    before, before_odd = load(args[0])
    after, after_odd = load(args[1])
    if tolerance is not None:
        both = sorted(set(before) & set(after))
        return max(compare_with_tolerance(before, after, both, tolerance), 1 if before_odd or after_odd else 0)
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
