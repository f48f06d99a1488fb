#!/usr/bin/env python3
"""Cross-check every constant of crates/physics/src/units.rs against scipy.constants
and astropy.constants / astropy.units.

The Rust values are read from the source file itself (each `pub const NAME: f64 = value;`
line), so this check fails when the Rust changes. Values that are expressions of other
constants (products and quotients, e.g. HYDROGEN_MASS_G, SOLAR_MASS_G) are evaluated
from the parsed constants. A constant with no reference here is a failure, so a new
constant must be given a reference (or an explicit reason to skip it) below.

Tolerances (docs/check-values.md section 1): exact SI/IAU values to 1e-14
relative (double rounding of the unit conversion); measured CODATA values to 1e-8
relative (CODATA 2018 vs 2022 drift); others as stated per row.

Run from the repository root:  python3 tests/python/check_constants.py
Exit status 0 when every check passes, 1 otherwise; the last line reads
"N passed, M failed".
"""

import ast
import math
import operator
import pathlib
import re
import sys

try:
    import scipy
    import scipy.constants as sc
    import astropy
    import astropy.constants as ac
    import astropy.units as u
except ImportError as error:  # pragma: no cover - depends on the machine
    print(f"check_constants.py needs scipy and astropy ({error}); install them with: "
          "python3 -m pip install scipy astropy")
    print("0 passed, 1 failed")
    sys.exit(1)

UNITS_RS = pathlib.Path(__file__).resolve().parents[2] / "crates" / "physics" / "src" / "units.rs"

EXACT = 1e-14
CODATA = 1e-8

CONST_RE = re.compile(r"pub\s+const\s+([A-Z0-9_]+)\s*:\s*f64\s*=\s*([^;]+);", re.S)


def evaluate(expression, known):
    """Evaluate a Rust constant expression made of float literals, names of
    constants already parsed, + - * / and parentheses."""
    operators = {ast.Mult: operator.mul, ast.Div: operator.truediv,
                 ast.Add: operator.add, ast.Sub: operator.sub}

    def walk(node):
        if isinstance(node, ast.Expression):
            return walk(node.body)
        if isinstance(node, ast.Constant) and isinstance(node.value, (int, float)):
            return float(node.value)
        if isinstance(node, ast.Name):
            if node.id not in known:
                raise ValueError(f"refers to {node.id}, which is not a parsed f64 constant")
            return known[node.id]
        if isinstance(node, ast.BinOp) and type(node.op) in operators:
            return operators[type(node.op)](walk(node.left), walk(node.right))
        if isinstance(node, ast.UnaryOp) and isinstance(node.op, ast.USub):
            return -walk(node.operand)
        raise ValueError(f"unsupported expression {ast.dump(node)}")

    # Rust float literals may carry digit separators (6.674_30e-8); Python accepts
    # underscores only between digits, which is how Rust code here writes them.
    return walk(ast.parse(expression.strip(), mode="eval"))


def parse_units(path):
    text = path.read_text(encoding="utf-8")
    # Drop the unit-test module so its local constants (if any) do not count.
    text = text.split("#[cfg(test)]")[0]
    values = {}
    for name, expression in CONST_RE.findall(text):
        values[name] = evaluate(" ".join(expression.split()), values)
    return values


def hydrogen_atom_mass_kg():
    """m(1H) = m_p + m_e - E_b/c^2 from CODATA (scipy), E_b = R_inf h c m_p/(m_p + m_e)
    (the reduced-mass Rydberg; QED corrections are below 1e-13 of the mass)."""
    pc = sc.physical_constants
    m_p = pc["proton mass"][0]
    m_e = pc["electron mass"][0]
    binding = pc["Rydberg constant times hc in J"][0] * m_p / (m_p + m_e)
    return m_p + m_e - binding / sc.c ** 2


