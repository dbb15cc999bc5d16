"""field-crosscheck.py -- re-computes test/fixtures/field/field_r.csv with a second library.

   apt-get install -y python3-statsmodels      # statsmodels 0.13.5, numpy 1.24.2, scipy 1.10.1 (Debian bookworm)
   /usr/bin/python3 tools/crosscheck/field-crosscheck.py test/fixtures/field

Fits the calibration, offset, band and refit models of field-reference.R with statsmodels' GLM
(binomial, the same offsets), clusters by player with the CR1 factor G/(G-1) (N-1)/(N-K)
(cov_type="cluster", use_correction=True, df_correction=True), and the Rao-Scott figures from
numpy's eigenvalues. Exit 0 when every figure agrees with R's to 1e-7 relative (1e-6 for
p-values), 1 otherwise; prints the worst agreement per model. Not run by the tests.
"""
import csv
import math
import sys

import numpy as np
import statsmodels.api as sm
from scipy import stats

folder = sys.argv[1] if len(sys.argv) > 1 else "."
rows = list(csv.DictReader(open(f"{folder}/live-rounds.csv")))
reference = {}
for row in csv.DictReader(open(f"{folder}/field_r.csv")):
    reference[(row["dataset"], row["model"], row["quantity"], row["term"])] = float(row["value"])

latency = np.array([float(r["latency_ms"]) for r in rows])
scale = np.array([float(r["scale"]) for r in rows])
veteran = np.array([1.0 if r["difficulty"] == "veteran" else 0.0 for r in rows])
hits = np.array([float(r["hits"]) for r in rows])
attempts = np.array([float(r["attempts"]) for r in rows])
players = sorted({r["player"] for r in rows})
groups = np.array([players.index(r["player"]) for r in rows])
X = np.column_stack([np.ones(len(rows)), latency, np.log(scale), veteran, latency * np.log(scale)])
eta0 = X @ np.array([0.9, -0.008, 1.6, -0.5, 0.004])
y = np.column_stack([hits, attempts - hits])

worst = {}
failures = 0


def check(model, quantity, term, value, tolerance=1e-7):
    global failures
    expected = reference[("rounds", model, quantity, term)]
    error = abs(value - expected) / abs(expected)
    worst[model] = max(worst.get(model, 0.0), error)
    if error > tolerance:
        failures += 1
        print(f"DIFFERS {model} {quantity} {term}: statsmodels {value!r}, R {expected!r}")


def fit(design, offset=None, family=sm.families.Binomial()):
    model = sm.GLM(y, design, family=family, offset=offset)
    plain = model.fit(tol=1e-14, maxiter=200)
    robust = model.fit(tol=1e-14, maxiter=200, cov_type="cluster", cov_kwds={"groups": groups, "use_correction": True, "df_correction": True})
    return plain, robust


for name, design, offset, terms in [
    ("citl", np.ones((len(rows), 1)), eta0, ["(Intercept)"]),
    ("slope", np.column_stack([np.ones(len(rows)), eta0]), None, ["(Intercept)", "eta0"]),
    ("linear", np.column_stack([np.ones(len(rows)), latency]), eta0, ["(Intercept)", "latency_ms"]),
    ("refit", X, None, ["(Intercept)", "latency_ms", "log(scale)", "difficultyveteran", "latency_ms:log(scale)"]),
]:
    plain, robust = fit(design, offset)
    for j, term in enumerate(terms):
        check(name, "estimate", term, plain.params[j])
        check(name, "se_model", term, plain.bse[j])
        check(name, "se_CR1", term, robust.bse[j])
    check(name, "deviance", "", plain.deviance)

# The likelihood-ratio test against the model's coefficients and its Rao-Scott adjustment.
plain, robust = fit(X)
mu0 = 1 / (1 + np.exp(-eta0))
deviance_at_model = 2 * np.sum(np.where(hits > 0, hits * np.log(np.maximum(hits, 1e-300) / (attempts * mu0)), 0)
                               + np.where(attempts - hits > 0, (attempts - hits) * np.log(np.maximum(attempts - hits, 1e-300) / (attempts * (1 - mu0))), 0))
lr = deviance_at_model - plain.deviance
check("refit", "lr_statistic", "", lr)
delta = np.linalg.eigvals(np.linalg.solve(plain.cov_params(), robust.cov_params())).real
k = len(delta)
mean = delta.mean()
a2 = np.sum((delta - mean) ** 2) / (k * mean**2)
check("refit", "rao_scott_mean_eigenvalue", "", mean)
check("refit", "rao_scott_a2", "", a2, 1e-6)
check("refit", "rao_scott_p", "", stats.chi2.sf(lr / (mean * (1 + a2)), k / (1 + a2)), 1e-5)

for model, error in worst.items():
    print(f"{model}: worst relative difference from R {error:.2e}")
sys.exit(1 if failures else 0)
