#!/usr/bin/env python3
"""Invented demo fleet for backstate: 40-ft refrigerated containers ("reefers").

Everything here is made up: the unit IDs, the container, the cargo and the voyages. The script
writes, next to itself,

  models/reefer-40.v1.json   the model the traces were simulated from
  models/reefer-40.v2.json   a "candidate" with the cargo-surface-to-air conductance halved
  traces/<unitId>.csv|json   one 6-hour output trace per unit (a few as JSON)
  fleet.json                 the manifest, with true initial states and independent
                             numpy least-squares reference estimates (model v1)

and prints a short summary table. Run:  python3 generate_demo.py   (numpy + scipy, seeded).

Model (four lumped heat capacities, temperatures in degC, time in s, power in kW = kJ/s)
-----------------------------------------------------------------------------------------
  states  x = [T_wall, T_air, T_surf, T_core]      inputs u = [Q_cool (kW, >= 0), T_amb]

  C_w dT_wall/dt = G_ow (T_amb  - T_wall) + G_wa (T_air  - T_wall)
  C_a dT_air/dt  = G_wa (T_wall - T_air)  + G_as (T_surf - T_air) - Q_cool
  C_s dT_surf/dt = G_as (T_air  - T_surf) + G_sc (T_core - T_surf)
  C_c dT_core/dt = G_sc (T_surf - T_core)

  which is dx/dt = A x + B u with
      A = [[-(G_ow+G_wa)/C_w,  G_wa/C_w,            0,                 0        ],
           [  G_wa/C_a,      -(G_wa+G_as)/C_a,      G_as/C_a,          0        ],
           [  0,               G_as/C_s,          -(G_as+G_sc)/C_s,    G_sc/C_s ],
           [  0,               0,                   G_sc/C_c,        -G_sc/C_c  ]]
      B = [[ 0,        G_ow/C_w ],
           [-1/C_a,    0        ],
           [ 0,        0        ],
           [ 0,        0        ]]

  outputs  return_air = T_air
           supply_air = T_air - K_SUPPLY * Q_cool   (air leaving the evaporator; K_SUPPLY =
                                                     1 / (mass flow * c_p) of the circulating air)
      C = [[0, 1, 0, 0], [0, 1, 0, 0]],   D = [[0, 0], [-K_SUPPLY, 0]]

Simulation: exact zero-order hold. For each step h, the top-left / top-right blocks of
scipy.linalg.expm([[A, B], [0, 0]] * h) give Phi(h) and Gamma(h); inputs recorded at sample k
are held until sample k+1. Sensor noise N(0, 0.15^2) degC on both outputs.

Reference estimate (independent of the service): unknown x0 = state at the trace's first
sample. For every present output y_kj:
    (y_kj - [C xf_k + D u_k]_j) / sigma_j  =  (C Phi(t_k - t_0))_j x0 / sigma_j
where xf is the forced response from xf_0 = 0 with the recorded inputs. Rows are stacked in
sample order, channel order; x0 = numpy.linalg.lstsq; standard errors = sqrt(diag(inv(M'M)))
(computed via the SVD of M and cross-checked against numpy.linalg.inv(M'M)). The references
are computed from the files as written (values re-read), so they match what the service reads.
"""
import csv
import json
import math
import pathlib

import numpy as np
from scipy import linalg

HERE = pathlib.Path(__file__).resolve().parent
SEED = 20240611

# ----------------------------------------------------------------------------- invented parameters
C_W = 400.0      # kJ/K  wall: steel/aluminium liner, floor T-bars, inner part of the foam
C_A = 200.0      # kJ/K  air (~67 m^3, ~80 kJ/K) plus fast-responding evaporator coil and gratings
C_S = 7200.0     # kJ/K  outer ~10 % of 20 t of fruit at 3.6 kJ/(kg K)
C_C = 64800.0    # kJ/K  remaining ~90 % of the cargo (the core)
G_OW = 0.10      # kW/K  ambient -> wall (outer skin, outer half of the insulation)
G_WA = 0.09      # kW/K  wall -> air (inner half of the insulation, liner film)
G_AS = 0.30      # kW/K  air <-> cargo surface (forced convection through the stow)
G_SC = 0.15      # kW/K  cargo surface <-> cargo core (conduction through boxes and produce)
K_SUPPLY = 0.6   # K/kW  supply-return split per kW removed (~1.67 kg/s ~ 5000 m^3/h of air)
SIGMA = 0.15     # degC  sensor noise, both channels

