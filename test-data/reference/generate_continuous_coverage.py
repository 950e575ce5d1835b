#!/usr/bin/env python3
"""Monte-Carlo draws for the CONTINUOUS formulation's uncertainty, at two sample periods.

Writes continuous-coverage.json.gz next to this file: per scenario a model, an irregular time grid,
known inputs, noise-free outputs, 1 000 seeded draws of Gaussian noise (numpy.random.default_rng),
and numpy's own expectations:
  covariance            K Sigma K' of the linear estimator theta = K y that minimises the
                        trapezoid-weighted sum (weights in units of the mean sample spacing),
                        i.e. B^-1 M B^-1 with B = sum w a a', M = sum w^2 a a', a = regressor / sigma
                        (sandwich form; Huber 1967, White 1980 - from memory), from dense numpy
  empirical             the spread of numpy.linalg.lstsq solutions over the same draws, and the
                        share of normal 95 % intervals (scipy.stats.norm) that cover the truth
  sampledCovariance     (A'A)^-1 of the same equations with every weight 1 (SAMPLED formulation)
  endState, endCovariance   the true state at the last sample, and Phi(t_N - t_0) P Phi' for each
                        formulation's P (the covariance of the estimated state at the window end)
The Java test (ContinuousCoverageTest) solves every draw with the engine and compares its
reported standard errors with these, and its own empirical spread and coverage with them.

Noise is stored as integers in units of 1e-4 sigma (the draws are rounded to that grid before
numpy solves them, so both sides see the same data): y = clean + sigma * noise / 10000.

Scenarios are invented: a hanging sign swinging after a gust, sampled about every 0.05 s, and a
refrigerated container's cargo core seen only through its air temperature, sampled about every 60 s.

Run: python3 generate_continuous_coverage.py   (numpy and scipy; seeded, output byte-identical)
"""
import gzip
import json
import math
import pathlib

import numpy as np
from scipy import stats

from generate_estimates import TICKS_PER_SECOND, Model, free_and_forced, nested, to_ticks, trapezoid_weights, vec

HERE = pathlib.Path(__file__).resolve().parent
OUT = HERE / "continuous-coverage.json.gz"
DRAWS = 1000
NOISE_SCALE = 10_000


def sign_swing():
    """Oscillator (omega 2.5 rad/s, damping 0.1), position measured with sigma 0.05."""
    omega, zeta = 2.5, 0.1
    return Model(a=[[0.0, 1.0], [-omega**2, -2 * zeta * omega]], c=[[1.0, 0.0]], noise_sigma=[0.05])


def cargo_and_air():
    """Cargo core and container air (deg C): core exchanges with air (3 h), air with core (10 min) and
    with the supply air (5 min), supply temperature known; air measured with sigma 0.2."""
    tau_core, tau_air, tau_supply = 10_800.0, 600.0, 300.0
    a = [[-1 / tau_core, 1 / tau_core], [1 / tau_air, -1 / tau_air - 1 / tau_supply]]
    return Model(a=a, b=[[0.0], [1 / tau_supply]], c=[[0.0, 1.0]], d=[[0.0]], noise_sigma=[0.2])


def irregular_ticks(rng, start_s, low_s, high_s, count):
    steps = rng.uniform(low_s, high_s, size=count - 1)
    times = start_s + np.concatenate([[0.0], np.cumsum(steps)])
    return np.array([to_ticks(t) for t in times], dtype=np.int64)


