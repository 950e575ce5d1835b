"""Times the best dense NumPy routes we could write on the benchmark trace and keeps the fastest.

Every route stacks the N*p x n weighted matrix A (rows C_j e^{A t_k} / sigma_j) and the right-hand
side b = (y - forced response) / sigma, then solves min |A x - b|. Timed work per run, on data
already in memory, into buffers allocated once per size (a warm script reuses its memory):
  discretise - Phi = e^{Ah}, Gamma (scipy.linalg.expm of the augmented matrix);
  rows       - A by doubling: rows k in [L, 2L) are rows [0, L) times Phi^L, Phi^{2L} = (Phi^L)^2,
               so log2(N) large matrix products (N*p*n^2 multiply-adds in all);
  forced     - the forced response, by one of
                 fft:     convolution of the sampled impulse response g_j = (C/sigma) Phi^{j-1} Gamma
                          (read off the stacked rows) with the inputs, real FFTs of length >= 2N
                          (scipy.fft, 2 workers), plus D u / sigma;
                 blocked: the recursion x_{k+1} = Phi x_k + Gamma u_k in blocks of 1024 samples
                          (statespace_np.forced_states: a few large products, no per-sample loop);
  solve      - one of
                 lstsq:    numpy.linalg.lstsq (LAPACK gelsd, SVD based);
                 qr:       scipy.linalg.qr_multiply (gelsqf + ormqr: R and Q^T b), triangular solve;
                 cholesky: normal equations A^T A (BLAS syrk) and A^T b, scipy.linalg.cho_factor /
                           cho_solve; kappa(A^T A) = kappa(A)^2 ~ 23 here, so it loses nothing.
The forced route and the solve route are timed separately (both forced routes once per run, each
solve route on the same A and b), and a route counts only if its x0 agrees with lstsq's to
AGREEMENT (relative, per entry). The reported NumPy time is the fastest agreeing combination:
discretise + rows + fastest forced + fastest solve, medians of REPEATS runs after one warm-up.

usage: numpy_lstsq.py TRACE_FILE RESULT_JSON REPEATS N [N ...]
"""

import ctypes
import io
import json
import os
import statistics
import sys
import time
from contextlib import redirect_stdout

import numpy as np
import scipy.fft
import scipy.linalg

import make_trace
import statespace_np as ss

#: A route's x0 must agree with lstsq's (gelsd, the reference) this closely, entry by entry.
AGREEMENT = 1e-8
#: Threads for scipy.fft: the machine's cores, as OpenBLAS uses them.
FFT_WORKERS = os.cpu_count() or 1


def stacked_rows(weighted_c, phi, out):
    """out[k] = weighted_c Phi^k for k < len(out), by doubling; out has shape (N, p, n)."""
    samples, p, n = out.shape
    out[0] = weighted_c
    filled, power = 1, phi                                      # power = Phi^filled
    while filled < samples:
        take = min(filled, samples - filled)
        np.matmul(out[:take].reshape(take * p, n), power, out=out[filled:filled + take].reshape(take * p, n))
        filled += take
        power = power @ power
    return out


def forced_fft(rows, gamma, u, d_weighted):
    """Weighted forced outputs: sum_{i<k} g_{k-i} u_i + (D/sigma) u_k, g_j = rows[j-1] Gamma, by FFT."""
    samples, p, _ = rows.shape
    m = u.shape[1]
    length = scipy.fft.next_fast_len(2 * samples, real=True)
    g = np.zeros((samples, p, m))
    g[1:] = (rows[:-1].reshape((samples - 1) * p, -1) @ gamma).reshape(samples - 1, p, m)
    g_hat = scipy.fft.rfft(g.reshape(samples, p * m), n=length, axis=0, workers=FFT_WORKERS)
    u_hat = scipy.fft.rfft(u, n=length, axis=0, workers=FFT_WORKERS)
    y_hat = np.einsum("fpm,fm->fp", g_hat.reshape(-1, p, m), u_hat)
    return scipy.fft.irfft(y_hat, n=length, axis=0, workers=FFT_WORKERS)[:samples] + u @ d_weighted.T


def forced_blocked(phi, gamma, u, c_weighted, d_weighted):
    """Weighted forced outputs from the blocked state recursion (statespace_np.forced_states)."""
    return ss.forced_states(phi, gamma, u) @ c_weighted.T + u @ d_weighted.T


def solve_lstsq(a, b):
    return np.linalg.lstsq(a, b, rcond=None)[0]


def solve_qr(a, b):
    qtb, r = scipy.linalg.qr_multiply(a, b[None, :], mode="right")
    return scipy.linalg.solve_triangular(r, qtb[0])


def solve_cholesky(a, b):
    return scipy.linalg.cho_solve(scipy.linalg.cho_factor(a.T @ a), a.T @ b)


FORCED_ROUTES = ("fft", "blocked")
SOLVE_ROUTES = {"lstsq": solve_lstsq, "qr": solve_qr, "cholesky": solve_cholesky}


