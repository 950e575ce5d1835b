#!/usr/bin/env python3
"""Invented demo: a reefer unit whose door is opened often (a multi-drop delivery), for the
process-noise formulation. Writes, next to this file:

  reefer-40-noise.v1.json  the demo model reefer-40 (../generate_demo.py, same matrices and sigma)
                           with processNoise perState = [0, Q_AIR, 0, 0]: white heat exchange at the
                           door, felt by the air only (a singular spectral density)
  RCX-61530.csv            6 h of 60 s log (return/supply air, cooling power, ambient)
  truth.json               the simulated true initial state, and the per-step covariance used

The disturbance is drawn from the model's own stochastic form: x_{k+1} = Phi x_k + Gamma u_k + w_k with
w_k ~ N(0, Q_d), Q_d = int_0^60 expm(A t) Qc expm(A t)^T dt from the Van Loan block exponential
(scipy.linalg.expm). Each minute's door heat is random with zero mean: the dock is warmer than the
air by day and colder by night (invented). A door that only ever lets heat in has a mean, which
belongs in a known input, not in zero-mean process noise.

Nothing here describes real equipment or data. Run: python3 generate_door_openings.py (numpy, scipy).
"""
import csv
import json
import pathlib
import sys

import numpy as np
from scipy import linalg

HERE = pathlib.Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
import generate_demo as demo  # noqa: E402  (matrices, zoh, model_document, dump_model, SIGMA, DT)

SEED = 20261203
UNIT = "RCX-61530"
N_SAMPLES = 361                 # 6 h at 60 s
T0 = 43200.0                    # noon, seconds on the trace's clock
#: Spectral density of the air's disturbance, K^2/s: door heat of ~2 kW rms per minute into 200 kJ/K
#: (60 s x (2 kW / 200 kJ/K)^2 = 0.006 K^2/s); invented.
Q_AIR = 0.006


def van_loan(a, qc, h):
    n = a.shape[0]
    blk = np.zeros((2 * n, 2 * n))
    blk[:n, :n], blk[:n, n:], blk[n:, n:] = -a, qc, a.T
    f = linalg.expm(blk * h)
    phi = f[n:, n:].T
    q = phi @ f[:n, n:]
    return 0.5 * (q + q.T)


def main():
    rng = np.random.default_rng(SEED)
    a, b, c, d = demo.matrices(demo.G_AS)
    qc = np.diag([0.0, Q_AIR, 0.0, 0.0])
    phi, gam = demo.zoh(a, b, demo.DT)
    qd = van_loan(a, qc, demo.DT)
    w, v = np.linalg.eigh(qd)
    root = v * np.sqrt(np.clip(w, 0.0, None))
    times = T0 + demo.DT * np.arange(N_SAMPLES)
    cooling = np.repeat(rng.uniform(4.0, 8.0, N_SAMPLES // 30 + 1), 30)[:N_SAMPLES].round(2)
    ambient = (28.0 + 4.0 * np.sin(2 * np.pi * (times - T0) / 86400.0)).round(2)
    u = np.column_stack([cooling, ambient])
    x0 = np.array([14.0, 3.5, 9.0, 12.5])
    x = np.empty((N_SAMPLES, 4))
    x[0] = x0
    for k in range(N_SAMPLES - 1):
        x[k + 1] = phi @ x[k] + gam @ u[k] + root @ rng.standard_normal(4)
    y = x @ c.T + u @ d.T + rng.standard_normal((N_SAMPLES, 2)) * demo.SIGMA

    doc = demo.model_document(1, demo.G_AS, "reefer-40-noise v1: the reefer-40 model with the heat a door"
                              " exchanges with the air as process noise (invented; demo of the process_noise formulation)")
    doc["processNoise"] = {"perState": [0.0, Q_AIR, 0.0, 0.0]}
    (HERE / "reefer-40-noise.v1.json").write_text(demo.dump_model(doc))
    with open(HERE / f"{UNIT}.csv", "w", newline="") as f:
        out = csv.writer(f, lineterminator="\n")
        out.writerow(["time", "return_air", "supply_air", "cooling_power", "ambient"])
        for k in range(N_SAMPLES):
            out.writerow([f"{times[k]:.0f}", f"{y[k, 0]:.3f}", f"{y[k, 1]:.3f}", f"{u[k, 0]:.2f}", f"{u[k, 1]:.2f}"])
    truth = {"unitId": UNIT, "x0": x0.tolist(), "states": [s for s, _ in demo.STATES],
             "processNoisePerState": [0.0, Q_AIR, 0.0, 0.0], "perStepCovariance": qd.tolist(), "seed": SEED}
    (HERE / "truth.json").write_text(json.dumps(truth, indent=1) + "\n")
    print("wrote", UNIT, "model and truth in", HERE)


if __name__ == "__main__":
    main()
