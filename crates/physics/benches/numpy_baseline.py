#!/usr/bin/env python3
"""A straightforward vectorised numpy implementation of the Nivalis model on
the default disk, as the speed baseline of `cargo xtask bench`.

It solves the same equations as crates/physics/src/structure.rs, balance.rs,
budget.rs and model.rs, with the default options only (docs/model.md sections
1-8):

- self-similar surface density holding the gas mass between the edges:
  Sigma_c = (2 - gamma) (M_gas / f) / (2 pi R_c^2), f = exp[-(r_in/R_c)^(2-gamma)]
  - exp[-(r_out/R_c)^(2-gamma)] (sections 2-3);
- irradiation at the star-dependent default grazing angle phi = 0.02 (L/Lsun)^(-1/3)
  (clamped to [1e-3, 0.1]) plus viscous heating with the constant opacity
  (section 4): T^4 = T_irr^4 + T_bg^4 + (3/4)(kappa Sigma/2 + 2/3) T_eff,acc^4.
  With a constant opacity this is closed-form, and the core evaluates it in
  closed form, so the baseline does too (a bisection here would only slow
  numpy down and flatter the native ratio);
- the two-layer vertical temperature and hydrostatic density in full stellar
  gravity on a grid 4x finer than the cells, normalised to Sigma; columns
  above each point, A_V with the extinction per H of the disk's dust (Q_ext(a)
  times the geometric cross-section; 1/1.87e21 mag cm^2 for the default dust),
  FUV and cosmic rays (sections 5-6);
- the zeroth-order rate equation of the 9 species in every sample with the
  (E_b, nu) pairs of the transition_state set, integrated in closed form over
  the disk's age from inherited ices (n0 = N), with its equilibrium and
  equilibration time (section 7);
- the midplane element budget with the irreversible soot line: refractory
  carbon is gas where T_mid >= T_soot or inside the radius the soot line
  reached in the hot early phase (the same disk with the early accretion rate,
  luminosity and surface density), and the gas C/O (section 8).

Cosmic-ray desorption: docs/model.md section 7 caps it at one desorption per
surface molecule per heating event, B_cr = (f/t_cool)(1 - exp(-k_70 t_cool)),
as the core does.

Species data are read from crates/physics/data/*.csv (the files compiled into
the core); the constants are those of crates/physics/src/units.rs.

Correctness: the script compares its midplane temperature, midplane gas C/O
and midplane ice fractions with the native CLI's output for the same disk and
grid (`nivalis model - --format json` with `{"grid": {...}}` on stdin) and
exits with status 1 when they differ by more than TOLERANCE. When the model's
equations change, this file must follow; the check says so.

Timing: `timeit.repeat(number=1)` of the whole computation (inputs read
beforehand), REPEATS runs; median, p10 and p90 by linear interpolation between
order statistics (numpy.percentile's default, Hyndman & Fan type 7), the rule
`cargo xtask bench` uses for the native numbers.

Usage: numpy_baseline.py [--grid 400x160] [--reference CLI_JSON] [--json OUT]
Without --reference the CLI is run with `cargo run --quiet -p nivalis-cli`.
"""

import argparse
import csv
import json
import math
import pathlib
import subprocess
import sys
import timeit

import numpy as np

ROOT = pathlib.Path(__file__).resolve().parents[3]
DATA = ROOT / "crates" / "physics" / "data"
REPEATS = 15
# Largest allowed relative difference from the native model (temperature, gas
# C/O) and absolute difference of ice fractions. Observed differences are
# rounding-level (see the printed values); 1e-6 leaves room for libm versus
# numpy's exp/cos while catching any change of equations.
TOLERANCE = 1e-6