# name -> list of (reference label, reference value in the Rust unit, relative tolerance, note)
def references():
    cgs = lambda q: float(q.cgs.value)  # noqa: E731 - astropy quantity to cgs number
    return {
        "GRAVITATIONAL_CONSTANT_CGS": [
            ("scipy G (CODATA)", sc.G * 1e3, CODATA),
            ("astropy G", cgs(ac.G), CODATA),
        ],
        "BOLTZMANN_ERG_PER_K": [
            ("scipy k (exact, SI 2019)", sc.k * 1e7, EXACT),
            ("astropy k_B", cgs(ac.k_B), EXACT),
        ],
        "PLANCK_ERG_S": [
            ("scipy h (exact, SI 2019)", sc.h * 1e7, EXACT),
            ("astropy h", cgs(ac.h), EXACT),
        ],
        "SPEED_OF_LIGHT_CM_PER_S": [
            ("scipy c (exact)", sc.c * 1e2, EXACT),
            ("astropy c", cgs(ac.c), EXACT),
        ],
        "STEFAN_BOLTZMANN_CGS": [
            # Exact in SI from k, h, c, but CODATA prints 10 digits: 1e-9 (docs/check-values.md section 1).
            ("scipy sigma (CODATA)", sc.Stefan_Boltzmann * 1e3, 1e-9),
            ("astropy sigma_sb", cgs(ac.sigma_sb), 1e-9),
            ("2 pi^5 k^4 / (15 h^3 c^2) from scipy's exact k, h, c",
             2 * math.pi ** 5 * (sc.k * 1e7) ** 4 / (15 * (sc.h * 1e7) ** 3 * (sc.c * 1e2) ** 2), 1e-9),
        ],
        "ATOMIC_MASS_UNIT_G": [
            ("scipy atomic mass constant (CODATA)", sc.physical_constants["atomic mass constant"][0] * 1e3, CODATA),
            ("astropy u", cgs(ac.u), CODATA),
        ],
        "HYDROGEN_MASS_G": [
            ("m_p + m_e - E_b/c^2 from scipy CODATA", hydrogen_atom_mass_kg() * 1e3, CODATA),
        ],
        "AU_CM": [
            ("scipy au (exact, IAU 2012 B2)", sc.au * 1e2, EXACT),
            ("astropy au", cgs(ac.au), EXACT),
        ],
        "SOLAR_MASS_PARAMETER_CGS": [
            ("astropy GM_sun (exact, IAU 2015 B3)", cgs(ac.GM_sun), EXACT),
        ],
        "SOLAR_MASS_G": [
            # astropy derives M_sun = GM_sun / G exactly as the Rust does.
            ("astropy M_sun (GM_sun / G)", cgs(ac.M_sun), CODATA),
        ],
        "SOLAR_LUMINOSITY_ERG_PER_S": [
            ("astropy L_sun (exact, IAU 2015 B3)", cgs(ac.L_sun), EXACT),
        ],
        "SOLAR_RADIUS_CM": [
            ("astropy R_sun (exact, IAU 2015 B3)", cgs(ac.R_sun), EXACT),
        ],
        "JULIAN_YEAR_S": [
            ("scipy Julian_year (exact)", sc.Julian_year, EXACT),
            ("astropy yr (Julian)", float((1 * u.yr).to_value(u.s)), EXACT),
        ],
        "HABING_PHOTONS_PER_CM2_S": [
            # Common practice (docs/check-values.md section 4b, C/D): 1.6e-3 erg cm^-2 s^-1 / 10 eV = 0.9986e8; the
            # constant is the rounded 1e8, so the tolerance is the rounding, 2e-3.
            ("1.6e-3 erg / (10 eV, scipy)", 1.6e-3 / (10 * sc.eV * 1e7), 2e-3),
        ],
        "MSUN_PER_YR_TO_G_PER_S": [
            ("astropy (1 M_sun / yr) in g/s", float((1 * u.M_sun / u.yr).to_value(u.g / u.s)), CODATA),
        ],
        "MICRON_CM": [
            ("scipy micro * 100", sc.micro * 1e2, EXACT),
            ("astropy um in cm", float((1 * u.um).to_value(u.cm)), EXACT),
        ],
    }


