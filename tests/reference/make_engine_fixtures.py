#!/usr/bin/env python3
"""Writes fixtures/reference/engine_reference.json: reference values for the indicator engine's tests,
computed with numpy/scipy by the plainest possible means (direct O(n^2) kernel sums, two-pass moments per
window (exact rational arithmetic for the 1e7-offset series), scipy.stats.kendalltau(method='asymptotic'), scipy.special.erfc, numpy.fft.fft).

Run from the repository root:  python3 tests/reference/make_engine_fixtures.py
The TypeScript tests read the JSON and never need Python.
"""
import json
import math
import platform
import sys
from fractions import Fraction
from pathlib import Path

import numpy as np
import scipy
from scipy import special, stats

OUT = Path(__file__).resolve().parents[2] / "fixtures" / "reference" / "engine_reference.json"


def nw_direct(x, h):
    """Nadaraya-Watson with Gaussian kernel over all points, summed directly."""
    n = len(x)
    i = np.arange(n, dtype=float)
    d = i[:, None] - i[None, :]
    k = np.exp(-(d * d) / (2.0 * h * h))
    return (k @ x) / k.sum(axis=1)


def ac1_nist(r):
    m = r.mean()
    d = r - m
    return float(np.sum(d[1:] * d[:-1]) / np.sum(d * d))


def rolling_two_pass(r, raw, w, dt):
    n = len(r)
    out = {k: [None] * n for k in ["variance", "sd", "cv", "ac1", "skewness", "kurtosis", "recovery"]}
    for end in range(w - 1, n):
        seg = r[end - w + 1 : end + 1]
        var = float(np.var(seg, ddof=1))
        sd = float(np.std(seg, ddof=1))
        a = ac1_nist(seg)
        out["variance"][end] = var
        out["sd"][end] = sd
        out["cv"][end] = sd / abs(float(np.mean(raw[end - w + 1 : end + 1])))
        out["ac1"][end] = a
        out["skewness"][end] = float(stats.skew(seg, bias=True))
        out["kurtosis"][end] = float(stats.kurtosis(seg, fisher=True, bias=True))
        out["recovery"][end] = float(-np.log(a) / dt) if a > 0 else None
    return out


def rolling_exact(x, w):
    """Moments per window in exact rational arithmetic on the float64 inputs (no rounding until the end):
    float64 two-pass sums lose digits on a 1e7 offset, so they cannot serve as the reference there."""
    n = len(x)
    q = [Fraction(float(v)) for v in x]
    out = {k: [None] * n for k in ["variance", "sd", "cv", "ac1", "skewness", "kurtosis"]}
    for end in range(w - 1, n):
        seg = q[end - w + 1 : end + 1]
        m = sum(seg) / w
        d = [v - m for v in seg]
        m2 = sum(v * v for v in d)
        m3 = sum(v * v * v for v in d)
        m4 = sum(v * v * v * v for v in d)
        lag = sum(d[k] * d[k + 1] for k in range(w - 1))
        var = m2 / (w - 1)
        out["variance"][end] = float(var)
        out["sd"][end] = math.sqrt(var)
        out["cv"][end] = math.sqrt(var) / abs(float(m))
        out["ac1"][end] = float(lag / m2)
        out["skewness"][end] = float(m3 / w) / float(m2 / w) ** 1.5
        out["kurtosis"][end] = float((m4 / w) / (m2 / w) ** 2) - 3.0
    return out


def kendall_of(values):
    idx = [i for i, v in enumerate(values) if v is not None]
    y = [values[i] for i in idx]
    if len(y) < 3:
        return None
    res = stats.kendalltau(idx, y, method="asymptotic")
    return {"tau": float(res.statistic), "p": float(res.pvalue)}


def main():
    rng = np.random.default_rng(20240611)
    n = 240
    e = rng.standard_normal(n)
    ar = np.zeros(n)
    for t in range(1, n):
        ar[t] = (0.2 + 0.6 * t / n) * ar[t - 1] + e[t]
    x = 50.0 + 0.02 * np.arange(n) + 3.0 * np.sin(np.arange(n) / 20.0) + ar

    smoother = {str(bw): nw_direct(x, bw * n).tolist() for bw in [0.01, 0.05, 0.1, 0.3, 1.0, 5.0]}
    residual = x - np.array(smoother["0.1"])

    dt = 0.5
    rolling = {}
    for window in [0.1, 0.25, 0.5, 1.0]:
        w = int(round(window * n))
        ind = rolling_two_pass(residual, x, w, dt)
        rolling[str(window)] = {"w": w, "indicators": ind, "kendall": {k: kendall_of(v) for k, v in ind.items()}}

    # NumAcc-style offset: large constant plus small variation, rolling on the raw values.
    off = 1e7 + np.round(rng.standard_normal(200) * 0.1 + np.linspace(0, 0.3, 200), 3)
    w_off = 60
    offset = {"x": off.tolist(), "w": w_off, "indicators": rolling_exact(off, w_off), "method": "exact rational arithmetic (fractions)"}

    # Kendall with ties in y (rounded values) and in both variables.
    y_t = np.round(rng.standard_normal(150), 1)
    x_t = np.floor(np.arange(150) / 3.0)
    kt_index = stats.kendalltau(np.arange(150), y_t, method="asymptotic")
    kt_both = stats.kendalltau(x_t, y_t, method="asymptotic")
    kendall_ties = {
        "y": y_t.tolist(),
        "x": x_t.tolist(),
        "index": {"tau": float(kt_index.statistic), "p": float(kt_index.pvalue)},
        "both": {"tau": float(kt_both.statistic), "p": float(kt_both.pvalue)},
    }

    zs = [0.0, 0.1, 0.5, 1.0, 1.5, 2.0, 2.4999, 2.5, 3.0, 4.0, 6.0, 10.0, 20.0, 26.0]
    erfc = {"x": zs, "erfc": [float(special.erfc(z)) for z in zs]}

    ffts = {}
    for m in [1000, 1024, 37]:
        re = rng.standard_normal(m)
        im = rng.standard_normal(m)
        f = np.fft.fft(re + 1j * im)
        ffts[str(m)] = {"re": re.tolist(), "im": im.tolist(), "fre": f.real.tolist(), "fim": f.imag.tolist()}

    ma_width = 11
    half = ma_width // 2
    ma = [float(np.mean(x[max(0, i - half) : min(n, i + half + 1)])) for i in range(n)]

    doc = {
        "generator": "tests/reference/make_engine_fixtures.py",
        "versions": {"python": platform.python_version(), "numpy": np.__version__, "scipy": scipy.__version__},
        "series": {"x": x.tolist(), "dt": dt},
        "smoother": smoother,
        "residual_bandwidth": 0.1,
        "rolling": rolling,
        "offset": offset,
        "kendall_ties": kendall_ties,
        "erfc": erfc,
        "fft": ffts,
        "moving_average": {"width": ma_width, "trend": ma},
    }
    OUT.parent.mkdir(parents=True, exist_ok=True)
    OUT.write_text(json.dumps(doc, allow_nan=False))
    print(f"wrote {OUT} (numpy {np.__version__}, scipy {scipy.__version__}, python {platform.python_version()})", file=sys.stderr)


if __name__ == "__main__":
    main()