def one_run(t, rows):
    """One timed run: seconds per stage and route, and x0 per solve route (forced by FFT)."""
    weight = 1.0 / t["sigma"]
    c_weighted, d_weighted = t["c"] * weight[:, None], t["d"] * weight[:, None]
    seconds, x = {}, {}
    start = time.perf_counter()
    phi, gamma = ss.zero_order_hold(t["a"], t["b"], float(t["h"]))
    seconds["discretise"] = time.perf_counter() - start
    start = time.perf_counter()
    stacked_rows(c_weighted, phi, rows)
    seconds["rows"] = time.perf_counter() - start
    start = time.perf_counter()
    forced = forced_fft(rows, gamma, t["u"], d_weighted)
    seconds["forced fft"] = time.perf_counter() - start
    start = time.perf_counter()
    other = forced_blocked(phi, gamma, t["u"], c_weighted, d_weighted)
    seconds["forced blocked"] = time.perf_counter() - start
    forced_gap = float(np.max(np.abs(other - forced)) / np.max(np.abs(forced)))
    a = rows.reshape(-1, rows.shape[2])
    b = (t["y"] * weight - forced).reshape(-1)
    for name, route in SOLVE_ROUTES.items():
        start = time.perf_counter()
        x[name] = route(a, b)
        seconds[f"solve {name}"] = time.perf_counter() - start
    return seconds, x, forced_gap


def rel_diff(x, reference):
    return float(np.max(np.abs(x - reference) / np.abs(reference)))


def measure(t, repeats):
    samples, p = t["y"].shape
    rows = np.empty((samples, p, t["c"].shape[1]))
    one_run(t, rows)
    runs = [one_run(t, rows) for _ in range(repeats)]
    median = {stage: statistics.median(r[0][stage] for r in runs) for stage in runs[0][0]}
    x = runs[-1][1]
    agreement = {name: rel_diff(x[name], x["lstsq"]) for name in SOLVE_ROUTES}
    forced_gap = max(r[2] for r in runs)
    forced = min(FORCED_ROUTES, key=lambda f: median[f"forced {f}"]) if forced_gap <= AGREEMENT else "fft"
    solve = min((s for s in SOLVE_ROUTES if agreement[s] <= AGREEMENT), key=lambda s: median[f"solve {s}"])
    totals = [r[0]["discretise"] + r[0]["rows"] + r[0][f"forced {forced}"] + r[0][f"solve {solve}"] for r in runs]
    lstsq_totals = [r[0]["discretise"] + r[0]["rows"] + r[0]["forced fft"] + r[0]["solve lstsq"] for r in runs]
    return {"samples": samples, "route": f"rows by doubling + forced by {forced} + {solve}",
            "stages_s": median, "agreement_with_lstsq": agreement, "forced_routes_gap": forced_gap,
            "total_s": statistics.median(totals), "total_min_s": min(totals),
            "lstsq_route_s": statistics.median(lstsq_totals),
            "x0": [float(v) for v in x[solve]], "x0_true": [float(v) for v in t["x0_true"]]}


def blas_kernel():
    """Which BLAS and core kernel NumPy runs: threadpoolctl if installed, else OpenBLAS's own answer."""
    try:
        import threadpoolctl
        info = [i for i in threadpoolctl.threadpool_info() if i.get("user_api") == "blas"]
        if info:
            return ", ".join(f"{i.get('internal_api')} {i.get('version')} kernel {i.get('architecture')} "
                             f"threads {i.get('num_threads')}" for i in info)
    except ImportError:
        pass
    for line in open("/proc/self/maps"):
        path = line.split()[-1]
        if "openblas" in path and path.endswith(".so"):
            lib = ctypes.CDLL(path)
            for prefix in ("scipy_openblas_", "openblas_"):
                for suffix in ("64_", ""):
                    name = f"{prefix}get_corename{suffix}"
                    if hasattr(lib, name):
                        corename = getattr(lib, name)
                        corename.restype = ctypes.c_char_p
                        threads = getattr(lib, f"{prefix}get_num_threads{suffix}")
                        return f"OpenBLAS ({path.rsplit('/', 1)[-1]}) kernel {corename().decode()} threads {threads()}"
    text = io.StringIO()
    with redirect_stdout(text):
        np.show_config()
    return "unknown kernel; numpy.show_config():\n" + text.getvalue()


def main(trace_file, result_file, repeats, sizes):
    results = {"blas": blas_kernel(), "numpy": np.__version__, "scipy": scipy.__version__,
               "fft_workers": FFT_WORKERS, "runs": []}
    print(f"numpy {np.__version__}, scipy {scipy.__version__}, BLAS: {results['blas']}, "
          f"scipy.fft workers {FFT_WORKERS}", flush=True)
    for samples in sizes:
        run = measure(make_trace.read(trace_file, samples), repeats)
        stages = ", ".join(f"{k} {v:.4f}" for k, v in run["stages_s"].items())
        agree = ", ".join(f"{k} {v:.1e}" for k, v in run["agreement_with_lstsq"].items())
        print(f"N={samples}: medians (s): {stages}; x0 vs lstsq: {agree}; forced fft vs blocked "
              f"{run['forced_routes_gap']:.1e}\nN={samples}: fastest route: {run['route']}: "
              f"{run['total_s']:.4f} s median (min {run['total_min_s']:.4f}); "
              f"with lstsq instead: {run['lstsq_route_s']:.4f} s", flush=True)
        results["runs"].append(run)
    with open(result_file, "w") as f:
        json.dump(results, f, indent=1)


if __name__ == "__main__":
    if len(sys.argv) < 5:
        sys.exit(__doc__)
    main(sys.argv[1], sys.argv[2], int(sys.argv[3]), [int(s) for s in sys.argv[4:]])
