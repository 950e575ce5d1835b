#!/usr/bin/env python3
"""Reference values for backstate.estimation.ProcessNoiseSmoother and ProcessNoiseCovariance.

Writes process-noise.json next to this file (shortest round-trip decimals; null = NaN / missing).

Sources of the expected values (nothing here shares code with the Java engine):
  covariances   Q_d(h) = integral_0^h expm(A t) Qc expm(A t)^T dt by scipy.integrate.quad_vec
                (continuous), and sum_{i<s} A^i Q A^iT accumulated step by step (discrete).
  smoother      the maximum a posteriori estimate written as ONE dense least-squares problem and
                solved by numpy.linalg.lstsq, covariance from numpy.linalg.svd of the stacked matrix:
                - "states" form (Q_d non-singular): unknowns x_0 ... x_{N-1} (and offsets), rows
                  (C_j x_k + o_j)/sigma_j = (y_kj - D_j u_k)/sigma_j for each present sample,
                  L_k^-1 (x_{k+1} - Phi_k x_k) = L_k^-1 Gamma_k u_k with Q_d = L_k L_k^T (Cholesky),
                  and the prior's whitened rows;
                - "noise" form (Q_d singular): unknowns x_0, xi_0 ... xi_{N-2} (and offsets) with
                  x_{k+1} = Phi_k x_k + Gamma_k u_k + G_k xi_k, G_k G_k^T = Q_d (numpy.linalg.eigh,
                  positive eigenvalues), rows xi_k = 0 for the noise.
                Phi, Gamma from scipy.linalg.expm of [[A, B], [0, 0]] h; Q_d by quad_vec as above.
Times are whole microseconds from t0, as the engine counts them.

Run: python3 generate_process_noise.py   (needs numpy and scipy; seeds fixed below)
"""
import json
import pathlib

import numpy as np
from scipy import integrate, linalg

SEED = 20261202
rng = np.random.default_rng(SEED)
TICK = 1e-6
QUAD_EPSABS = 1e-16
QUAD_EPSREL = 1e-13


def flat(m):
    return [None if not np.isfinite(x) else float(x) for x in np.asarray(m, dtype=float).ravel()]


def rows(m):
    m = np.atleast_2d(np.asarray(m, dtype=float))
    return [flat(r) for r in m]


def qd_continuous(a, qc, h):
    f = lambda t: linalg.expm(a * t) @ qc @ linalg.expm(a * t).T
    q, _ = integrate.quad_vec(f, 0.0, h, epsabs=QUAD_EPSABS, epsrel=QUAD_EPSREL)
    return 0.5 * (q + q.T)


def qd_discrete(a, q, steps):
    out = np.zeros_like(q)
    p = np.eye(a.shape[0])
    for _ in range(steps):
        out += p @ q @ p.T
        p = a @ p
    return out


def zoh(a, b, h):
    n, m = b.shape
    blk = np.zeros((n + m, n + m))
    blk[:n, :n] = a
    blk[:n, n:] = b
    f = linalg.expm(blk * h)
    return f[:n, :n], f[:n, n:]


def discrete_power(a, b, steps):
    phi = np.linalg.matrix_power(a, steps)
    gam = sum(np.linalg.matrix_power(a, i) @ b for i in range(steps))
    return phi, gam


def steps_of(case):
    """Per interval: (Phi, Gamma, Q_d)."""
    a, b = case["a"], case["b"]
    out = []
    if case["kind"] == "continuous":
        units = np.rint((case["times"] - case["times"][0]) / TICK).astype(np.int64)
        for k in range(len(units) - 1):
            h = float(units[k + 1] - units[k]) * TICK
            phi, gam = zoh(a, b, h)
            out.append((phi, gam, qd_continuous(a, case["q"], h)))
    else:
        T = case["period"]
        units = np.rint((case["times"] - case["times"][0]) / T).astype(np.int64)
        for k in range(len(units) - 1):
            s = int(units[k + 1] - units[k])
            phi, gam = discrete_power(a, b, s)
            out.append((phi, gam, qd_discrete(a, case["q"], s)))
    return out