G_AS_V2 = G_AS / 2   # the deliberately wrong candidate

STATES = [("wall", "degC"), ("air", "degC"), ("cargo_surface", "degC"), ("cargo_core", "degC")]
OUTPUTS = ["return_air", "supply_air"]
INPUTS = ["cooling_power", "ambient"]

DT = 60.0                 # s
N_SAMPLES = 361           # 6 h
DOOR_HEAT_KW = 4.0        # unmodelled infiltration while the door is open
DOOR_SAMPLES = 30         # 30 min


def matrices(g_as):
    a = np.array([
        [-(G_OW + G_WA) / C_W, G_WA / C_W, 0.0, 0.0],
        [G_WA / C_A, -(G_WA + g_as) / C_A, g_as / C_A, 0.0],
        [0.0, g_as / C_S, -(g_as + G_SC) / C_S, G_SC / C_S],
        [0.0, 0.0, G_SC / C_C, -G_SC / C_C],
    ])
    b = np.array([
        [0.0, G_OW / C_W],
        [-1.0 / C_A, 0.0],
        [0.0, 0.0],
        [0.0, 0.0],
    ])
    c = np.array([[0.0, 1.0, 0.0, 0.0], [0.0, 1.0, 0.0, 0.0]])
    d = np.array([[0.0, 0.0], [-K_SUPPLY, 0.0]])
    return a, b, c, d


def model_document(version, g_as, description):
    a, b, c, d = matrices(g_as)
    return {
        "description": description,
        "timeDomain": "continuous",
        "states": [{"name": n, "unit": u} for n, u in STATES],
        "outputs": [{"name": n, "unit": "degC", "noiseSigma": SIGMA} for n in OUTPUTS],
        "inputs": [{"name": "cooling_power", "unit": "kW"}, {"name": "ambient", "unit": "degC"}],
        "a": a.tolist(), "b": b.tolist(), "c": c.tolist(), "d": d.tolist(),
    }


def dump_model(doc):
    """JSON with one matrix row per line (plain json.dumps otherwise)."""
    parts = []
    for key, value in doc.items():
        if key in ("a", "b", "c", "d"):
            rows = ",\n    ".join(json.dumps(row) for row in value)
            parts.append(f'  "{key}": [\n    {rows}\n  ]')
        elif isinstance(value, list):
            items = ",\n    ".join(json.dumps(item) for item in value)
            parts.append(f'  "{key}": [\n    {items}\n  ]')
        else:
            parts.append(f"  {json.dumps(key)}: {json.dumps(value)}")
    return "{\n" + ",\n".join(parts) + "\n}\n"


def zoh(a, b, h):
    n, m = b.shape
    blk = np.zeros((n + m, n + m))
    blk[:n, :n], blk[:n, n:] = a, b
    e = linalg.expm(blk * h)
    return e[:n, :n], e[:n, n:]


# ----------------------------------------------------------------------------- simulation

def ambient_at(t_abs, mean, amp, phase):
    return mean + amp * math.sin(2 * math.pi * t_abs / 86400.0 + phase)


