"""Checks the Monte Carlo's random draws (docs/model.md section 13) against scipy.stats, an
outside reference library.

Runs `cargo run -q -p nivalis-physics --example random_draws` (20000 draws of each kind from
nivalis_physics::random::Rng, seed 20261202) and tests each sample against its exact
distribution in scipy.stats with the one-sample Kolmogorov-Smirnov test (scipy.stats.kstest):
uniform U(0, 1); standard normal (Marsaglia's polar method); log-normal with median 2 and
0.3 dex, i.e. log10(x/2) ~ N(0, 0.3); Gamma(a, 1) for a = 0.4, 1, 2.5, 30 (Marsaglia & Tsang
2000); the Dirichlet(15, 5, 2, 8) marginals, which are Beta(alpha_i, sum - alpha_i); and a
chi-square test (scipy.stats.chisquare) of uniform indices in 0..7. A test fails when its
p-value is below 1e-3 (the draws are fixed by the seed, so the outcome does not change from
run to run); the means are also compared with the exact ones within 5 standard errors.

Run from the repository root: python3 tests/python/check_random_draws.py
Prints a final line "N passed, M failed" and exits non-zero on any failure.
"""

import json
import pathlib
import subprocess
import sys

try:
    import numpy as np
    from scipy import stats
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
        print(f"ok   {what}")
    else:
        failed += 1
        print(f"FAIL {what}")


out = subprocess.run(
    ["cargo", "run", "-q", "-p", "nivalis-physics", "--example", "random_draws"],
    cwd=ROOT,
    capture_output=True,
    text=True,
    check=True,
)
d = json.loads(out.stdout)
n = d["n"]


def ks(sample, dist, what):
    p = stats.kstest(np.asarray(sample), dist.cdf).pvalue
    check(p > 1e-3, f"{what}: Kolmogorov-Smirnov p = {p:.3g} (> 1e-3)")
    x = np.asarray(sample)
    se = dist.std() / np.sqrt(len(x))
    check(abs(x.mean() - dist.mean()) < 5 * se, f"{what}: mean {x.mean():.5g} vs {dist.mean():.5g} (5 se = {5 * se:.2g})")


ks(d["uniform"], stats.uniform(0, 1), "uniform [0, 1)")
ks(d["normal"], stats.norm(0, 1), "normal (polar method)")
# log10(x / 2) ~ N(0, 0.3): x is log-normal with s = 0.3 ln 10 and scale 2 (scipy's parametrisation).
ks(d["lognormal_median_2_sigma_dex_0_3"], stats.lognorm(s=0.3 * np.log(10), scale=2.0), "log-normal, median 2, 0.3 dex")
for a, sample in d["gamma"].items():
    ks(sample, stats.gamma(float(a)), f"gamma(a = {a}) (Marsaglia & Tsang 2000)")
alpha = d["dirichlet_alpha"]
total = sum(alpha)
ks(d["dirichlet_first"], stats.beta(alpha[0], total - alpha[0]), f"Dirichlet{tuple(alpha)} first marginal = Beta({alpha[0]}, {total - alpha[0]})")
ks(d["dirichlet_third"], stats.beta(alpha[2], total - alpha[2]), f"Dirichlet{tuple(alpha)} third marginal = Beta({alpha[2]}, {total - alpha[2]})")
counts = np.bincount(np.asarray(d["index_of_7"], dtype=int), minlength=7)
p = stats.chisquare(counts).pvalue
check(len(counts) == 7 and p > 1e-3, f"uniform index in 0..7: chi-square p = {p:.3g} (> 1e-3)")

print(f"{passed} passed, {failed} failed")
sys.exit(1 if failed else 0)
