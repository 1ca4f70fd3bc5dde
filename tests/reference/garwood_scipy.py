"""Writes fixtures/reference/garwood_scipy.json: exact (Garwood 1936) 95 % Poisson rate intervals
[chi2.ppf(0.025, 2k)/2T, chi2.ppf(0.975, 2k + 2)/2T] from scipy.stats.chi2, for tests/backtest/scoring.test.ts.
Run from the repo root:
    python3 tests/reference/garwood_scipy.py
"""
import json
import platform

import scipy
from scipy.stats import chi2

cases = []
for k, exposure in [(0, 1.0), (1, 1.0), (2, 0.5), (5, 2.0), (20, 3.5), (137, 41.25), (1000, 12.0)]:
    lower = chi2.ppf(0.025, 2 * k) / (2 * exposure) if k > 0 else 0.0
    upper = chi2.ppf(0.975, 2 * k + 2) / (2 * exposure)
    cases.append({"k": k, "exposure": exposure, "lower": float(lower), "upper": float(upper)})

with open("fixtures/reference/garwood_scipy.json", "w") as f:
    json.dump({"source": f"scipy {scipy.__version__} scipy.stats.chi2.ppf (Python {platform.python_version()})", "cases": cases}, f, indent=1)
    f.write("\n")