def simulate(rng, times, x0, schedule, amb, sensor_offset=0.0, door=None):
    """times: absolute seconds (integers). Returns (y, u, x) with the recorded (rounded) inputs."""
    a, b, c, d = matrices(G_AS)
    # extended input: third column = unmodelled heat into the air (door open)
    b_ext = np.hstack([b, np.array([[0.0], [1.0 / C_A], [0.0], [0.0]])])
    n_s = len(times)
    x = np.zeros((n_s, 4))
    u = np.zeros((n_s, 2))
    y = np.zeros((n_s, 2))
    x[0] = x0
    thermostat_on = True
    current_seg, level = -1, 0.0
    for k in range(n_s):
        t_rel = times[k] - times[0]
        y_true = c @ x[k]
        ret_meas = y_true[0] + sensor_offset + rng.normal(0.0, SIGMA)
        # controller acts on the (possibly faulty) measured return air
        if schedule["kind"] == "thermostat":
            sp, band = schedule["setpoint"], schedule["band"]
            if ret_meas > sp + band:
                thermostat_on = True
            elif ret_meas < sp - band:
                thermostat_on = False
            q = schedule["q_on"] if thermostat_on else schedule["q_off"]
        else:
            seg = int(np.searchsorted(schedule["switch_times"], t_rel, side="right"))
            if k == 0:
                current_seg, level = seg, schedule["base"]
            elif seg != current_seg:       # integrating re-trim plus a random step
                current_seg = seg
                level += schedule["gain"] * (ret_meas - schedule["setpoint"]) + schedule["jitter"][seg]
                level = min(max(level, 0.0), 9.0)
            q = level
        u[k, 0] = round(q, 2)
        u[k, 1] = round(ambient_at(times[k], *amb), 2)
        y[k, 0] = ret_meas
        y[k, 1] = y_true[1] - K_SUPPLY * u[k, 0] + rng.normal(0.0, SIGMA)
        if k + 1 < n_s:
            h = float(times[k + 1] - times[k])
            door_q = 0.0
            if door is not None and door[0] <= k < door[0] + door[1]:
                door_q = DOOR_HEAT_KW
            phi, gam = zoh(a, b_ext, h)
            x[k + 1] = phi @ x[k] + gam @ np.array([u[k, 0], u[k, 1], door_q])
    return y, u, x


# ----------------------------------------------------------------------------- writing / reading

def fmt(v, nd):
    return f"{v:.{nd}f}"