def scenario(name, description, model, ticks, u, x0, missing, rng):
    n, p = model.n, model.p
    big_n = len(ticks)
    phis, forced = free_and_forced(model, ticks, u)
    x = phis @ x0 + forced
    clean = x @ model.c.T + (u @ model.d.T if model.m else 0.0)
    sigma = model.noise_sigma

    spacing_s = (ticks[-1] - ticks[0]) / (big_n - 1) / TICKS_PER_SECOND
    regressors = np.einsum("jn,knm->kjm", model.c, phis)
    rows, rows_w, rows_spread, where = [], [], [], []
    for j in range(p):
        present = np.flatnonzero(~missing[:, j])
        w = trapezoid_weights(ticks[present]) / spacing_s
        for k, wk in zip(present, w):
            a = regressors[k, j] / sigma[j]
            rows.append(a)
            rows_w.append(a * math.sqrt(wk))
            rows_spread.append(a * wk)
            where.append((k, j, math.sqrt(wk)))
    m_w = np.array(rows_w)
    bread_inverse = np.linalg.inv(m_w.T @ m_w)
    spread = np.array(rows_spread)
    covariance = bread_inverse @ (spread.T @ spread) @ bread_inverse
    covariance = (covariance + covariance.T) / 2
    se = np.sqrt(np.diag(covariance))

    noise = np.rint(rng.standard_normal((DRAWS, big_n, p)) * NOISE_SCALE).astype(np.int64)
    z95 = stats.norm.ppf(0.975)
    estimates = np.empty((DRAWS, n))
    for d in range(DRAWS):
        y = clean + sigma * noise[d] / NOISE_SCALE
        rhs = np.array([(y[k, j] - forced[k] @ model.c[j] - (u[k] @ model.d[j] if model.m else 0.0))
                        / sigma[j] * sw for k, j, sw in where])
        estimates[d] = np.linalg.lstsq(m_w, rhs, rcond=None)[0]
    spread_empirical = estimates.std(axis=0, ddof=1)
    covered = np.mean(np.abs(estimates - x0) <= z95 * se, axis=0)
    ratio = spread_empirical / se
    assert np.all(np.abs(ratio - 1) < 0.1), ratio
    assert np.all(np.abs(covered - 0.95) < 0.02), covered

    # Sampled formulation (every weight 1) of the same draws: its covariance is (A'A)^-1 (Gauss-Markov).
    m_s = np.array(rows)
    sampled_covariance = np.linalg.inv(m_s.T @ m_s)
    end_phi = phis[-1]
    end_covariance = {"continuous": nested(end_phi @ covariance @ end_phi.T),
                      "sampled": nested(end_phi @ sampled_covariance @ end_phi.T)}

    return {
        "name": name,
        "description": description,
        "model": model.to_json(),
        "times": vec(ticks / TICKS_PER_SECOND),
        "meanSpacing": float(spacing_s),
        "inputs": None if not model.m else nested(u),
        "missing": [[bool(v) for v in row] for row in missing],
        "x0": vec(x0),
        "endState": vec(x[-1]),
        "noiseFreeOutputs": nested(clean),
        "noiseScale": NOISE_SCALE,
        "noise": noise.tolist(),
        "expected": {
            "covariance": nested(covariance),
            "sampledCovariance": nested(sampled_covariance),
            "endCovariance": end_covariance,
            "standardErrors": vec(se),
            "numpyEmpiricalSpread": vec(spread_empirical),
            "numpyCoverage95": vec(covered),
        },
    }


def main():
    rng = np.random.default_rng(20261202)
    fast_ticks = irregular_ticks(rng, 3.0, 0.02, 0.08, 100)
    fast = scenario("sign-swing-0.05s", "Oscillator, 100 samples 20-80 ms apart (mean ~0.05 s), 8 missing.",
                    sign_swing(), fast_ticks, np.zeros((100, 0)), np.array([0.8, -1.5]),
                    missing_mask(rng, 100, 1, 8), rng)
    slow_ticks = irregular_ticks(rng, 0.0, 20.0, 100.0, 120)
    times_s = slow_ticks / TICKS_PER_SECOND
    supply = np.where(times_s < 2400.0, -1.0, 2.0)[:, None]
    slow = scenario("cargo-air-60s", "Reefer cargo core seen through the air temperature, 120 samples 20-100 s "
                    "apart (mean ~60 s), supply air stepped from -1 to 2 deg C, 12 missing.",
                    cargo_and_air(), slow_ticks, supply, np.array([6.0, 3.0]), missing_mask(rng, 120, 1, 12), rng)
    doc = {"draws": DRAWS, "scenarios": [fast, slow]}
    text = json.dumps(doc, separators=(",", ":")) + "\n"
    with gzip.GzipFile(OUT, "wb", mtime=0) as f:
        f.write(text.encode())


def missing_mask(rng, count, channels, how_many):
    mask = np.zeros((count, channels), dtype=bool)
    mask[rng.choice(np.arange(1, count - 1), size=how_many, replace=False), 0] = True
    return mask


if __name__ == "__main__":
    main()