# Constants that no general-purpose library carries: model choices and literature values.
# Listed with the reason so that a new constant cannot slip through unchecked.
NO_LIBRARY_VALUE = {
    "HABING_ERG_PER_CM2_S": "Habing 1968 field, 1.6e-3 erg cm^-2 s^-1 (not in scipy/astropy)",
    "MEAN_MOLECULAR_WEIGHT": "mu = 2.37, Kauffmann et al. 2008 (a model choice)",
    "MASS_PER_HYDROGEN_NUCLEUS_AMU_H": "1.4 m_H per H nucleus for helium (a model choice)",
    "BINDING_SITES_PER_CM2": "N_s = 1.5e15 cm^-2, Hasegawa, Herbst & Leung 1992 (literature)",
    "HYDROGEN_COLUMN_PER_AV_CM2": "N_H/A_V = 1.87e21 cm^-2, Bohlin, Savage & Drake 1978 (literature)",
    "COSMIC_RAY_ATTENUATION_G_PER_CM2": "96 g cm^-2, Umebayashi & Nakano 1981 (literature)",
    "REFERENCE_COSMIC_RAY_RATE_S": "1.3e-17 s^-1 reference rate (literature)",
}

# Known reference values the Rust must define (a removed or renamed constant is a failure).
REQUIRED = ["GRAVITATIONAL_CONSTANT_CGS", "BOLTZMANN_ERG_PER_K", "PLANCK_ERG_S", "SPEED_OF_LIGHT_CM_PER_S",
            "STEFAN_BOLTZMANN_CGS", "ATOMIC_MASS_UNIT_G", "HYDROGEN_MASS_G", "AU_CM", "SOLAR_MASS_PARAMETER_CGS",
            "SOLAR_MASS_G", "SOLAR_LUMINOSITY_ERG_PER_S", "SOLAR_RADIUS_CM", "JULIAN_YEAR_S"]


def main():
    passed = failed = skipped = 0
    try:
        values = parse_units(UNITS_RS)
    except (OSError, ValueError, SyntaxError) as error:
        print(f"FAIL cannot read the constants of {UNITS_RS}: {error}")
        print("0 passed, 1 failed")
        return 1
    print(f"read {len(values)} constants from crates/physics/src/units.rs "
          f"(scipy {scipy.__version__}, astropy {astropy.__version__} with {ac.codata.__name__.rsplit('.', 1)[-1]})")
    refs = references()
    for name in REQUIRED:
        if name not in values:
            print(f"FAIL {name}: missing from units.rs")
            failed += 1
    for name, value in values.items():
        if name in NO_LIBRARY_VALUE:
            print(f"skip {name} = {value!r}: {NO_LIBRARY_VALUE[name]}")
            skipped += 1
            continue
        if name not in refs:
            print(f"FAIL {name} = {value!r}: no reference value in check_constants.py; add one or a reason to skip")
            failed += 1
            continue
        for label, expected, tolerance in refs[name]:
            rel = abs(value - expected) / abs(expected)
            verdict = "ok  " if rel <= tolerance else "FAIL"
            print(f"{verdict} {name} = {value!r} vs {label} = {expected!r}: relative difference {rel:.2e} "
                  f"(tolerance {tolerance:.0e})")
            if rel <= tolerance:
                passed += 1
            else:
                failed += 1
    # A note, not a failure: the 1H atomic mass of AME2020 is 1.007825031898 u, which the CODATA 2022
    # proton and electron masses reproduce to about 1e-11; an older table value shows up here at ~3e-10.
    if "HYDROGEN_MASS_G" in values and "ATOMIC_MASS_UNIT_G" in values:
        in_u = values["HYDROGEN_MASS_G"] / values["ATOMIC_MASS_UNIT_G"]
        derived = hydrogen_atom_mass_kg() / sc.physical_constants["atomic mass constant"][0]
        if abs(in_u / derived - 1) > 1e-10:
            print(f"note HYDROGEN_MASS_G is {in_u!r} u; CODATA 2022 m_p + m_e - E_b gives {derived!r} u "
                  f"(relative difference {abs(in_u / derived - 1):.1e}, within the 1e-8 tolerance)")
    print(f"{skipped} skipped (no library value)")
    print(f"{passed} passed, {failed} failed")
    return 0 if failed == 0 else 1


if __name__ == "__main__":
    sys.exit(main())