# Constants in cgs, the values of crates/physics/src/units.rs (same sources).
G = 6.674_30e-8  # CODATA 2018
K_B = 1.380_649e-16  # exact (SI 2019)
SIGMA_SB = 5.670_374_419e-5  # CODATA 2018
U = 1.660_539_068_92e-24  # CODATA 2022
M_H = 1.007_825_031_898 * U  # AME2020 1H
AU = 1.495_978_707e13  # IAU 2012 B2
M_SUN = 1.327_124_4e26 / G  # IAU 2015 B3 / CODATA G
L_SUN = 3.828e33  # IAU 2015 B3
YEAR = 3.155_76e7  # Julian year
HABING_PHOTONS = 1.0e8
MU = 2.37
MASS_PER_H = 1.4
N_SITES = 1.5e15
NH_PER_AV = 1.87e21  # Bohlin, Savage & Drake 1978
V_WAVELENGTH = 0.55e-4  # Johnson V [cm]
CR_ATTENUATION = 96.0
ZETA_REF = 1.3e-17
CR_DUTY = 3.16e-19  # Hasegawa & Herbst 1993
CR_PEAK_K = 70.0
CR_COOLING_S = 1.0e-5

# The default disk (crates/physics/src/params.rs, ModelParameters::defaults, and
# the disk-file reader's star-dependent defaults for a file that gives only the grid).
DEFAULTS = dict(
    mass_msun=1.0, luminosity_lsun=1.0, teff_k=4000.0, fuv_1au=1.0e7,
    log_eps=dict(C=8.43, O=8.69, N=7.83, S=7.12, Si=7.51, Mg=7.60, Fe=7.50),
    gas_mass_msun=0.01, rc_au=50.0, gamma=1.0, r_in_au=0.1, r_out_au=500.0,
    mdot_msun_yr=1.0e-8, mdot_early_msun_yr=1.0e-6, kappa=1.0, superheating=1.5, zq_h=4.0,
    delta=2.0, t_bg=10.0, dust_to_gas=0.01, grain_um=0.1, grain_rho=3.0, zeta0=1.3e-17,
    g_ism=1.0, sticking=1.0, age_myr=1.0,
    carbon=dict(CO=0.30, CO2=0.10, CH4=0.04, CH3OH=0.05, HCN=0.01, refractory=0.50),
    n2=0.8, nh3=0.2, h2s=0.1, o_per_si=3.0, soot_k=500.0, silicate_k=1500.0, z_max_h=10.0,
)
SPECIES = ["H2O", "CO", "CO2", "CH4", "N2", "NH3", "CH3OH", "H2S", "HCN"]
BINDING_SET = "transition_state"


def rows(path):
    lines = [l for l in path.read_text().splitlines() if l.strip() and not l.startswith("#")]
    return list(csv.DictReader(lines))


def species_data():
    """Mass [g], C and O atoms, yield, and the (E_b [K], nu [s^-1]) pair of BINDING_SET per species."""
    table = {r["species"]: r for r in rows(DATA / "species.csv")}
    pairs = {r["species"]: r for r in rows(DATA / "binding_energies.csv") if r["set"] == BINDING_SET}
    pick = lambda key: np.array([float(table[s][key]) for s in SPECIES])
    mass_g = pick("mass_amu") * U
    binding_k = np.array([float(pairs[s]["binding_energy_k"]) for s in SPECIES])
    # "hhl92" means nu = sqrt(2 N_s k E_b / (pi^2 m)) (Hasegawa, Herbst & Leung 1992, eq. 3).
    nu = np.array([math.sqrt(2.0 * N_SITES * K_B * e / (math.pi ** 2 * m)) if pairs[s]["attempt_frequency_s"] == "hhl92"
                   else float(pairs[s]["attempt_frequency_s"]) for s, e, m in zip(SPECIES, binding_k, mass_g)])
    return dict(mass_g=mass_g, carbon=pick("carbon"), oxygen=pick("oxygen"),
                yields=pick("photodesorption_yield"), binding_k=binding_k, nu=nu)


