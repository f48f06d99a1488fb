"""Checks the goodness of fit of `nivalis fit` against scipy, an outside reference library.

Runs `nivalis fit ... --format json` on the default disk and on the worked-example disk for
several observations (C/O alone, with one or three metallicities, an impossible C/O) and
checks that: fit.goodness.p_value equals scipy.stats.chi2.sf(chi2_min, degrees_of_freedom)
to 1e-10 relative; the degrees of freedom are the number of observables minus 2, floored
at 1; `acceptable` is p >= 0.01; an unacceptable fit has no allowed radius at all.

Run from the repository root: python3 tests/python/check_fit_goodness.py
Prints a final line "N passed, M failed" and exits non-zero on any failure.
"""

import json
import pathlib
import subprocess
import sys
import tempfile

try:
    from scipy.stats import chi2
except ImportError:
    print("scipy is missing: python3 -m pip install scipy")
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


CASES = [
    (["--c-to-o", "0.8", "--c-to-o-sigma", "0.1"], 1),
    (["--c-to-o", "1.6", "--c-to-o-sigma", "0.05"], 1),
    (["--c-to-o", "0.55", "--c-to-o-sigma", "0.05", "--o-to-h-dex", "0.6", "--o-to-h-sigma", "0.1"], 2),
    (["--c-to-o", "0.45", "--c-to-o-sigma", "0.03", "--c-to-h-dex", "0.9", "--c-to-h-sigma", "0.1",
      "--o-to-h-dex", "-0.2", "--o-to-h-sigma", "0.1", "--m-to-h-dex", "0.8", "--m-to-h-sigma", "0.1"], 4),
]

with tempfile.TemporaryDirectory() as tmp:
    default = pathlib.Path(tmp) / "default.json"
    default.write_text("{}")
    # An envelope mixes its gas and its solids, so its C/O never exceeds the largest local C/O of
    # either phase: twice that plus 0.5, +- 0.05, is out of reach of the default disk.
    data = json.loads(nivalis("model", str(default), "--format", "json"))["data"]
    highest = max(v for k in ("c_to_o_gas", "c_to_o_solid") for v in data[k] if v is not None)
    out_of_reach = f"{2 * highest + 0.5:.6g}"
    CASES[1] = (["--c-to-o", out_of_reach, "--c-to-o-sigma", "0.05"], 1)
    for disk in [default, ROOT / "demo_disks" / "planet_host_example.json"]:
        for args, n_obs in CASES:
            what = f"{disk.name} {' '.join(args)}"
            fit = json.loads(nivalis("fit", str(disk), *args, "--format", "json"))["fit"]
            g = fit["goodness"]
            dof = max(n_obs - 2, 1)
            check(g["degrees_of_freedom"] == dof, f"{what}: degrees of freedom {g['degrees_of_freedom']} != {dof}")
            expected = chi2.sf(g["chi2_min"], dof)
            if expected > 1e-300:
                check(abs(g["p_value"] - expected) <= 1e-10 * expected, f"{what}: p {g['p_value']} vs scipy {expected}")
            else:
                check(g["p_value"] < 1e-290, f"{what}: p {g['p_value']} vs scipy {expected}")
            check(g["acceptable"] == (expected >= 0.01), f"{what}: acceptable {g['acceptable']} with p {expected}")
            if not g["acceptable"]:
                check(all(not a["one_sigma"] and not a["two_sigma"] for a in fit["allowed_radii"]), f"{what}: allowed radii of an unacceptable fit")
                check(bool(g.get("reason")), f"{what}: a reason for the unacceptable fit")
        impossible = json.loads(nivalis("fit", str(default), "--c-to-o", out_of_reach, "--c-to-o-sigma", "0.05", "--format", "json"))["fit"]
        check(impossible["goodness"]["acceptable"] is False, f"C/O = {out_of_reach} +- 0.05 on the default disk is unacceptable")

print(f"{passed} passed, {failed} failed")
sys.exit(1 if failed else 0)
