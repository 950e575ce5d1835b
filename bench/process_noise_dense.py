"""Dense NumPy reference for the process-noise benchmark: the MAP estimate over all states.

For each N: the trace's first N samples, the benchmark model with process noise of spectral density
LEVEL * I (as ProcessNoiseBench), written as ONE dense least-squares problem over x_0 ... x_{N-1}:
rows (C_j x_k)/sigma_j = (y_kj - D_j u_k)/sigma_j and L^-1 (x_{k+1} - Phi x_k) = L^-1 Gamma u_k with
Q_d = L L^T (Van Loan block exponential by scipy.linalg.expm), solved by numpy.linalg.lstsq.
Build and lstsq are timed separately (median of REPEATS after one warm-up). Agreement: max over i of
|x0_i(Java) - x0_i(NumPy)| / max(|x0_i(NumPy)|, 1e-12), read from the Java bench's TSV.

usage: process_noise_dense.py TRACE_FILE JAVA_TSV REPEATS N [N ...]
"""

import sys
import time

import numpy as np
import scipy.linalg

import make_trace
import statespace_np as ss

LEVEL = 1e-3


def van_loan(a, qc, h):
    n = a.shape[0]
    blk = np.zeros((2 * n, 2 * n))
    blk[:n, :n] = -a
    blk[:n, n:] = qc
    blk[n:, n:] = a.T
    f = scipy.linalg.expm(blk * h)
    phi = f[n:, n:].T
    q = phi @ f[:n, n:]
    return 0.5 * (q + q.T)


def build(t):
    a, b, c, d, sigma = t["a"], t["b"], t["c"], t["d"], t["sigma"]
    n, p = a.shape[0], c.shape[0]
    N = len(t["times"])
    phi, gamma = ss.zero_order_hold(a, b, t["h"])
    li = np.linalg.inv(np.linalg.cholesky(van_loan(a, LEVEL * np.eye(n), t["h"])))
    rows = N * p + (N - 1) * n
    A = np.zeros((rows, N * n))
    rhs = np.zeros(rows)
    for k in range(N):
        A[k * p:(k + 1) * p, k * n:(k + 1) * n] = c / sigma[:, None]
        rhs[k * p:(k + 1) * p] = (t["y"][k] - d @ t["u"][k]) / sigma
    base = N * p
    lp = li @ phi
    for k in range(N - 1):
        r = base + k * n
        A[r:r + n, k * n:(k + 1) * n] = -lp
        A[r:r + n, (k + 1) * n:(k + 2) * n] = li
        rhs[r:r + n] = li @ gamma @ t["u"][k]
    return A, rhs


def main(trace_file, java_tsv, repeats, sizes):
    java = {}
    with open(java_tsv) as f:
        for line in f:
            parts = line.split("\t")
            java[int(parts[0])] = (float(parts[1]), np.array([float(x) for x in parts[2:]]))
    print("| N | dense unknowns | build (s) | lstsq (s) | Java x0 only (s) | NumPy / Java | max rel. difference of x0 |")
    print("|---|---|---|---|---|---|---|")
    for n_samples in sizes:
        t = make_trace.read(trace_file, n_samples)
        builds, solves, x0 = [], [], None
        for r in range(repeats + 1):
            start = time.perf_counter()
            A, rhs = build(t)
            mid = time.perf_counter()
            theta = np.linalg.lstsq(A, rhs, rcond=None)[0]
            end = time.perf_counter()
            if r > 0:
                builds.append(mid - start)
                solves.append(end - mid)
            x0 = theta[:A.shape[1] // n_samples]
        jt, jx = java.get(n_samples, (float("nan"), None))
        diff = float("nan") if jx is None else float(np.max(np.abs(jx - x0) / np.maximum(np.abs(x0), 1e-12)))
        total = np.median(builds) + np.median(solves)
        print(f"| {n_samples} | {A.shape[1]} | {np.median(builds):.4f} | {np.median(solves):.4f} | {jt:.4f} | "
              f"{total / jt:.0f} | {diff:.2e} |")


if __name__ == "__main__":
    if len(sys.argv) < 5:
        sys.exit(__doc__)
    main(sys.argv[1], sys.argv[2], int(sys.argv[3]), [int(s) for s in sys.argv[4:]])