def carriers(p):
    """Total abundance per H of each species; refractory C and silicate O (section 8)."""
    x = {e: 10.0 ** (v - 12.0) for e, v in p["log_eps"].items()}
    c = p["carbon"]
    x_sp = dict(CO=c["CO"] * x["C"], CO2=c["CO2"] * x["C"], CH4=c["CH4"] * x["C"],
                CH3OH=c["CH3OH"] * x["C"], HCN=c["HCN"] * x["C"])
    n_left = x["N"] - x_sp["HCN"]
    silicate_o = p["o_per_si"] * x["Si"]
    x_sp["H2O"] = x["O"] - silicate_o - x_sp["CO"] - 2.0 * x_sp["CO2"] - x_sp["CH3OH"]
    x_sp["N2"] = p["n2"] * n_left / 2.0
    x_sp["NH3"] = p["nh3"] * n_left
    x_sp["H2S"] = p["h2s"] * x["S"]
    return x, np.array([x_sp[s] for s in SPECIES]), c["refractory"] * x["C"], silicate_o


def extinction_per_h(dust_to_gas, a_cm, rho_gr):
    """A_V / N_H [mag cm^2] = Q_ext(a) 1.086 x 3 (d/g) 1.4 m_H / (4 a rho_gr) (section 6): Q_ext = 2 above
    x_c = 2 pi a_c / lambda_V, 2 x / x_c below, x_c fixed so that ISM dust gives 1/1.87e21."""
    geometric = lambda d, a, rho: 1.086 * 3.0 * d * MASS_PER_H * M_H / (4.0 * a * rho)
    x_ism = 2.0 * math.pi * 0.1e-4 / V_WAVELENGTH
    x_c = 2.0 * x_ism * NH_PER_AV * geometric(0.01, 0.1e-4, 3.0)
    x = 2.0 * math.pi * a_cm / V_WAVELENGTH
    q = 2.0 if x >= x_c else 2.0 * x / x_c
    return q * geometric(dust_to_gas, a_cm, rho_gr)


def midplane_temperature(r, sigma, lum, phi, mdot, m_star, r_star, p):
    """Section 4 with the constant opacity, closed form."""
    t_irr4 = phi * lum / (8.0 * math.pi * SIGMA_SB * r * r)
    boundary = np.maximum(1.0 - np.sqrt(r_star / r), 0.0)
    t_eff4 = 3.0 * G * m_star * mdot * boundary / (8.0 * math.pi * SIGMA_SB * r ** 3)
    return (t_irr4 + p["t_bg"] ** 4 + 0.75 * (p["kappa"] * sigma / 2.0 + 2.0 / 3.0) * t_eff4) ** 0.25


def relax(n0, root, k, t):
    """n0 e^{-k t} + root (1 - e^{-k t}), the solution of one linear branch of the rate equation."""
    decay = -np.expm1(-k * t)
    return n0 * (1.0 - decay) + root * decay


def evolve(n0, a, b, c, m, big_n, t):
    """Exact n(t) of dn/dt = A (N - n) - B min(n, M) - C min(1, n/M) from n(0) = n0 (section 7):
    each branch relaxes exponentially to its own root; a path crosses n = M at most once."""
    thin_rate = a + b + c / m
    thin_root = a * big_n / thin_rate
    thick_root = big_n - (b * m + c) / a
    # Starting above one monolayer (thick branch first).
    down_switch = np.log1p((n0 - m) / (m - thick_root)) / a
    from_above = np.where(
        thick_root >= m, relax(n0, thick_root, a, t),
        np.where(t <= down_switch, np.maximum(relax(n0, thick_root, a, t), m),
                 relax(m, thin_root, thin_rate, t - down_switch)))
    # Starting at or below one monolayer (thin branch first).
    up_switch = np.log1p((m - n0) / (thin_root - m)) / thin_rate
    from_below = np.where(
        thin_root <= m, relax(n0, thin_root, thin_rate, t),
        np.where(t <= up_switch, np.minimum(relax(n0, thin_root, thin_rate, t), m),
                 relax(m, thick_root, a, t - up_switch)))
    return np.where(n0 > m, from_above, from_below)


