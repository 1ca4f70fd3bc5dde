#!/usr/bin/env python3
"""Writes fixtures/reference/local_linear_reference.json: the Gaussian-kernel local-linear smoother
(Fan & Gijbels 1996, Local Polynomial Modelling and Its Applications, Ch. 3) evaluated independently of the
engine's closed form: at each grid point i a weighted least-squares line through (j - i, x_j), j = 0..n-1,
with weights exp(-(j-i)^2 / (2 h^2)), solved by numpy.linalg.lstsq on the sqrt(weight)-scaled design
[1, j - i]; the trend is the fitted intercept.

Run from the repository root:  python3 tests/reference/make_local_linear_fixture.py
"""
import json
import platform
from pathlib import Path

import numpy as np

OUT = Path(__file__).resolve().parents[2] / "fixtures" / "reference" / "local_linear_reference.json"


def local_linear_wls(x, h):
    n = len(x)
    j = np.arange(n, dtype=float)
    out = np.empty(n)
    for i in range(n):
        d = j - i
        sw = np.sqrt(np.exp(-(d * d) / (2.0 * h * h)))
        design = np.column_stack([sw, sw * d])
        coef, *_ = np.linalg.lstsq(design, sw * x, rcond=None)
        out[i] = coef[0]
    return out


def main():
    rng = np.random.default_rng(20261202)
    n = 300
    t = np.arange(n, dtype=float)
    # a trend that bends near the end (where Nadaraya-Watson flattens it), plus AR(1) noise, on an offset
    e = np.zeros(n)
    for i in range(1, n):
        e[i] = 0.5 * e[i - 1] + rng.standard_normal()
    x = 50.0 + 0.01 * t + 4.0 * np.exp((t - n) / 25.0) + e
    bandwidths = {"0.02": 0.02, "0.1": 0.1, "0.3": 0.3, "2": 2.0}
    out = {
        "source": "numpy.linalg.lstsq weighted least squares per point (tests/reference/make_local_linear_fixture.py)",
        "versions": {"numpy": np.__version__, "python": platform.python_version()},
        "series": {"x": x.tolist()},
        "h_is": "kernel standard deviation in points = bandwidth * n",
        "smoother": {k: local_linear_wls(x, b * n).tolist() for k, b in bandwidths.items()},
    }
    OUT.write_text(json.dumps(out, indent=1) + "\n")
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
