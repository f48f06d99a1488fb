"""Reads Nivalis' CSV exports with two outside readers that skip '#' lines.

Every CSV file opens with '#' provenance lines (issue 11 item 6): the program
version, the disk hash and where to get the resolved disk file. This script
checks, for the structure, model, elements, map, planet and fit tables of
every demo disk (the fit and planet on one disk), that:

- astropy (`Table.read(..., format="ascii.csv", comment="#")`) and Python's
  csv module (after dropping the '#' lines) both read the table, with the same
  column names, the same number of rows and the same values;
- the values equal the JSON export of the same command to the 7 significant
  digits CSV carries, and empty cells are exactly the JSON's nulls;
- the provenance lines give the workspace version and the JSON export's disk
  hash, and following them works: the "disk" field of `nivalis model DISK
  --format json`, saved as a file, gives a CSV with the same hash.

Run from the repository root: python3 tests/python/check_csv.py
Prints a final line "N passed, M failed" and exits non-zero on any failure.
"""

import csv
import io
import json
import math
import pathlib
import re
import subprocess
import sys
import tempfile

try:
    from astropy.table import Table
except ImportError:
    print("astropy is missing: python3 -m pip install astropy")
    sys.exit(1)

ROOT = pathlib.Path(__file__).resolve().parents[2]
VERSION = re.search(r'^version = "([^"]+)"', (ROOT / "Cargo.toml").read_text(), re.M).group(1)
passed = 0
failed = 0


def check(condition, what):
    global passed, failed
    if condition:
        passed += 1
    else:
        failed += 1
        print(f"FAIL: {what}")


def nivalis(*args):
    return subprocess.run(
        ["cargo", "run", "--quiet", "-p", "nivalis-cli", "--", *args],
        cwd=ROOT, check=True, capture_output=True, text=True,
    ).stdout


def provenance(text, label):
    lines = text.splitlines()
    comments = [l for l in lines if l.startswith("#")]
    check(lines[:len(comments)] == comments, f"{label}: '#' lines come first, before the header")
    check(len(comments) == 3, f"{label}: three provenance lines, got {comments}")
    check(comments and comments[0] == f"# nivalis {VERSION}", f"{label}: version line {comments[:1]}")
    m = re.match(r"# disk hash ([0-9a-f]{12}): ", comments[1]) if len(comments) > 1 else None
    check(m is not None, f"{label}: disk hash line {comments[1:2]}")
    check(len(comments) > 2 and "nivalis model DISK --format json" in comments[2], f"{label}: resolved-disk line {comments[2:3]}")
    return m.group(1) if m else None


def read_both(text, label):
    """The table as astropy reads it and as the csv module reads it."""
    table = Table.read(text, format="ascii.csv", comment="#")
    rows = list(csv.reader(io.StringIO("".join(l + "\n" for l in text.splitlines() if not l.startswith("#")))))
    header, body = rows[0], rows[1:]
    check(list(table.colnames) == header, f"{label}: astropy and csv see the same columns")
    check(len(table) == len(body), f"{label}: astropy and csv see the same rows ({len(table)} vs {len(body)})")
    for j, name in enumerate(header):
        col = table[name]
        for i in (0, len(body) // 2, len(body) - 1):
            cell = body[i][j]
            masked = bool(getattr(col, "mask", None) is not None and col.mask[i])
            if cell == "":
                check(masked, f"{label}: {name}[{i}] empty in csv but not masked in astropy")
            else:
                check(not masked and float(col[i]) == float(cell), f"{label}: {name}[{i}] astropy {col[i]} vs csv {cell}")
    return header, body


def same_as_json(header, body, data, label):
    check(header == list(data), f"{label}: CSV columns equal the JSON export's")
    bad = 0
    for j, name in enumerate(header):
        values = data.get(name, [])
        if len(values) != len(body):
            bad += 1
            continue
        for i, row in enumerate(body):
            expected = values[i]
            if expected is None or row[j] == "":
                bad += (expected is None) != (row[j] == "")
            elif not math.isclose(float(row[j]), expected, rel_tol=5e-7, abs_tol=1e-300):
                bad += 1
    check(bad == 0, f"{label}: {bad} cells differ from the JSON export")


with tempfile.TemporaryDirectory() as tmp:
    disks = sorted((ROOT / "demo_disks").glob("*.json"))
    check(len(disks) >= 5, "the demo disks are found")
    for disk in disks:
        for command in (["structure"], ["model"], ["elements"], ["map", "--quantity", "ice_fraction:CO"]):
            label = f"{disk.name} {' '.join(command)}"
            text = nivalis(command[0], str(disk), *command[1:])
            js = json.loads(nivalis(command[0], str(disk), *command[1:], "--format", "json"))
            digest = provenance(text, label)
            check(digest == js["disk_hash"], f"{label}: CSV hash {digest} differs from the JSON's {js['disk_hash']}")
            header, body = read_both(text, label)
            same_as_json(header, body, js["data"], label)

    # The resolved disk, got as the CSV's third line says, gives back the same hash.
    disk = ROOT / "demo_disks" / "planet_host_example.json"
    resolved = json.loads(nivalis("model", str(disk), "--format", "json"))["disk"]
    saved = pathlib.Path(tmp) / "resolved.json"
    saved.write_text(json.dumps(resolved))
    original = provenance(nivalis("model", str(disk)), "original")
    again = provenance(nivalis("model", str(saved)), "resolved")
    check(original is not None and original == again, f"the resolved disk reproduces the hash ({original} vs {again})")

    # Planet (one row) and fit (long-form map) tables.
    text = nivalis("planet", str(disk), "--radius-au", "5", "--solid-to-gas", "0.02", "--format", "csv")
    check(provenance(text, "planet") == original, "planet CSV carries the disk hash")
    header, body = read_both(text, "planet")
    check(len(body) == 1 and "c_to_o" in " ".join(header), f"planet: one row with a C/O column ({header})")
    fit = ["fit", str(disk), "--c-to-o", "0.8", "--c-to-o-sigma", "0.1"]
    text = nivalis(*fit, "--format", "csv")
    check(provenance(text, "fit") == original, "fit CSV carries the disk hash")
    header, body = read_both(text, "fit")
    same_as_json(header, body, json.loads(nivalis(*fit, "--format", "json"))["data"], "fit")

print(f"{passed} passed, {failed} failed")
sys.exit(1 if failed else 0)
