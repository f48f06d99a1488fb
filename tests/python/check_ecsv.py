"""Reads Nivalis' ECSV output back with astropy, an outside client of the format.

Runs `nivalis model --format ecsv` and `--format json` on every demo disk and
checks with `astropy.table.Table.read` (format ascii.ecsv) that: the columns
and units are the documented ones, undefined ratios come back masked, the
values equal the JSON export (same run) to the 7 significant digits ECSV
carries, and the metadata carry the program version, the resolved disk file
(which parses and validates again with `nivalis check`) and its hash.

Run from the repository root: python3 tests/python/check_ecsv.py
Prints a final line "N passed, M failed" and exits non-zero on any failure.
"""

import json
import math
import pathlib
import subprocess
import sys
import tempfile

try:
    from astropy.table import Table
    import astropy.units as u
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


def nivalis(*args):
    return subprocess.run(
        ["cargo", "run", "--quiet", "-p", "nivalis-cli", "--", *args],
        cwd=ROOT, check=True, capture_output=True, text=True,
    ).stdout


EXPECTED_UNITS = {
    "radius_au": u.AU,
    "midplane_temperature_k": u.K,
    "midplane_density_h_cm3": u.cm ** -3,
}

for disk in sorted((ROOT / "demo_disks").glob("*.json")):
    name = disk.name
    with tempfile.TemporaryDirectory() as tmp:
        ecsv_path = pathlib.Path(tmp) / "model.ecsv"
        ecsv_path.write_text(nivalis("model", str(disk), "--format", "ecsv"))
        table = Table.read(ecsv_path, format="ascii.ecsv")
        data = json.loads(nivalis("model", str(disk), "--format", "json"))

        for column, unit in EXPECTED_UNITS.items():
            check(table[column].unit == unit, f"{name}: {column} unit {table[column].unit} != {unit}")
        for column in ["c_to_o_gas", "c_to_o_ice", "c_to_o_solid", "ice_fraction_H2O", "ice_fraction_CO"]:
            check(column in table.colnames, f"{name}: column {column} missing")
            check(table[column].unit is None, f"{name}: {column} should be dimensionless")
        check(len(table) == len(data["data"]["radius_au"]), f"{name}: row count")

        worst = 0.0
        masks_agree = True
        for column in table.colnames:
            values = data["data"][column]
            col = table[column]
            mask = getattr(col, "mask", [False] * len(col))
            for i, expected in enumerate(values):
                if expected is None:
                    masks_agree &= bool(mask[i])
                    continue
                masks_agree &= not bool(mask[i])
                got = float(col[i])
                if expected != 0.0:
                    worst = max(worst, abs(got / expected - 1.0))
                else:
                    worst = max(worst, abs(got))
        check(masks_agree, f"{name}: undefined cells (null in JSON) must be masked in ECSV and only those")
        # 7 significant digits: relative rounding error at most 5e-7.
        check(worst <= 5.0000001e-7, f"{name}: ECSV differs from JSON by {worst:.3e} relative")

        meta = table.meta
        check(meta.get("program", "").startswith("nivalis "), f"{name}: program version in metadata")
        check(meta.get("disk_hash") == data["disk_hash"], f"{name}: disk hash agrees with JSON export")
        check(len(meta.get("disk_hash", "")) == 12, f"{name}: disk hash is 12 hex digits")
        resolved = json.loads(meta["disk_file"])
        check(resolved.get("schema") == "nivalis-disk/1", f"{name}: resolved disk carries its schema")
        check(resolved == data["disk"], f"{name}: resolved disk equals the JSON export's")
        resolved_path = pathlib.Path(tmp) / "resolved.json"
        resolved_path.write_text(json.dumps(resolved))
        check("valid" in nivalis("check", str(resolved_path)), f"{name}: resolved disk validates")
        methods = meta.get("methods", [])
        check(len(methods) >= 5 and all(m.get("references") for m in methods), f"{name}: methods with references")
        # Total temperature sanity: physical and finite.
        check(all(math.isfinite(float(t)) and float(t) > 0 for t in table["midplane_temperature_k"]), f"{name}: temperatures finite and positive")

print(f"{passed} passed, {failed} failed")
sys.exit(1 if failed else 0)