def measurement_rows(case, k, state_cols, offset_col0, width):
    """Rows for sample k given a map x_k = T theta + c: returns list of (row, rhs)."""
    c, d, sigma, y, u = case["c"], case["d"], case["sigma"], case["y"], case["u"]
    out = []
    for j in range(c.shape[0]):
        if np.isnan(y[k, j]):
            continue
        row = np.zeros(width)
        row[state_cols] = c[j] / sigma[j]
        if offset_col0 is not None:
            row[offset_col0 + j] = 1.0 / sigma[j]
        out.append((row, (y[k, j] - d[j] @ u[k]) / sigma[j]))
    return out


def solve_states_form(case):
    n, p = case["a"].shape[0], case["c"].shape[0]
    N = len(case["times"])
    off = case["offsets"]
    width = N * n + (p if off else 0)
    o0 = N * n if off else None
    A, b = [], []
    for k in range(N):
        for row, rhs in measurement_rows(case, k, slice(k * n, (k + 1) * n), o0, width):
            A.append(row)
            b.append(rhs)
    for k, (phi, gam, q) in enumerate(steps_of(case)):
        li = np.linalg.inv(np.linalg.cholesky(q))
        blk = np.zeros((n, width))
        blk[:, (k + 1) * n:(k + 2) * n] = li
        blk[:, k * n:(k + 1) * n] = -li @ phi
        A.extend(blk)
        b.extend(li @ gam @ case["u"][k])
    add_prior(case, A, b, width, slice(0, n))
    A, b = np.array(A), np.array(b)
    theta, cov = lstsq_with_cov(A, b)
    chi2 = float(np.sum((A @ theta - b) ** 2))
    states = [theta[k * n:(k + 1) * n] for k in range(N)]
    covs = [cov[k * n:(k + 1) * n, k * n:(k + 1) * n] for k in range(N)]
    idx = list(range(n)) + (list(range(N * n, N * n + p)) if off else [])
    return theta[idx], cov[np.ix_(idx, idx)], states, covs, chi2, A.shape


def solve_noise_form(case):
    n, p = case["a"].shape[0], case["c"].shape[0]
    N = len(case["times"])
    off = case["offsets"]
    factors = []
    for phi, gam, q in steps_of(case):
        w, v = np.linalg.eigh(q)
        keep = w > w.max() * n * np.finfo(float).eps
        factors.append((phi, gam, v[:, keep] * np.sqrt(w[keep])))
    r_total = sum(g.shape[1] for _, _, g in factors)
    width = n + r_total + (p if off else 0)
    o0 = n + r_total if off else None
    T = np.zeros((n, width))
    T[:, :n] = np.eye(n)
    cvec = np.zeros(n)
    maps = [(T.copy(), cvec.copy())]
    col = n
    for k, (phi, gam, g) in enumerate(factors):
        T = phi @ T
        T[:, col:col + g.shape[1]] += g
        cvec = phi @ cvec + gam @ case["u"][k]
        col += g.shape[1]
        maps.append((T.copy(), cvec.copy()))
    A, b = [], []
    for k in range(N):
        Tk, ck = maps[k]
        for j in range(p):
            y = case["y"][k, j]
            if np.isnan(y):
                continue
            row = case["c"][j] @ Tk / case["sigma"][j]
            if off:
                row[o0 + j] += 1.0 / case["sigma"][j]
            A.append(row)
            b.append((y - case["d"][j] @ case["u"][k] - case["c"][j] @ ck) / case["sigma"][j])
    for i in range(r_total):
        row = np.zeros(width)
        row[n + i] = 1.0
        A.append(row)
        b.append(0.0)
    add_prior(case, A, b, width, slice(0, n))
    A, b = np.array(A), np.array(b)
    theta, cov = lstsq_with_cov(A, b)
    chi2 = float(np.sum((A @ theta - b) ** 2))
    states = [Tk @ theta + ck for Tk, ck in maps]
    covs = [Tk @ cov @ Tk.T for Tk, _ in maps]
    idx = list(range(n)) + (list(range(o0, o0 + p)) if off else [])
    return theta[idx], cov[np.ix_(idx, idx)], states, covs, chi2, A.shape