def model(p, sp, radial, vertical):
    """The whole model on the grid; returns midplane T [K], gas C/O (NaN where undefined), midplane f_ice at the
    disk's age, and the out-of-equilibrium flags of every sample."""
    m_star = p["mass_msun"] * M_SUN
    lum = p["luminosity_lsun"] * L_SUN
    r_star = math.sqrt(lum / (4.0 * math.pi * SIGMA_SB * p["teff_k"] ** 4))
    rc = p["rc_au"] * AU
    gamma = p["gamma"]
    k = 2.0 - gamma
    between = math.exp(-(p["r_in_au"] / p["rc_au"]) ** k) - math.exp(-(p["r_out_au"] / p["rc_au"]) ** k)
    sigma_c = (2.0 - gamma) * p["gas_mass_msun"] * M_SUN / between / (2.0 * math.pi * rc * rc)
    phi = min(max(0.02 * p["luminosity_lsun"] ** (-1.0 / 3.0), 1.0e-3), 0.1)
    r_in, r_out = p["r_in_au"] * AU, p["r_out_au"] * AU
    # Section 2: log-spaced cell centres and the self-similar surface density.
    r = r_in * np.exp(np.log(r_out / r_in) * (np.arange(radial) + 0.5) / radial)
    x = r / rc
    sigma = sigma_c * x ** -gamma * np.exp(-x ** k)
    # Section 4: irradiation, viscous heating, background.
    mdot = p["mdot_msun_yr"] * M_SUN / YEAR
    t_mid = midplane_temperature(r, sigma, lum, phi, mdot, m_star, r_star, p)
    h = np.sqrt(K_B * t_mid / (MU * M_H)) / np.sqrt(G * m_star / r ** 3)
    # Sections 5-6: fine grid, two-layer temperature, hydrostatic density.
    n_fine = 4 * vertical
    dz = (p["z_max_h"] * h / n_fine)[:, None]
    z = np.arange(n_fine + 1)[None, :] * dz
    t_atm = np.maximum(p["superheating"] * (lum / (16.0 * math.pi * SIGMA_SB * r * r)) ** 0.25, t_mid)[:, None]
    z_q = (p["zq_h"] * h)[:, None]
    shape = np.cos(np.pi * z / (2.0 * z_q)) ** (2.0 * p["delta"])
    temp = np.where(z < z_q, t_atm + (t_mid[:, None] - t_atm) * shape, t_atm)
    s = (r * r)[:, None] + z * z
    integrand = MU * M_H / K_B / temp * G * m_star * z / (s * np.sqrt(s))
    segments = 0.5 * (integrand[:, :-1] + integrand[:, 1:]) * dz
    integral = np.concatenate([np.zeros((radial, 1)), np.cumsum(segments, axis=1)], axis=1)
    rho = t_mid[:, None] / temp * np.exp(-integral)
    rho_segments = 0.5 * (rho[:, :-1] + rho[:, 1:]) * dz
    rho *= (sigma / (2.0 * rho_segments.sum(axis=1)))[:, None]
    rho_segments = 0.5 * (rho[:, :-1] + rho[:, 1:]) * dz
    above = np.concatenate([np.cumsum(rho_segments[:, ::-1], axis=1)[:, ::-1], np.zeros((radial, 1))], axis=1)
    # Samples: z = 0 and the cell centres, fine points 4 k + 2.
    pick = np.concatenate([[0], 4 * np.arange(vertical) + 2])
    t_s, rho_s, above_s = temp[:, pick], rho[:, pick], above[:, pick]
    n_h = rho_s / (MASS_PER_H * M_H)
    below_s = np.maximum(sigma[:, None] - above_s, 0.0)
    a = p["grain_um"] * 1.0e-4
    a_v = above_s / (MASS_PER_H * M_H) * extinction_per_h(p["dust_to_gas"], a, p["grain_rho"])
    zeta = p["zeta0"] * 0.5 * (np.exp(-above_s / CR_ATTENUATION) + np.exp(-below_s / CR_ATTENUATION))
    g_star = (p["fuv_1au"] * AU * AU / (r * r))[:, None]
    fuv = HABING_PHOTONS * (g_star * np.exp(-2.0 * a_v / phi) + p["g_ism"] * np.exp(-2.0 * a_v)) \
        + 1.0e4 * zeta / ZETA_REF
    # Section 7: the rate equation over the disk's age, species on the first axis.
    grains_per_gram = p["dust_to_gas"] / (4.0 / 3.0 * math.pi * a ** 3 * p["grain_rho"])
    grain_area = grains_per_gram * rho_s * math.pi * a * a
    monolayer = 4.0 * N_SITES * grain_area
    col = lambda v: v[:, None, None]
    v_coef = np.sqrt(8.0 * K_B / (math.pi * sp["mass_g"]))
    k70 = sp["nu"] * np.exp(-sp["binding_k"] / CR_PEAK_K)
    # docs/model.md section 7: at most one desorption per heating event
    cr_per_zeta = CR_DUTY / CR_COOLING_S * -np.expm1(-k70 * CR_COOLING_S) / ZETA_REF
    x_star, x_sp, refractory_c, silicate_o = carriers(p)
    molecules = col(x_sp) * n_h
    adsorption = p["sticking"] * grain_area * col(v_coef) * np.sqrt(t_s)
    desorption = col(sp["nu"]) * np.exp(-col(sp["binding_k"]) / t_s) + col(cr_per_zeta) * zeta
    photo = fuv * col(sp["yields"]) * grain_area
    valid = (molecules > 0.0) & (grain_area > 0.0)
    thin_rate = adsorption + desorption + photo / monolayer
    thin = adsorption / thin_rate
    thick = np.clip(1.0 - (desorption * monolayer + photo) / (adsorption * molecules), 0.0, 1.0)
    on_thin = thin * molecules <= monolayer
    f_eq = np.where(valid, np.where(on_thin, thin, thick), 0.0)
    t_eq = np.where(valid, np.where(on_thin, 1.0 / thin_rate, 1.0 / adsorption), np.nan)
    age = p["age_myr"] * 1.0e6 * YEAR
    with np.errstate(divide="ignore", invalid="ignore"):  # branches not taken may divide by zero
        n_age = evolve(molecules, adsorption, desorption, photo, monolayer, molecules, age)
        f_ice = np.where(valid, np.clip(n_age / molecules, 0.0, 1.0), f_eq)
    out_of_eq = (t_eq > age) | (valid & (np.abs(f_ice - f_eq) > 0.01))
    # Section 8: the early phase's soot line, then the midplane budget.
    l_early = lum + 0.8 * G * m_star * p["mdot_early_msun_yr"] * M_SUN / YEAR / r_star
    scale = min(max(p["mdot_early_msun_yr"] / p["mdot_msun_yr"], 1e-3), 1e4)
    t_early = midplane_temperature(r, scale * sigma, l_early, phi, p["mdot_early_msun_yr"] * M_SUN / YEAR,
                                   m_star, r_star, p)
    hot = np.nonzero(t_early >= p["soot_k"])[0]
    if hot.size == 0:
        r_soot = 0.0
    elif hot[-1] == radial - 1:
        r_soot = r_out
    else:
        j = hot[-1]
        w = (math.log(p["soot_k"]) - math.log(t_early[j])) / (math.log(t_early[j + 1]) - math.log(t_early[j]))
        r_soot = math.exp(math.log(r[j]) + w * (math.log(r[j + 1]) - math.log(r[j])))
    t_0 = t_s[:, 0]
    gas = x_sp[:, None] * (1.0 - f_ice[:, :, 0])
    gas_c = (sp["carbon"][:, None] * gas).sum(axis=0) \
        + np.where((t_0 >= p["soot_k"]) | (r <= r_soot), refractory_c, 0.0)
    gas_c = np.where(np.abs(gas_c) < 1e-9 * x_star["C"], 0.0, gas_c)
    gas_o = (sp["oxygen"][:, None] * gas).sum(axis=0) + np.where(t_0 >= p["silicate_k"], silicate_o, 0.0)
    defined = (gas_o >= 1e-9 * x_star["O"]) & (gas_o > 0.0)
    c_to_o = np.where(defined, gas_c / np.where(defined, gas_o, 1.0), np.nan)
    return t_mid, c_to_o, f_ice[:, :, 0], out_of_eq


