"""Writes the benchmark trace: a seeded model, inputs, true x0, and noisy sampled outputs.

File format (little-endian), read by backstate.bench.TraceFile:
    8 bytes  magic b"BSTRACE1"
    int32    n, p, m, 0 (padding)
    int64    N
    float64  h, A (n*n), B (n*m), C (p*n), D (p*m), sigma (p), x0_true (n),
             times (N), outputs (N*p), inputs (N*m)          -- all matrices row-major
Shorter traces in the benchmark are prefixes of this one.

usage: make_trace.py OUT_FILE SAMPLES
"""

import sys

import numpy as np

import statespace_np as ss

MAGIC = b"BSTRACE1"
SEED = 20240611
STATES, OUTPUTS, INPUTS = 10, 3, 2
#: Sample period: 1 ms, a whole number of the estimator's 1 us ticks.
SAMPLE_PERIOD = 1e-3
#: Noise sigma per output channel, known to the estimator.
NOISE_SIGMA = np.array([0.01, 0.02, 0.05])
#: Input 0 is a unit square wave of this period; input 1 a random level held this long.
SQUARE_PERIOD = 7.0
LEVEL_HOLD = 0.5


def inputs_for(times, rng):
    square = np.where((times % SQUARE_PERIOD) < SQUARE_PERIOD / 2, 1.0, -1.0)
    slots = (times // LEVEL_HOLD).astype(np.int64)
    levels = rng.uniform(-1.0, 1.0, slots[-1] + 1)[slots]
    return np.column_stack([square, levels])


def main(path, samples):
    a, b, c, d = ss.bench_model(SEED, STATES, OUTPUTS, INPUTS)
    rng = np.random.default_rng(SEED + 1)
    x0 = rng.standard_normal(STATES)
    times = np.arange(samples) * SAMPLE_PERIOD
    u = inputs_for(times, rng)
    phi, gamma = ss.zero_order_hold(a, b, SAMPLE_PERIOD)
    x = ss.forced_states(phi, gamma, u, x0)
    y = x @ c.T + u @ d.T + rng.standard_normal((samples, OUTPUTS)) * NOISE_SIGMA
    with open(path, "wb") as f:
        f.write(MAGIC)
        f.write(np.array([STATES, OUTPUTS, INPUTS, 0], dtype="<i4").tobytes())
        f.write(np.array([samples], dtype="<i8").tobytes())
        for part in ([SAMPLE_PERIOD], a, b, c, d, NOISE_SIGMA, x0, times, y, u):
            f.write(np.ascontiguousarray(part, dtype="<f8").tobytes())


def read(path, samples=None):
    """Reads a trace file; returns a dict of arrays, cut to the first `samples` samples if given."""
    with open(path, "rb") as f:
        if f.read(8) != MAGIC:
            raise ValueError(f"{path}: got a file without the {MAGIC!r} header")
        n, p, m, _ = np.frombuffer(f.read(16), dtype="<i4")
        (total,) = np.frombuffer(f.read(8), dtype="<i8")
        data = np.frombuffer(f.read(), dtype="<f8")
    shapes = [("h", ()), ("a", (n, n)), ("b", (n, m)), ("c", (p, n)), ("d", (p, m)), ("sigma", (p,)),
              ("x0_true", (n,)), ("times", (total,)), ("y", (total, p)), ("u", (total, m))]
    out, at = {}, 0
    for name, shape in shapes:
        size = int(np.prod(shape))
        out[name] = data[at:at + size].reshape(shape) if shape else data[at]
        at += size
    if samples is not None:
        if samples > total:
            raise ValueError(f"got samples={samples}, expected at most {total} (the file's length)")
        for name in ("times", "y", "u"):
            out[name] = out[name][:samples]
    return out


if __name__ == "__main__":
    if len(sys.argv) != 3:
        sys.exit(__doc__)
    main(sys.argv[1], int(sys.argv[2]))