def add_prior(case, A, b, width, cols):
    if case["prior"] is None:
        return
    mean, pc = case["prior"]
    li = np.linalg.inv(np.linalg.cholesky(pc))
    for i in range(len(mean)):
        row = np.zeros(width)
        row[cols] = li[i]
        A.append(row)
        b.append(li[i] @ mean)


def lstsq_with_cov(A, b):
    theta = np.linalg.lstsq(A, b, rcond=None)[0]
    _, s, vt = np.linalg.svd(A, full_matrices=False)
    cov = (vt.T / s ** 2) @ vt
    return theta, 0.5 * (cov + cov.T)


def simulate(case, x0):
    """Draws a trajectory from the stochastic model and noisy outputs."""
    n = case["a"].shape[0]
    xs = [x0]
    for k, (phi, gam, q) in enumerate(steps_of(case)):
        w, v = np.linalg.eigh(q)
        g = v * np.sqrt(np.clip(w, 0, None))
        xs.append(phi @ xs[-1] + gam @ case["u"][k] + g @ rng.standard_normal(n))
    xs = np.array(xs)
    y = xs @ case["c"].T + case["u"] @ case["d"].T + rng.standard_normal((len(xs), case["c"].shape[0])) * case["sigma"]
    if case["offsets"]:
        y = y + case["offset_values"]
    return y


def make_case(name, description, kind, a, b, c, d, q, times, sigma, period=None, prior=None, offsets=False,
              missing=0.0, form="states"):
    n, m, p = a.shape[0], b.shape[1], c.shape[0]
    case = dict(name=name, description=description, kind=kind, a=a, b=b, c=c, d=d, q=q, times=np.array(times),
                sigma=np.array(sigma), period=period, prior=prior, offsets=offsets)
    N = len(times)
    case["u"] = rng.standard_normal((N, m)) if m else np.zeros((N, 0))
    case["offset_values"] = rng.standard_normal(p) * 0.3
    y = simulate(case, rng.standard_normal(n))
    y[rng.random(y.shape) < missing] = np.nan
    case["y"] = y
    solve = solve_states_form if form == "states" else solve_noise_form
    sol, cov, states, covs, chi2, shape = solve(case)
    return {
        "name": name, "description": description, "form": form,
        "model": {"kind": kind, "a": rows(a), "b": rows(b) if m else None, "c": rows(c), "d": rows(d) if m else None,
                  "samplePeriod": period, "processNoise": rows(q)},
        "trace": {"times": flat(times), "outputs": rows(y), "inputs": rows(case["u"]) if m else None,
                  "sigma": flat(sigma)},
        "options": {"estimateOffsets": offsets,
                    "prior": None if prior is None else {"mean": flat(prior[0]), "covariance": rows(prior[1])}},
        "expected": {"solution": flat(sol), "covariance": rows(cov), "chiSquare": chi2,
                     "states": rows(np.array(states)), "stateVariances": rows(np.array([np.diag(c) for c in covs])),
                     "windowEndCovariance": rows(covs[-1]), "stackedShape": list(shape)},
    }


def uneven_times(N, mean_step):
    steps = np.rint(mean_step * (0.5 + rng.random(N - 1)) / TICK).astype(np.int64)
    return np.concatenate([[0], np.cumsum(steps)]) * TICK + 100.0