def write_csv(path, times, y, u, column_order):
    cols = {"time": [str(int(t)) for t in times],
            "return_air": ["" if math.isnan(v) else fmt(v, 3) for v in y[:, 0]],
            "supply_air": ["" if math.isnan(v) else fmt(v, 3) for v in y[:, 1]],
            "cooling_power": [fmt(v, 2) for v in u[:, 0]],
            "ambient": [fmt(v, 2) for v in u[:, 1]]}
    with open(path, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\r\n")
        w.writerow(column_order)
        for k in range(len(times)):
            w.writerow([cols[name][k] for name in column_order])


def write_json_trace(path, times, y, u):
    def col(v, nd):
        return [None if math.isnan(x) else float(fmt(x, nd)) for x in v]
    doc = {"time": [int(t) for t in times],
           "outputs": {"return_air": col(y[:, 0], 3), "supply_air": col(y[:, 1], 3)},
           "inputs": {"cooling_power": col(u[:, 0], 2), "ambient": col(u[:, 1], 2)}}
    path.write_text(json.dumps(doc, separators=(",", ":")) + "\n")


def read_trace(path):
    """Returns times (float), y (N x 2, NaN missing) and u (N x 2) in model channel order."""
    if path.suffix == ".json":
        doc = json.loads(path.read_text())
        t = np.array(doc["time"], dtype=float)
        y = np.array([[np.nan if v is None else v for v in doc["outputs"][n]] for n in OUTPUTS]).T
        u = np.array([doc["inputs"][n] for n in INPUTS], dtype=float).T
        return t, y, u
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    head, body = rows[0], rows[1:]
    idx = {name: head.index(name) for name in ["time"] + OUTPUTS + INPUTS}
    t = np.array([float(r[idx["time"]]) for r in body])
    y = np.array([[np.nan if r[idx[n]] == "" else float(r[idx[n]]) for n in OUTPUTS] for r in body])
    u = np.array([[float(r[idx[n]]) for n in INPUTS] for r in body])
    return t, y, u


# ----------------------------------------------------------------------------- reference estimate

def reference_estimate(g_as, t, y, u):
    a, b, c, d = matrices(g_as)
    n = a.shape[0]
    rel = t - t[0]
    phi_k = np.eye(n)
    xf = np.zeros(n)
    rows, rhs = [], []
    for k in range(len(t)):
        if k > 0:
            phi_h, gam_h = zoh(a, b, rel[k] - rel[k - 1])
            phi_k = phi_h @ phi_k
            xf = phi_h @ xf + gam_h @ u[k - 1]
        forced = c @ xf + d @ u[k]
        reg = c @ phi_k
        for j in range(len(OUTPUTS)):
            if not math.isnan(y[k, j]):
                rows.append(reg[j] / SIGMA)
                rhs.append((y[k, j] - forced[j]) / SIGMA)
    m_mat, rhs = np.array(rows), np.array(rhs)
    x0, _, rank, s = np.linalg.lstsq(m_mat, rhs, rcond=None)
    assert rank == n
    _, s_svd, vt = np.linalg.svd(m_mat, full_matrices=False)
    cov = (vt.T / s_svd**2) @ vt
    kappa = float((s_svd[0] / s_svd[-1]) ** 2)
    if kappa < 1e10:
        cov_inv = np.linalg.inv(m_mat.T @ m_mat)
        assert np.allclose(cov_inv, cov, rtol=1e-5 + kappa * 1e-15, atol=0), "covariance cross-check"
    res = m_mat @ x0 - rhs
    chi2 = float(res @ res)
    dof = m_mat.shape[0] - n
    return x0, np.sqrt(np.diag(cov)), chi2, dof, kappa


# ----------------------------------------------------------------------------- diagnostics of the model

def model_checks():
    a, b, c, d = matrices(G_AS)
    n = a.shape[0]
    obs = np.vstack([c @ np.linalg.matrix_power(a, i) for i in range(n)])
    rank = int(np.linalg.matrix_rank(obs))
    eig = np.linalg.eigvals(a)
    tau_min = sorted((-1.0 / eig.real) / 60.0)
    phi, _ = zoh(a, b, DT)
    w = np.zeros((n, n))
    phi_k = np.eye(n)
    for _ in range(N_SAMPLES):
        m = c @ phi_k / SIGMA
        w += m.T @ m
        phi_k = phi @ phi_k
    w_eig, w_vec = np.linalg.eigh(w)
    horizons = []                 # same Gramian for shorter windows (60 s sampling)
    for minutes in (30, 60, 120, 240, 360):
        wh = np.zeros((n, n))
        phi_k = np.eye(n)
        for _ in range(minutes + 1):
            m = c @ phi_k / SIGMA
            wh += m.T @ m
            phi_k = phi @ phi_k
        horizons.append((minutes, float(np.linalg.cond(wh)), np.sqrt(np.diag(np.linalg.inv(wh)))))
    return {
        "observabilityRank": rank,
        "observabilityMatrixSingularValues": np.linalg.svd(obs, compute_uv=False).tolist(),
        "timeConstantsMinutes": tau_min,
        "gramian6hSampled": w,
        "gramianCond": float(np.linalg.cond(w)),
        "gramianEigenvalues": w_eig.tolist(),
        "gramianWeakestDirection": w_vec[:, 0].tolist(),
        "stdErrorFullTrace": np.sqrt(np.diag(np.linalg.inv(w))).tolist(),
        "horizons": horizons,
    }


# ----------------------------------------------------------------------------- the fleet

SCENARIOS = (["normal"] * 12 + ["sensor-offset", "sensor-offset", "door-open", "few-samples",
                                "gaps", "gaps", "gaps", "non-uniform"])
JSON_UNITS = {1, 5, 18, 19}        # indexes written as JSON traces (normal, normal, gaps, non-uniform)
REORDERED_COLUMNS = {3, 8, 12}     # CSV column order shuffled (the service matches by name)


def main():
    rng = np.random.default_rng(SEED)
    (HERE / "models").mkdir(exist_ok=True)
    (HERE / "traces").mkdir(exist_ok=True)
    for old in (HERE / "traces").glob("RCX-*"):
        old.unlink()

    v1 = model_document(1, G_AS, (
        "reefer-40 v1: invented 4-node lumped thermal model of a 40-ft refrigerated container "
        "(wall, air, cargo surface, cargo core; degC, seconds, kW). Demo data were simulated from this."))
    v2 = model_document(2, G_AS_V2, (
        "reefer-40 v2 (candidate): same as v1 but the air-to-cargo-surface conductance is halved "
        f"({G_AS} -> {G_AS_V2} kW/K). Deliberately wrong; it should fit the demo fleet worse."))
    for name, doc in (("reefer-40.v1.json", v1), ("reefer-40.v2.json", v2)):
        text = dump_model(doc)
        assert json.loads(text) == doc
        (HERE / "models" / name).write_text(text)

    ids = set()
    while len(ids) < len(SCENARIOS):
        ids.add(f"RCX-{rng.integers(10000, 100000):05d}")
    ids = sorted(ids)
    rng.shuffle(ids)

    offsets = iter([+1.5, -2.0])
    units, table = [], []
    for i, scenario in enumerate(SCENARIOS):
        uid = ids[i]
        start = int(rng.integers(0, 1440)) * 60          # absolute clock of the first sample, s
        # initial state: cargo loaded warm, air already pulled down, wall in between
        core = rng.uniform(8.0, 14.0)
        air = rng.uniform(2.0, 5.0)
        surf = air + rng.uniform(0.35, 0.75) * (core - air)
        wall = rng.uniform(10.0, 20.0)
        x0 = np.array([wall, air, surf, core])
        amb = (rng.uniform(29.0, 31.0), rng.uniform(3.5, 5.0), rng.uniform(0, 2 * math.pi))
        if i % 2 == 0:
            schedule = {"kind": "thermostat", "setpoint": rng.uniform(2.0, 4.0),
                        "band": rng.uniform(0.3, 0.8), "q_on": rng.uniform(6.0, 9.0),
                        "q_off": rng.uniform(0.0, 1.0)}
        else:
            # randomly timed steps: at each switch the level is re-trimmed from the measured error
            # (integral action) plus a random step, then held until the next switch
            n_sw = int(rng.integers(8, 16))
            sw = np.sort(rng.choice(np.arange(5, 355), n_sw, replace=False)) * DT
            schedule = {"kind": "stepped", "switch_times": sw, "setpoint": rng.uniform(2.0, 4.0),
                        "base": rng.uniform(2.5, 4.0), "gain": rng.uniform(0.2, 0.4),
                        "jitter": rng.normal(0.0, 0.8, n_sw + 1)}

        if scenario == "few-samples":
            rel = np.arange(6) * 72 * DT                   # logger misconfigured: 6 records, 72 min apart
        elif scenario == "non-uniform":
            steps = rng.integers(20, 121, 1000)            # 20 s .. 2 min, whole seconds
            rel = np.concatenate([[0], np.cumsum(steps)])
            rel = rel[rel <= 6 * 3600]
        else:
            rel = np.arange(N_SAMPLES) * DT
        times = start + rel.astype(int)

        offset = next(offsets) if scenario == "sensor-offset" else 0.0
        door = (int(rng.integers(90, 200)), DOOR_SAMPLES) if scenario == "door-open" else None
        y, u, _ = simulate(rng, times, x0, schedule, amb, sensor_offset=offset, door=door)

        if scenario == "gaps":
            frac = rng.uniform(0.01, 0.02)
            for j in range(2):
                drop = rng.random(len(times)) < frac
                drop[0] = False
                y[drop, j] = np.nan
            both = int(rng.integers(1, len(times)))        # one row with both outputs missing
            y[both, :] = np.nan

        if i in JSON_UNITS:
            rel_path = f"traces/{uid}.json"
            write_json_trace(HERE / rel_path, times, y, u)
        else:
            rel_path = f"traces/{uid}.csv"
            order = ["time"] + OUTPUTS + INPUTS
            if i in REORDERED_COLUMNS:
                order = ["time", "ambient", "supply_air", "cooling_power", "return_air"]
            write_csv(HERE / rel_path, times, y, u, order)

        t_r, y_r, u_r = read_trace(HERE / rel_path)
        est, se, chi2, dof, kappa = reference_estimate(G_AS, t_r, y_r, u_r)
        _, _, chi2_v2, dof_v2, _ = reference_estimate(G_AS_V2, t_r, y_r, u_r)
        entry = {"unitId": uid, "trace": rel_path, "version": 1, "scenario": scenario,
                 "trueInitialState": [round(float(v), 4) for v in x0]}
        if scenario == "sensor-offset":
            entry["fault"] = f"return_air sensor offset {offset:+.1f} degC"
        elif scenario == "door-open":
            entry["fault"] = (f"door open {DOOR_SAMPLES} min from t0+{door[0] * DT / 60:.0f} min: "
                              f"unmodelled {DOOR_HEAT_KW} kW into the air")
        elif scenario == "few-samples":
            entry["fault"] = "only 6 samples, 72 min apart (dof 12 - 4 = 8)"
        elif scenario == "gaps":
            entry["fault"] = f"{int(np.isnan(y_r).sum())} missing output cells"
        elif scenario == "non-uniform":
            entry["fault"] = f"{len(t_r)} samples, irregular 20-120 s spacing"
        entry.update({
            "referenceEstimate": [float(v) for v in est],
            "referenceStdErrors": [float(v) for v in se],
            "referenceChiSquare": chi2,
            "referenceDegreesOfFreedom": dof,
            "referenceConditionNumber": kappa,
        })
        units.append(entry)
        table.append((uid, scenario, len(t_r), x0, est, se, chi2 / dof, chi2_v2 / dof_v2))

    fleet = {
        "family": "reefer-40",
        "description": ("Invented demo fleet of 40-ft reefers. trueInitialState is for demos/tests "
                        "only. referenceEstimate/referenceStdErrors: numpy weighted least squares "
                        "with model v1, sigma 0.15 per channel, missing samples skipped, x0 at the "
                        "first sample (see generate_demo.py)."),
        "units": units,
    }
    (HERE / "fleet.json").write_text(json.dumps(fleet, indent=1) + "\n")

    chk = model_checks()
    print(f"observability rank {chk['observabilityRank']} of 4; "
          f"time constants (min) {', '.join(f'{v:.1f}' for v in chk['timeConstantsMinutes'])}")
    print(f"6-h sampled Gramian (60 s, sigma {SIGMA}): cond {chk['gramianCond']:.3e}, "
          f"eigenvalues {', '.join(f'{v:.3e}' for v in chk['gramianEigenvalues'])}")
    print(f"  weakest direction {', '.join(f'{v:+.3f}' for v in chk['gramianWeakestDirection'])}; "
          f"std err full trace {', '.join(f'{v:.3f}' for v in chk['stdErrorFullTrace'])}")
    node_tau = {"wall": C_W / (G_OW + G_WA), "air": C_A / (G_WA + G_AS),
                "cargo_surface": C_S / (G_AS + G_SC), "cargo_core": C_C / G_SC}
    print("  node time constants C_i / sum(G): " + ", ".join(f"{k} {v / 60:.0f} min"
                                                         for k, v in node_tau.items()))
    for minutes, cond, se in chk["horizons"]:
        print(f"  window {minutes:3d} min: Gramian cond {cond:.2e}, std err [wall air surf core] "
              + " ".join(f"{v:.3g}" for v in se))
    print()

    def v4(v):
        return " ".join(f"{x:6.2f}" for x in v)
    print(f"{'unit':<10} {'scenario':<13} {'N':>3}  {'true x0 [wall air surf core]':<28}  "
          f"{'lstsq x0 (v1)':<28}  {'core se':>7}  {'chi2/dof v1':>11}  {'v2':>7}")
    for uid, sc, n_s, x0, est, se, r1, r2 in table:
        print(f"{uid:<10} {sc:<13} {n_s:>3}  {v4(x0):<28}  {v4(est):<28}  {se[3]:7.2f}  "
              f"{r1:11.2f}  {r2:7.2f}")


if __name__ == "__main__":
    main()
