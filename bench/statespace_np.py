"""NumPy side of the benchmark: the model, zero-order-hold discretisation and blocked propagation.

Layout: every matrix is a C-ordered float64 array; trace quantities are row-major N x p (outputs)
and N x m (inputs), the same layout as the Java ``Trace``.

Propagation over N uniform steps is done in blocks of ``BLOCK`` samples so that Python loops run
O(BLOCK + N / BLOCK) times and the O(N) work is done by a few large matrix products:
sample k = j * BLOCK + i is reached as Phi^i (start of block j) + (zero-start response inside
block j). This is plain algebra on x_{k+1} = Phi x_k + Gamma u_k, not taken from any package.
"""

import numpy as np
import scipy.linalg

#: Samples per block: about sqrt(10^6), which balances the two Python loops at N = 10^6.
BLOCK = 1024


def bench_model(seed, states, outputs, inputs):
    """A stable, well-conditioned continuous model: states/2 damped oscillators, rotated.

    A = Q diag([[-s, w], [-w, -s]]) Q^T with Q a seeded random orthogonal matrix: A is normal, so
    its eigenvectors are perfectly conditioned and e^{At} never grows. Decay rates s in [0.05, 0.5]
    1/s and frequencies w in [0.5, 5] rad/s keep every mode visible over a 100 s to 1000 s window.
    """
    if states % 2:
        raise ValueError(f"got states={states}, expected an even number (pairs of oscillator states)")
    rng = np.random.default_rng(seed)
    blocks = np.zeros((states, states))
    for i in range(0, states, 2):
        s = rng.uniform(0.05, 0.5)
        w = rng.uniform(0.5, 5.0)
        blocks[i:i + 2, i:i + 2] = [[-s, w], [-w, -s]]
    q, _ = np.linalg.qr(rng.standard_normal((states, states)))
    a = q @ blocks @ q.T
    b = rng.standard_normal((states, inputs))
    c = rng.standard_normal((outputs, states))
    d = 0.1 * rng.standard_normal((outputs, inputs))
    return a, b, c, d


def zero_order_hold(a, b, h):
    """Phi = e^{Ah} and Gamma = int_0^h e^{As} ds B, read off the exponential of [[A, B], [0, 0]] h."""
    n, m = b.shape
    aug = np.zeros((n + m, n + m))
    aug[:n, :n] = a
    aug[:n, n:] = b
    f = scipy.linalg.expm(aug * h)
    return f[:n, :n].copy(), f[:n, n:].copy()


def powers(phi, count):
    """Phi^0 .. Phi^(count-1), shape (count, n, n)."""
    n = phi.shape[0]
    out = np.empty((count, n, n))
    out[0] = np.eye(n)
    for i in range(1, count):
        out[i] = out[i - 1] @ phi
    return out


def observability_rows(c, phi, samples):
    """C Phi^k for k = 0 .. samples-1, shape (samples, p, n); one output array, written block by block."""
    p, n = c.shape
    inner = np.einsum("pn,inm->ipm", c, powers(phi, BLOCK)).reshape(BLOCK * p, n)   # C Phi^i
    blocks = -(-samples // BLOCK)
    outer = powers(np.linalg.matrix_power(phi, BLOCK), blocks)                      # Phi^(j*BLOCK)
    rows = np.empty((blocks, BLOCK * p, n))
    for j in range(blocks):
        np.matmul(inner, outer[j], out=rows[j])
    return rows.reshape(blocks * BLOCK, p, n)[:samples]


def forced_states(phi, gamma, u, x0=None):
    """States x_k of x_{k+1} = Phi x_k + Gamma u_k from x_0 (zero when None), shape (N, n)."""
    samples = u.shape[0]
    n = phi.shape[0]
    blocks = -(-samples // BLOCK)
    padded = np.zeros((blocks * BLOCK, u.shape[1]))
    padded[:samples] = u
    drive = (padded @ gamma.T).reshape(blocks, BLOCK, n)
    inside = np.empty((blocks, BLOCK + 1, n))                            # zero-start response per block
    inside[:, 0] = 0.0
    for i in range(BLOCK):
        inside[:, i + 1] = inside[:, i] @ phi.T + drive[:, i]
    starts = np.empty((blocks, n))
    starts[0] = 0.0 if x0 is None else x0
    phi_block = np.linalg.matrix_power(phi, BLOCK)
    for j in range(1, blocks):
        starts[j] = phi_block @ starts[j - 1] + inside[j - 1, BLOCK]
    pw = powers(phi, BLOCK).reshape(BLOCK * n, n)                        # rows of Phi^i stacked
    free = (pw @ starts.T).reshape(BLOCK, n, blocks).transpose(2, 0, 1)  # Phi^i start_j
    return (free + inside[:, :BLOCK]).reshape(blocks * BLOCK, n)[:samples]