def cases():
    osc = np.array([[0.0, 1.0], [-4.0, -0.4]])
    qfull = np.array([[0.02, 0.005], [0.005, 0.05]])
    out = [make_case("oscillator-uniform", "damped oscillator, full Qc, one output, uniform 0.25 s",
                     "continuous", osc, np.zeros((2, 0)), np.array([[1.0, 0.0]]), np.zeros((1, 0)), qfull,
                     100.0 + 0.25 * np.arange(40), [0.05])]
    a3 = np.array([[-0.3, 1.0, 0.0], [0.0, -0.5, 1.0], [0.0, 0.0, -1.2]])
    b3 = np.array([[0.0], [0.2], [1.0]])
    c3 = np.array([[1.0, 0.0, 0.0], [0.0, 0.5, 1.0]])
    d3 = np.array([[0.0], [0.1]])
    q3 = np.diag([0.01, 0.03, 0.02])
    prior3 = (np.array([0.5, -0.2, 0.1]), np.array([[1.0, 0.2, 0.0], [0.2, 2.0, 0.1], [0.0, 0.1, 0.5]]))
    out.append(make_case("input-missing-uneven-prior", "three states, input with feed-through, 10 % missing,"
                         " uneven times, prior", "continuous", a3, b3, c3, d3, q3, uneven_times(50, 0.3),
                         [0.05, 0.08], prior=prior3, missing=0.1))
    tank = np.array([[0.0, 1.0], [0.0, -0.05]])
    qsing = np.array([[0.0, 0.0], [0.0, 0.04]])
    out.append(make_case("singular-noise-offsets", "position and velocity, noise on velocity only (singular Qc),"
                         " both measured, sensor offsets and a prior", "continuous", tank, np.array([[0.0], [1.0]]),
                         np.array([[1.0, 0.0], [0.0, 1.0]]), np.zeros((2, 1)), qsing, 100.0 + 0.5 * np.arange(45),
                         [0.1, 0.05], prior=(np.zeros(2), np.eye(2) * 4.0), offsets=True, form="noise"))
    ad = np.array([[0.9, 0.2], [-0.1, 0.8]])
    out.append(make_case("discrete-gaps", "discrete model, covariance per period, skipped periods, input",
                         "discrete", ad, np.array([[0.0], [0.5]]), np.array([[1.0, 1.0]]), np.array([[0.2]]),
                         np.array([[0.01, 0.0], [0.0, 0.02]]), 10.0 + 2.0 * np.array(
                             [0, 1, 2, 4, 5, 6, 7, 9, 12, 13, 14, 15, 16, 18, 19, 20, 22, 23, 24, 25, 26, 27, 30, 31, 32,
                              33, 34, 35, 36, 38]), [0.1], period=2.0))
    return out


def covariance_cases():
    out = []
    osc = np.array([[0.0, 1.0], [-4.0, -0.4]])
    for h in (0.01, 0.25, 3.0):
        out.append({"kind": "continuous", "a": rows(osc), "q": rows(np.array([[0.02, 0.005], [0.005, 0.05]])),
                    "h": h, "expected": rows(qd_continuous(osc, np.array([[0.02, 0.005], [0.005, 0.05]]), h))})
    stiff = np.array([[-50.0, 1.0, 0.0], [0.0, -0.2, 3.0], [0.0, -3.0, -0.2]])
    qs = np.diag([1.0, 0.0, 0.5])
    out.append({"kind": "continuous", "a": rows(stiff), "q": rows(qs), "h": 2.0,
                "expected": rows(qd_continuous(stiff, qs, 2.0))})
    ad = np.array([[0.9, 0.2], [-0.1, 0.8]])
    for s in (1, 5, 37):
        out.append({"kind": "discrete", "a": rows(ad), "q": rows(np.array([[0.01, 0.003], [0.003, 0.02]])),
                    "steps": s, "expected": rows(qd_discrete(ad, np.array([[0.01, 0.003], [0.003, 0.02]]), s))})
    return out


if __name__ == "__main__":
    doc = {"generator": "generate_process_noise.py", "seed": SEED, "covariances": covariance_cases(),
           "cases": cases()}
    path = pathlib.Path(__file__).with_name("process-noise.json")
    path.write_text(json.dumps(doc, indent=1) + "\n")
    print("wrote", path)
