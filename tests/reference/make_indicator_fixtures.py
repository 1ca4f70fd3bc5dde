#!/usr/bin/env python3
"""Writes fixtures/reference/indicator_reference.json: reference values for the indicators of issue 17
(restoring-rate, spectral-ratio, ch, dfa, bimodality), computed with general-purpose libraries by the plainest
means, independently of the engine's code:

- restoring-rate: scipy.stats.linregress of r[j+1] - r[j] on r[j] (slope and its standard error), divided by dt;
- spectral-ratio: numpy.fft.fft of the centred window, periodogram |X_k|^2;
- ch: AR(1) fit by numpy.linalg.lstsq, then statsmodels' het_arch(residuals, nlags=1) (Engle's LM statistic and
  its chi-square(1) p-value);
- dfa: numpy.cumsum profile, numpy.polyfit line per box, numpy.polyfit of log F(s) on log s;
- bimodality: scipy.stats.skew / scipy.stats.kurtosis (bias=True, the moment forms);
- Kendall tau over the evaluated windows: scipy.stats.kendalltau(method='asymptotic');
- site-level pc1-variance, pc1-share and maf-ac1: numpy.cov (ddof 1), numpy.linalg.eigvalsh and
  scipy.linalg.eigh(cov of differences, cov, eigvals_only=True) for the generalised problem;
- potential-wells: the same recipe (linear binning, Gaussian kernel, numpy.polyfit of -ln f) written with numpy,
  and beside it the count from scipy.stats.gaussian_kde (unbinned) on clearly separated samples.

Run from the repository root with Debian's interpreter (python3-numpy, python3-scipy, python3-statsmodels):
    /usr/bin/python3 tests/reference/make_indicator_fixtures.py
The TypeScript tests read the JSON and never need Python.
"""
import json
import platform
from pathlib import Path

import numpy as np
import scipy
import scipy.linalg
import statsmodels
from scipy import stats
from statsmodels.stats.diagnostic import het_arch

OUT = Path(__file__).resolve().parents[2] / "fixtures" / "reference" / "indicator_reference.json"


def restoring_rate(r, dt):
    fit = stats.linregress(r[:-1], np.diff(r))
    return {"value": float(fit.slope / dt), "standardError": float(fit.stderr / dt)}


