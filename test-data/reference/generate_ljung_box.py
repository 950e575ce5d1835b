#!/usr/bin/env python3
"""Independent expected values for the Ljung-Box whiteness statistic (backstate LjungBox).

Writes ljung-box.json next to this file: for each seeded or closed-form series, the series itself
(shortest round-trip decimals, so Java reads the exact doubles used here), the number of lags
h = min(10, floor(N/5)) (the estimator's documented rule), the statistic and its p-value:

  Q = N (N + 2) sum_{k=1..h} rho_k^2 / (N - k),   rho_k = sum_{t>=k} c_t c_{t-k} / sum_t c_t^2,
  c = r - mean(r)                                  (Ljung & Box 1978, Biometrika 65(2):297-303)
  p = scipy.stats.chi2.sf(Q, h)

Read by LjungBoxAppendTest. Run: python3 generate_ljung_box.py   (numpy, scipy; seeded below)
"""
import json
import pathlib

import numpy as np
from scipy import stats

HERE = pathlib.Path(__file__).resolve().parent
SEED = 19780801
MAX_LAGS = 10
SAMPLES_PER_LAG = 5


def lags_for(n):
    return min(MAX_LAGS, n // SAMPLES_PER_LAG)


def ljung_box(r, h):
    r = np.asarray(r, dtype=float)
    n = len(r)
    c = r - r.mean()
    c0 = float(np.dot(c, c))
    q = 0.0
    for k in range(1, h + 1):
        rho = float(np.dot(c[k:], c[:-k])) / c0
        q += rho * rho / (n - k)
    return n * (n + 2.0) * q


def ar1(rng, n, phi, mean):
    e = rng.standard_normal(n)
    out = np.empty(n)
    prev = 0.0
    for t in range(n):
        prev = phi * prev + e[t]
        out[t] = mean + prev
    return out


def series():
    rng = np.random.default_rng(SEED)
    t = np.arange(50, dtype=float)
    return [
        ("sine-and-trend-50", "r_t = sin(0.7 t) + 0.1 t, t = 0..49: strongly correlated, p far below 1e-30",
         np.sin(0.7 * t) + 0.1 * t),
        ("white-noise-1000", "standard normal draws: white, p anywhere in (0, 1)", rng.standard_normal(1000)),
        ("autoregressive-300", "AR(1), phi = 0.5, mean 2: correlated at the first lags", ar1(rng, 300, 0.5, 2.0)),
        ("alternating-40", "r_t = (-1)^t + 0.01 t: lag-1 autocorrelation near -1",
         np.array([(-1.0) ** k + 0.01 * k for k in range(40)])),
        ("short-12", "12 normal draws: h = floor(12/5) = 2 lags", rng.standard_normal(12)),
    ]


def main():
    cases = []
    for name, description, values in series():
        values = [float(v) for v in values]
        h = lags_for(len(values))
        q = ljung_box(values, h)
        cases.append({"name": name, "description": description, "lags": h, "statistic": q,
                      "pValue": float(stats.chi2.sf(q, h)), "values": values})
    out = {"source": "numpy (centred lag products) and scipy.stats.chi2.sf; Ljung & Box 1978", "cases": cases}
    (HERE / "ljung-box.json").write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
