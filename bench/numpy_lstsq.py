"""Times the dense NumPy route on the benchmark trace: build the stacked weighted matrix, then lstsq.

Timed work per run, on data already in memory:
  build  - discretise the model, rows (1/sigma_j) C_j e^{A t_k} for every sample k and channel j
           (N*p x n), and the right-hand side (y - forced response) / sigma;
  lstsq  - numpy.linalg.lstsq on that matrix (LAPACK gelsd).
Each size runs once to warm up, then REPEATS times; medians are reported.

usage: numpy_lstsq.py TRACE_FILE RESULT_JSON REPEATS N [N ...]
"""

import ctypes
import io
import json
import statistics
import sys
import time
from contextlib import redirect_stdout

import numpy as np

import make_trace
import statespace_np as ss


def build(t):
    phi, gamma = ss.zero_order_hold(t["a"], t["b"], float(t["h"]))
    samples, p = t["y"].shape
    weight = 1.0 / t["sigma"]
    rows = ss.observability_rows(t["c"] * weight[:, None], phi, samples)
    forced = ss.forced_states(phi, gamma, t["u"]) @ t["c"].T + t["u"] @ t["d"].T
    rhs = (t["y"] - forced) * weight
    return rows.reshape(samples * p, -1), rhs.reshape(samples * p)


def one_run(t):
    start = time.perf_counter()
    matrix, rhs = build(t)
    built = time.perf_counter()
    x, _, rank, singular = np.linalg.lstsq(matrix, rhs, rcond=None)
    done = time.perf_counter()
    return built - start, done - built, x, rank, singular


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
    results = {"blas": blas_kernel(), "numpy": np.__version__, "runs": []}
    print(f"numpy {np.__version__}, BLAS: {results['blas']}", flush=True)
    for samples in sizes:
        t = make_trace.read(trace_file, samples)
        one_run(t)
        timings = [one_run(t) for _ in range(repeats)]
        x, rank, singular = timings[-1][2], timings[-1][3], timings[-1][4]
        run = {"samples": samples,
               "build_s": statistics.median(r[0] for r in timings),
               "lstsq_s": statistics.median(r[1] for r in timings),
               "total_s": statistics.median(r[0] + r[1] for r in timings),
               "total_min_s": min(r[0] + r[1] for r in timings),
               "x0": [float(v) for v in x], "rank": int(rank),
               "condition": float(singular[0] / singular[-1]),
               "x0_true": [float(v) for v in t["x0_true"]]}
        print(f"N={samples}: build {run['build_s']:.3f} s, lstsq {run['lstsq_s']:.3f} s "
              f"(build+lstsq min {run['total_min_s']:.3f} s), "
              f"cond(stacked) {run['condition']:.3g}", flush=True)
        results["runs"].append(run)
    with open(result_file, "w") as f:
        json.dump(results, f, indent=1)


if __name__ == "__main__":
    if len(sys.argv) < 5:
        sys.exit(__doc__)
    main(sys.argv[1], sys.argv[2], int(sys.argv[3]), [int(s) for s in sys.argv[4:]])
