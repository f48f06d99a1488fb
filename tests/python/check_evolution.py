"""Cross-checks the evolving disk (issue 13; docs/model.md section 12) with scipy.

1. The similarity solution of Lynden-Bell & Pringle 1974 in the form of Hartmann et al. 1998
   (eqs. 33-37), as Nivalis implements it, written again here: its mass integral by
   scipy.integrate.quad equals M0 T^(-1/(2(2-gamma))) (Hartmann et al. 1998 eq. 37), its mass
   falls at the accretion rate onto the star (dM/dt = -Mdot(r -> 0)), and it satisfies the
   viscous diffusion equation dSigma/dt = (3/r) d/dr[r^1/2 d/dr(nu Sigma r^1/2)] (checked by
   finite differences at several radii and times, to 1e-3: nested central differences), for gamma
   = 0.5, 1 and 1.5.
2. `nivalis evolve` on a disk with nu proportional to r (T = 280 K (r/au)^-1/2, gamma = 1) against
   that solution computed here with scipy.constants (G, k_B, atomic mass unit): Sigma within 1 %
   between 1 au and 3 R_c at every snapshot, and the element conservation below 1e-10.

Run from the repository root: python3 tests/python/check_evolution.py
Prints a final line "N passed, M failed" and exits non-zero on any failure.
"""

import json
import math
import pathlib
import subprocess
import sys
import tempfile

try:
    import numpy as np
    from scipy import constants, integrate
except ImportError:
    print("numpy and scipy are missing: python3 -m pip install numpy scipy")
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


def sigma(r, t, sigma_c, rc, gamma, ts):
    """Hartmann et al. 1998 eq. 35 with C = 3 pi nu_c Sigma_c."""
    big_t = 1.0 + t / ts
    x = r / rc
    return sigma_c * big_t ** (-(2.5 - gamma) / (2.0 - gamma)) * x ** (-gamma) * np.exp(-x ** (2.0 - gamma) / big_t)


def mdot_star(t, sigma_c, nu_c, gamma, ts):
    """Hartmann et al. 1998 eq. 36 at r -> 0."""
    big_t = 1.0 + t / ts
    return 3.0 * math.pi * nu_c * sigma_c * big_t ** (-(2.5 - gamma) / (2.0 - gamma))


# 1. The analytic solution on its own (dimensionless units: R_c = 1, nu_c = 1, Sigma_c = 1).
for gamma in (0.5, 1.0, 1.5):
    rc, nu_c, sigma_c = 1.0, 1.0, 1.0
    ts = rc * rc / (3.0 * (2.0 - gamma) ** 2 * nu_c)
    m0 = 2.0 * math.pi * rc * rc * sigma_c / (2.0 - gamma)

    def mass(t):
        val, _ = integrate.quad(lambda r: 2.0 * math.pi * r * sigma(r, t, sigma_c, rc, gamma, ts), 0.0, np.inf, limit=200)
        return val

    for t in (0.0, 0.5 * ts, 3.0 * ts):
        expected = m0 * (1.0 + t / ts) ** (-1.0 / (2.0 * (2.0 - gamma)))
        check(abs(mass(t) / expected - 1.0) < 1e-8, f"gamma {gamma}: mass at t = {t} {mass(t)} vs {expected}")
        h = 1e-4 * ts
        dm = (mass(t + h) - mass(max(t - h, 0.0))) / (t + h - max(t - h, 0.0))
        mdot = mdot_star(t, sigma_c, nu_c, gamma, ts)
        check(abs(-dm / mdot - 1.0) < 1e-4, f"gamma {gamma}: dM/dt {dm} vs -Mdot {mdot}")

    def nu(r):
        return nu_c * (r / rc) ** gamma

    for r in (0.3, 1.0, 2.5):
        for t in (0.2 * ts, 2.0 * ts):
            h_t = 1e-5 * ts
            dsdt = (sigma(r, t + h_t, sigma_c, rc, gamma, ts) - sigma(r, t - h_t, sigma_c, rc, gamma, ts)) / (2.0 * h_t)
            h = 1e-3 * r

            def g(rr):
                return nu(rr) * sigma(rr, t, sigma_c, rc, gamma, ts) * math.sqrt(rr)

            def inner(rr):
                return math.sqrt(rr) * (g(rr + h) - g(rr - h)) / (2.0 * h)

            rhs = 3.0 / r * (inner(r + h) - inner(r - h)) / (2.0 * h)
            check(abs(dsdt / rhs - 1.0) < 1e-3, f"gamma {gamma}, r {r}, t {t}: dSigma/dt {dsdt} vs {rhs}")

# 2. The CLI against the solution.
AU = constants.au * 100.0  # cm (IAU 2012, exact)
M_SUN = 1.988409870698051e33  # g, IAU 2015 nominal GM_sun / CODATA 2018 G (as astropy)
G = constants.G * 1e3  # cm^3 g^-1 s^-2
K_B = constants.k * 1e7  # erg/K
M_H = 1.007825031898 * constants.atomic_mass * 1e3  # g
MU = 2.37
MYR = 1e6 * 365.25 * 86400.0
alpha, rc_au, mass_msun, t1 = 3e-3, 40.0, 0.05, 280.0
disk = {
    "disk": {
        "temperature": {"kind": "power_law", "midplane_1au_k": t1, "midplane_index": 0.5},
        "background_temperature_k": 5.0,
        "surface_density_index": 1.0,
        "characteristic_radius_au": rc_au,
        "gas_mass_profile_total_msun": mass_msun,
        "inner_radius_au": 0.1,
        "outer_radius_au": 2000.0,
    },
    "grid": {"radial_cells": 300, "vertical_cells": 8},
    "evolution": {"alpha": alpha, "star": {"track": "fixed"}, "start_myr": 0.01},
}
with tempfile.TemporaryDirectory() as tmp:
    path = pathlib.Path(tmp) / "similarity.json"
    path.write_text(json.dumps(disk))
    out = subprocess.run(
        ["cargo", "run", "--quiet", "-p", "nivalis-cli", "--", "evolve", str(path), "--until-myr", "3", "--snapshots", "5", "--format", "json"],
        cwd=ROOT, check=True, capture_output=True, text=True,
    ).stdout
run = json.loads(out)
rc = rc_au * AU
t_rc = t1 / math.sqrt(rc_au)
cs2 = K_B * t_rc / (MU * M_H)
omega = math.sqrt(G * M_SUN / rc ** 3)
nu_c = alpha * cs2 / omega
sigma_c = mass_msun * M_SUN / (2.0 * math.pi * rc * rc)  # (2 - gamma) M / (2 pi R_c^2), gamma = 1
ts = rc * rc / (3.0 * nu_c)
radius = np.array(run["radius_au"]) * AU
mask = (radius > AU) & (radius < 3.0 * rc)
for k, age in enumerate(run["times_myr"]):
    exact = sigma(radius[mask], (age - 0.01) * MYR, sigma_c, rc, 1.0, ts)
    got = np.array(run["surface_density_g_cm2"][k])[mask]
    worst = float(np.max(np.abs(got / exact - 1.0)))
    check(worst < 0.01, f"t = {age} Myr: worst Sigma difference {worst}")
for element, err in run["conservation"].items():
    check(err < 1e-10, f"conservation of {element}: {err}")

print(f"{passed} passed, {failed} failed")
sys.exit(1 if failed else 0)