def spectral_ratio(r):
    w = len(r)
    p = np.abs(np.fft.fft(r - r.mean())) ** 2
    half = w // 2
    m = max(1, half // 10)
    return {"value": float(p[1 : m + 1].mean() / p[half - m + 1 : half + 1].mean())}


def ch(r):
    design = np.column_stack([np.ones(len(r) - 1), r[:-1]])
    coef, *_ = np.linalg.lstsq(design, r[1:], rcond=None)
    resid = r[1:] - design @ coef
    lm, lm_p, _f, _fp = het_arch(resid, nlags=1)
    return {"value": float(lm), "p": float(lm_p)}


def dfa(r):
    w = len(r)
    y = np.cumsum(r - r.mean())
    sizes, flucts = [], []
    s = 4
    while s <= w // 4:
        boxes = w // s
        k = np.arange(s, dtype=float)
        sq = 0.0
        for b in range(boxes):
            seg = y[b * s : (b + 1) * s]
            line = np.polyval(np.polyfit(k, seg, 1), k)
            sq += float(np.sum((seg - line) ** 2))
        sizes.append(s)
        flucts.append(np.sqrt(sq / (boxes * s)))
        s *= 2
    if len(sizes) < 2:
        return {"value": None}
    return {"value": float(np.polyfit(np.log(sizes), np.log(flucts), 1)[0])}


def bimodality(r):
    g = stats.skew(r, bias=True)
    k = stats.kurtosis(r, fisher=True, bias=True)
    return {"value": float((g * g + 1) / (k + 3))}


GRID, SEARCH, FLOOR = 256, 1001, 0.01


def wells_from(grid, density, lo, hi):
    keep = density >= FLOOR * density.max()
    x = (grid[keep] - (hi + lo) / 2) / ((hi - lo) / 2)
    y = -np.log(density[keep])
    for half in (4, 3, 2, 1):
        if len(x) <= 2 * half + 1:
            continue
        coef = np.polyfit(x, y, 2 * half)  # highest power first
        if not coef[0] > 0:
            continue
        v = np.polyval(coef, np.linspace(-1, 1, SEARCH))
        minima = int(np.sum((v[1:-1] < v[:-2]) & (v[1:-1] <= v[2:])))
        return max(minima, 1)
    return None


def potential_wells(r, binned=True):
    w = len(r)
    u = (r - r.mean()) / r.std(ddof=1)
    lo, hi = u.min(), u.max()
    grid = np.linspace(lo, hi, GRID)
    h = 1.06 * w ** -0.2
    if binned:
        step = (hi - lo) / (GRID - 1)
        pos = (u - lo) / step
        k = np.minimum(GRID - 2, np.floor(pos).astype(int))
        frac = pos - k
        counts = np.bincount(k, weights=1 - frac, minlength=GRID) + np.bincount(k + 1, weights=frac, minlength=GRID)
        d = (grid[:, None] - grid[None, :]) / h
        density = (np.exp(-0.5 * d * d) @ counts) / (w * h * np.sqrt(2 * np.pi))
    else:
        density = stats.gaussian_kde(u, bw_method=h)(grid)
    return wells_from(grid, density, lo, hi)


def all_of(r, dt):
    return {
        "restoring-rate": restoring_rate(r, dt),
        "spectral-ratio": spectral_ratio(r),
        "ch": ch(r),
        "dfa": dfa(r),
        "bimodality": bimodality(r),
        "potential-wells": {"value": potential_wells(r)},
    }


def site_window(matrix):
    cov = np.cov(matrix, rowvar=False, ddof=1)
    cov_diff = np.cov(np.diff(matrix, axis=0), rowvar=False, ddof=1)
    eig = np.linalg.eigvalsh(cov)
    smallest = scipy.linalg.eigh(cov_diff, cov, eigvals_only=True)[0]
    return {"pc1-variance": float(eig[-1]), "pc1-share": float(eig[-1] / np.trace(cov)), "maf-ac1": float(1 - smallest / 2)}


def ar1(rng, n, phi, offset=0.0):
    x = np.zeros(n)
    x[0] = rng.standard_normal() / np.sqrt(1 - phi * phi)
    for t in range(1, n):
        x[t] = phi * x[t - 1] + rng.standard_normal()
    return offset + x


def main():
    rng = np.random.default_rng(17)
    windows = []
    # Short and long windows, powers of two and not (the DFT path differs), weak and strong memory, an offset,
    # a two-state mixture (bimodality), and heavy-tailed volatility clusters (ch).
    cases = [
        ("AR(1) phi 0.3", ar1(rng, 33, 0.3), 1.0),
        ("AR(1) phi 0.9", ar1(rng, 64, 0.9), 0.5),
        ("AR(1) phi 0.7 about 100", ar1(rng, 100, 0.7, 100.0), 2.0),
        ("AR(1) phi 0.97", ar1(rng, 257, 0.97), 1.0),
        ("two states", np.where(rng.uniform(size=300) < 0.4, -2.0, 2.0) + 0.5 * rng.standard_normal(300), 1.0),
        ("white noise", rng.standard_normal(1000), 0.25),
    ]
    garch = np.zeros(500)
    var = 1.0
    for t in range(1, 500):
        var = 0.1 + 0.6 * garch[t - 1] ** 2 + 0.3 * var
        garch[t] = np.sqrt(var) * rng.standard_normal()
    cases.append(("ARCH-like clusters", garch, 1.0))
    for name, r, dt in cases:
        windows.append({"name": name, "r": r.tolist(), "dt": dt, "values": all_of(r, dt)})

    # Rolling over a residual series at a stride: windows ending at n - 1, n - 1 - stride, ... (the latest always).
    n, w, stride, dt = 400, 120, 7, 1.0
    phis = 0.2 + 0.7 * np.arange(n) / n
    r = np.zeros(n)
    for t in range(1, n):
        r[t] = phis[t] * r[t - 1] + rng.standard_normal()
    ends = list(range(n - 1, w - 2, -stride))[::-1]
    rolling = {}
    for key in ["restoring-rate", "spectral-ratio", "ch", "dfa", "bimodality", "potential-wells"]:
        vals = [all_of(r[e - w + 1 : e + 1], dt)[key] for e in ends]
        tau = stats.kendalltau(np.arange(len(ends)), [v["value"] for v in vals], method="asymptotic")
        rolling[key] = {"values": vals, "kendall": {"tau": float(tau.statistic), "p": float(tau.pvalue)}}

    # States the potential must count: one, two and three well-separated levels with noise, 2,000 points each.
    wells = []
    for name, centres in [("one state", [0.0]), ("two states", [-3.0, 3.0]), ("three states", [-6.0, 0.0, 6.0])]:
        sample = rng.choice(centres, size=2000) + rng.standard_normal(2000)
        wells.append({
            "name": name,
            "r": sample.tolist(),
            "states": len(centres),
            "binned": potential_wells(sample),
            "unbinned": potential_wells(sample, binned=False),
        })

    # Site-level: k correlated AR(1) columns sharing a common driver, whole windows and a rolling pass at a stride.
    site_windows = []
    for k, w_site, phi in [(2, 40, 0.5), (3, 100, 0.8), (5, 250, 0.95)]:
        common = ar1(rng, w_site, phi)
        matrix = np.column_stack([common * rng.uniform(0.5, 1.5) + ar1(rng, w_site, 0.3) for _ in range(k)])
        site_windows.append({"columns": matrix.T.tolist(), "values": site_window(matrix)})
    n_site, w_roll, stride_site = 300, 90, 11
    common = ar1(rng, n_site, 0.6)
    matrix = np.column_stack([common + ar1(rng, n_site, 0.5) for _ in range(3)])
    site_ends = list(range(n_site - 1, w_roll - 2, -stride_site))[::-1]
    site_rolling = {"columns": matrix.T.tolist(), "w": w_roll, "stride": stride_site, "ends": site_ends,
                    "values": [site_window(matrix[e - w_roll + 1 : e + 1]) for e in site_ends]}

    doc = {
        "generator": "tests/reference/make_indicator_fixtures.py",
        "versions": {
            "python": platform.python_version(),
            "numpy": np.__version__,
            "scipy": scipy.__version__,
            "statsmodels": statsmodels.__version__,
        },
        "windows": windows,
        "wells": wells,
        "site": {"windows": site_windows, "rolling": site_rolling},
        "rolling": {"r": r.tolist(), "w": w, "stride": stride, "dt": dt, "ends": ends, "indicators": rolling},
    }
    OUT.write_text(json.dumps(doc, indent=1) + "\n")
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
