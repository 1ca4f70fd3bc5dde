"""Writes fixtures/reference/bh_scipy.json: Benjamini-Hochberg adjusted p-values from
scipy.stats.false_discovery_control(method='bh') on seeded random p-value sets (uniform, a mix of
signals and nulls, and sets with ties), for tests/backtest/fdr.test.ts. Run from the repo root:
    python3 tests/reference/bh_scipy.py
"""
import json
import platform

import numpy as np
import scipy
from scipy.stats import false_discovery_control

rng = np.random.default_rng(20240508)
cases = []
for m in (1, 2, 5, 17, 100, 1000):
    cases.append({"name": f"uniform-{m}", "p": rng.uniform(size=m).tolist()})
for m in (20, 250):
    signals = rng.uniform(0, 0.01, size=m // 5)
    nulls = rng.uniform(size=m - m // 5)
    p = np.concatenate([signals, nulls])
    rng.shuffle(p)
    cases.append({"name": f"mixed-{m}", "p": p.tolist()})
# Ties, exact zeros and ones (Monte Carlo p-values such as (1 + k)/(N + 1) tie often).
ties = np.round(rng.uniform(size=60) * 20) / 20
ties[0] = 0.0
ties[1] = 1.0
cases.append({"name": "ties-60", "p": ties.tolist()})
mc = (1 + rng.integers(0, 200, size=40)) / 200.0
cases.append({"name": "monte-carlo-40", "p": mc.tolist()})

for case in cases:
    case["q"] = false_discovery_control(np.array(case["p"]), method="bh").tolist()

out = {
    "source": "scipy.stats.false_discovery_control(method='bh')",
    "versions": {"python": platform.python_version(), "numpy": np.__version__, "scipy": scipy.__version__},
    "cases": cases,
}
with open("fixtures/reference/bh_scipy.json", "w") as f:
    json.dump(out, f, indent=1)
print(f"wrote {len(cases)} cases")