def native_reference(radial, vertical, path):
    if path:
        return json.loads(pathlib.Path(path).read_text())
    disk = json.dumps({"grid": {"radial_cells": radial, "vertical_cells": vertical}})
    out = subprocess.run(["cargo", "run", "--quiet", "-p", "nivalis-cli", "--", "model", "-", "--format", "json"],
                         cwd=ROOT, input=disk, capture_output=True, text=True, check=True)
    return json.loads(out.stdout)


def differences(result, reference):
    """Max relative difference of T_mid and gas C/O, max absolute difference of f_ice."""
    t_mid, c_to_o, f_ice = result[:3]
    data = reference["data"]
    t_ref = np.array(data["midplane_temperature_k"], dtype=float)
    co_ref = np.array([np.nan if v is None else v for v in data["c_to_o_gas"]], dtype=float)
    if t_ref.shape != t_mid.shape:
        raise SystemExit(f"the native output has {t_ref.size} radii, the baseline {t_mid.size}")
    if not np.array_equal(np.isnan(co_ref), np.isnan(c_to_o)):
        raise SystemExit("gas C/O is undefined at different radii in the baseline and the native model")
    ok = ~np.isnan(co_ref)
    d_t = float(np.max(np.abs(t_mid / t_ref - 1.0)))
    d_co = float(np.max(np.abs(c_to_o[ok] / co_ref[ok] - 1.0))) if ok.any() else 0.0
    d_f = 0.0
    for i, s in enumerate(SPECIES):
        name = f"ice_fraction_{s}"
        if name not in data:
            raise SystemExit(f"no column {name} in the native output")
        d_f = max(d_f, float(np.max(np.abs(f_ice[i] - np.array(data[name], dtype=float)))))
    return d_t, d_co, d_f


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--grid", default="400x160", help="RADIALxVERTICAL (default 400x160)")
    parser.add_argument("--reference", help="the CLI's `model --format json` output for that grid")
    parser.add_argument("--json", help="write the results here as JSON")
    parser.add_argument("--repeats", type=int, default=REPEATS)
    args = parser.parse_args()
    radial, vertical = (int(v) for v in args.grid.split("x"))
    sp = species_data()
    result = model(DEFAULTS, sp, radial, vertical)
    d_t, d_co, d_f = differences(result, native_reference(radial, vertical, args.reference))
    times = timeit.repeat(lambda: model(DEFAULTS, sp, radial, vertical), number=1, repeat=args.repeats)
    p10, median, p90 = (float(v) for v in np.percentile(times, [10, 50, 90]))
    agrees = max(d_t, d_co, d_f) <= TOLERANCE
    print(f"numpy baseline at {args.grid} (numpy {np.__version__}, {args.repeats} runs): "
          f"median {median * 1e3:.1f} ms, p10 {p10 * 1e3:.1f} ms, p90 {p90 * 1e3:.1f} ms")
    print(f"  against the native CLI: max |rel. diff| midplane T {d_t:.2e}, midplane gas C/O {d_co:.2e}; "
          f"max |diff| midplane f_ice {d_f:.2e} (tolerance {TOLERANCE:g}): {'agree' if agrees else 'DISAGREE'}")
    if args.json:
        pathlib.Path(args.json).write_text(json.dumps(dict(
            grid=args.grid, repeats=args.repeats, median_s=median, p10_s=p10, p90_s=p90,
            max_rel_diff_temperature=d_t, max_rel_diff_c_to_o_gas=d_co, max_abs_diff_ice_fraction=d_f,
            tolerance=TOLERANCE, agrees=agrees)))
    if not agrees:
        print("  the baseline no longer solves the native model's equations: update "
              "crates/physics/benches/numpy_baseline.py", file=sys.stderr)
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
