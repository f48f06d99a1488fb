"""Every non-printable character in a disk's name and notes survives an ECSV
export and a read by astropy (issue 15 item 9).

For each of U+2028, U+2029, U+0085, U+007F, the C1 controls U+0080-U+009F,
U+FFFE, a tab and an ordinary control (U+0001), a disk whose name and notes
hold that character is exported with `nivalis model --format ecsv` and read
with `astropy.table.Table.read(format="ascii.ecsv")`, an outside reader of the
format (YAML 1.1 header, ECSV 1.0). The disk file stored in the metadata must
give back the exact name and notes, and the table its 200 rows.

Run from the repository root: python3 tests/python/check_ecsv_escapes.py
Prints a final line "N passed, M failed" and exits non-zero on any failure.
"""

import json
import pathlib
import subprocess
import sys
import tempfile

try:
    from astropy.table import Table
except ImportError:
    print("astropy is missing: python3 -m pip install astropy")
    sys.exit(1)

ROOT = pathlib.Path(__file__).resolve().parents[2]
passed = 0
failed = 0


def check(condition, what):
    global passed, failed
    if condition:
        passed += 1
    else:
        failed += 1
        print(f"FAIL: {what}")


subprocess.run(["cargo", "build", "--quiet", "-p", "nivalis-cli"], cwd=ROOT, check=True)
BINARY = ROOT / "target" / "debug" / "nivalis"

CHARACTERS = ["\u2028", "\u2029", "\u0085", "\u007f", "\ufffe", "\t", "\u0001", "'", '"', "\\"]
CHARACTERS += [chr(c) for c in range(0x80, 0xA0)]

with tempfile.TemporaryDirectory() as tmp:
    for ch in CHARACTERS:
        label = f"U+{ord(ch):04X}"
        name = f"scenario{ch}one"
        notes = f"{ch}notes with {ch} inside{ch}"
        disk = pathlib.Path(tmp) / "disk.json"
        disk.write_text(json.dumps({"name": name, "notes": notes}), encoding="utf-8")
        run = subprocess.run([str(BINARY), "model", str(disk), "--format", "ecsv"], cwd=ROOT, capture_output=True)
        check(run.returncode == 0, f"{label}: export failed: {run.stderr!r}")
        if run.returncode != 0:
            continue
        path = pathlib.Path(tmp) / "model.ecsv"
        path.write_bytes(run.stdout)
        try:
            table = Table.read(path, format="ascii.ecsv")
        except Exception as e:  # astropy raises several kinds for a broken header
            check(False, f"{label}: astropy cannot read the ECSV: {type(e).__name__}: {e}")
            continue
        check(len(table) == 200, f"{label}: {len(table)} rows")
        stored = json.loads(table.meta["disk_file"])
        check(stored["name"] == name, f"{label}: name came back as {stored['name']!r}")
        check(stored["notes"] == notes, f"{label}: notes came back as {stored['notes']!r}")

print(f"{passed} passed, {failed} failed")
sys.exit(1 if failed else 0)
