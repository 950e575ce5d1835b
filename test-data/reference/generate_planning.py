#!/usr/bin/env python3
"""Independent expected values for backstate.estimation.SamplingPlanner (observability planning).

Writes planning.json next to this file. Nothing here reads or imitates the Java code: every
expected value comes from numpy / scipy on the stacked weighted observation matrix of the plan,
built from first principles.

A plan: sample period T, horizons H, output subsets S, noise sigma per output. Samples are
t_k = k T for k = 0 .. N-1 with N = floor(H / T) + 1. For a subset S the stacked matrix M has one
row C_j Phi(t_k) / sigma_j per sample k (outer) and output j in S (inner, model order), where
Phi(t) = scipy.linalg.expm(A t) for a continuous model and numpy.linalg.matrix_power(A, t / Ts)
for a discrete one (each Phi(t_k) computed directly, not by recursion). Then

  information W     M' M
  covariance        V diag(1 / s^2) V' from numpy.linalg.svd(M) (rank n only)
  standardErrors    sqrt(diag(covariance))
  conditionNumber   (s_max / s_min)^2
  rank              singular values of M above s_max * max(rows, n) * eps (numpy's matrix_rank rule)
  nullDirections    scipy.linalg.null_space(M) at that tolerance (sign free)
  observable        numpy.linalg.matrix_rank of [C_S; C_S A; ...; C_S A^(n-1)] (Kalman 1960)

Cases: the demo reefer model v1 (../demo/models/reefer-40.v1.json) on the demo's 60 s grid for
windows of 30 min .. 6 h, with each output alone, both, and both with unequal sigma; and a
discrete 3-state model with one output that does not see the third state (unobservable subset).

Tolerances (relative, per case): numpy and the Java code factor the same M by different
backward-stable routes; the covariance then agrees to about kappa(W) * eps, so each horizon
carries rtol = max(1e-12, COVARIANCE_MARGIN * kappa(W) * eps).

Run: python3 generate_planning.py   (numpy, scipy; no randomness)
"""
import json
import pathlib

import numpy as np
from scipy import linalg

HERE = pathlib.Path(__file__).resolve().parent
REEFER = HERE.parent / "demo" / "models" / "reefer-40.v1.json"
EPS = np.finfo(float).eps
# Margin over kappa(W) * eps for the covariance comparison; numpy's SVD route and a QR route
# differ by a small multiple of it on these problems.
COVARIANCE_MARGIN = 10.0


def stacked(a, c, sigma, subset, period, samples, discrete_period=None):
    rows = []
    for k in range(samples):
        t = k * period
        if discrete_period is None:
            phi = linalg.expm(a * t)
        else:
            phi = np.linalg.matrix_power(a, int(round(t / discrete_period)))
        g = c @ phi
        for j in subset:
            rows.append(g[j] / sigma[j])
    return np.array(rows)


def predict(m, n):
    u, s, vt = np.linalg.svd(m)
    tol = s[0] * max(m.shape[0], n) * EPS
    rank = int(np.sum(s > tol))
    w = m.T @ m
    out = {"samples": None, "equations": int(m.shape[0]), "rank": rank, "information": w.tolist(),
           "singularValues": s.tolist()}
    if rank == n:
        cov = vt.T @ np.diag(1.0 / s ** 2) @ vt
        kappa = float((s[0] / s[-1]) ** 2)
        out.update({"covariance": cov.tolist(), "standardErrors": np.sqrt(np.diag(cov)).tolist(),
                    "conditionNumber": kappa, "nullDirections": [],
                    "rtol": max(1e-12, COVARIANCE_MARGIN * kappa * EPS)})
    else:
        null = linalg.null_space(m, rcond=tol / s[0])
        out.update({"covariance": None, "standardErrors": None, "conditionNumber": None,
                    "nullDirections": null.T.tolist(), "rtol": 1e-12})
    return out


def kalman_observable(a, c, subset):
    n = a.shape[0]
    cs = c[subset]
    blocks = [cs @ np.linalg.matrix_power(a, i) for i in range(n)]
    return bool(np.linalg.matrix_rank(np.vstack(blocks)) == n)


def case(name, model, period, horizons, subsets, sigma, discrete_period=None):
    a = np.array(model["a"], dtype=float)
    c = np.array(model["c"], dtype=float)
    n = a.shape[0]
    plans = []
    for subset in subsets:
        predictions = []
        for h in horizons:
            samples = int(np.floor(h / period + 1e-9)) + 1
            p = predict(stacked(a, c, sigma, subset, period, samples, discrete_period), n)
            p["samples"] = samples
            p["horizon"] = h
            predictions.append(p)
        plans.append({"outputs": subset, "observable": kalman_observable(a, c, subset), "predictions": predictions})
    return {"name": name, "model": {"kind": "continuous" if discrete_period is None else "discrete",
                                    "samplePeriod": discrete_period, "a": a.tolist(), "c": c.tolist()},
            "plan": {"samplePeriod": period, "horizons": horizons, "outputSubsets": subsets,
                     "noiseSigma": list(sigma)},
            "plans": plans}


def main():
    reefer = json.loads(REEFER.read_text())
    minutes = [30, 60, 120, 240, 360]
    cases = [
        case("reefer-v1-model-sigma", reefer, 60.0, [60.0 * m for m in minutes], [[0], [1], [0, 1]], [0.15, 0.15]),
        case("reefer-v1-unequal-sigma", reefer, 120.0, [60.0 * m for m in minutes], [[0, 1]], [0.1, 0.3]),
        case("discrete-hidden-state",
             {"a": [[0.9, 0.2, 0.0], [-0.1, 0.8, 0.0], [0.0, 0.0, 0.95]],
              "c": [[1.0, 0.0, 0.0], [0.0, 0.0, 1.0]]},
             1.0, [4.0, 10.0], [[0], [1], [0, 1]], [0.5, 0.2], discrete_period=0.5),
    ]
    (HERE / "planning.json").write_text(json.dumps({"cases": cases}, indent=1) + "\n")
    for c in cases:
        for p in c["plans"]:
            ses = [(q["horizon"], q["rank"], None if q["standardErrors"] is None else [f"{v:.3g}" for v in q["standardErrors"]])
                   for q in p["predictions"]]
            print(c["name"], p["outputs"], "observable" if p["observable"] else "UNOBSERVABLE", ses)


if __name__ == "__main__":
    main()
