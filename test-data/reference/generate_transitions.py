#!/usr/bin/env python3
"""Reference values for backstate.estimation transition matrices and Gramians.

Writes transitions.json next to this file. Every matrix is stored flat, row-major, as
shortest-round-trip decimal so Java reads the exact doubles that were fed to scipy.

Sources of the expected values:
  exponential   scipy.linalg.expm
  zeroOrderHold scipy.linalg.expm of the block [[A, B], [0, 0]] h, asserted equal to
                scipy.signal.cont2discrete(method='zoh')
  gramian       scipy.integrate.quad_vec of exp(A't) C'C exp(At) over [0, T]; for stable A
                also asserted equal to W - exp(A'T) W exp(AT), W from
                scipy.linalg.solve_continuous_lyapunov
  power         numpy.linalg.matrix_power, and sum_{i<s} A^i B accumulated step by step

Run: python3 generate_transitions.py   (needs numpy and scipy; seed fixed below)
"""
import json
import pathlib

import numpy as np
import scipy
from scipy import integrate, linalg, signal

SEED = 20240601
rng = np.random.default_rng(SEED)

# Agreement required between two scipy routes before a case is written; both are
# double-precision computations of the same quantity, so they should agree to ~1e-13.
CROSS_CHECK_RTOL = 1e-11
# quad_vec accuracy request: tight enough to sit well below the 1e-9 the Java test allows.
QUAD_EPSABS = 1e-15
QUAD_EPSREL = 1e-13


def flat(m):
    return [float(x) for x in np.asarray(m, dtype=float).ravel()]


def rel_frobenius(x, y):
    return float(np.linalg.norm(x - y) / max(np.linalg.norm(y), np.finfo(float).tiny))


def with_norm1(m, target):
    """Scales m so that its 1-norm (max column sum) is target."""
    return m * (target / np.linalg.norm(m, 1))


def random_matrix(n, norm1):
    return with_norm1(rng.standard_normal((n, n)), norm1)


def stable_random(n, norm1):
    """Random matrix shifted left so its spectral abscissa is -1, then rescaled."""
    g = rng.standard_normal((n, n))
    g = g - (np.max(np.linalg.eigvals(g).real) + 1.0) * np.eye(n)
    return with_norm1(g, norm1)


def skew_plus_small(n, norm1):
    """Dominant skew-symmetric part (exp is nearly orthogonal) plus a small random part."""
    g = rng.standard_normal((n, n))
    s = g - g.T
    return with_norm1(s + 1e-3 * rng.standard_normal((n, n)) - 1e-2 * np.eye(n), norm1)


def thermal_chain(n):
    """Lumped thermal chain: node i has capacity c_i, links of conductance g_i to node i+1,
    and node 0 leaks to ambient. Capacities spread over 1e-2..1e2 make it stiff."""
    cap = np.logspace(-2, 2, n)
    cond = np.linspace(1.0, 3.0, n)
    a = np.zeros((n, n))
    for i in range(n - 1):
        g = cond[i]
        a[i, i] -= g / cap[i]
        a[i, i + 1] += g / cap[i]
        a[i + 1, i + 1] -= g / cap[i + 1]
        a[i + 1, i] += g / cap[i + 1]
    a[0, 0] -= cond[-1] / cap[0]
    return a


def thermal_inputs(n):
    """Heat input to the first and the last node of thermal_chain(n), divided by capacity."""
    cap = np.logspace(-2, 2, n)
    b = np.zeros((n, 2))
    b[0, 0] = 1.0 / cap[0]
    b[n - 1, 1] = 1.0 / cap[n - 1]
    return b


def nearly_defective(n):
    """Jordan-like block with eigenvalues split by 1e-7, under a well-conditioned similarity."""
    j = np.diag(-1.0 + 1e-7 * np.arange(n)) + np.diag(np.ones(n - 1), 1)
    q, _ = np.linalg.qr(rng.standard_normal((n, n)))
    v = q @ np.diag(np.linspace(1.0, 2.0, n))
    return v @ j @ np.linalg.inv(v)


def exponential_case(name, a, t=1.0):
    a = np.asarray(a, dtype=float)
    return {"name": name, "n": a.shape[0], "t": t, "a": flat(a),
            "norm1": float(np.linalg.norm(a * t, 1)), "expected": flat(linalg.expm(a * t))}


def zoh_case(name, a, b, h):
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    n, m = b.shape
    block = np.zeros((n + m, n + m))
    block[:n, :n] = a
    block[:n, n:] = b
    f = linalg.expm(block * h)
    ad, bd = f[:n, :n], f[:n, n:]
    ad2, bd2, *_ = signal.cont2discrete((a, b, np.eye(n), np.zeros((n, m))), h, method="zoh")
    diff = max(rel_frobenius(ad2, ad), rel_frobenius(bd2, bd))
    assert diff <= CROSS_CHECK_RTOL, (name, diff)
    return {"name": name, "n": n, "m": m, "h": h, "a": flat(a), "b": flat(b),
            "transition": flat(ad), "input": flat(bd), "cont2discreteRelativeDifference": diff}


def gramian_case(name, a, c, horizon):
    a = np.asarray(a, dtype=float)
    c = np.asarray(c, dtype=float)
    p, n = c.shape
    q = c.T @ c

    def integrand(t):
        e = linalg.expm(a * t)
        return e.T @ q @ e

    w, err = integrate.quad_vec(integrand, 0.0, horizon, epsabs=QUAD_EPSABS, epsrel=QUAD_EPSREL,
                                limit=10000)
    case = {"name": name, "n": n, "p": p, "horizon": horizon, "a": flat(a), "c": flat(c),
            "expected": flat(w), "quadErrorEstimate": float(err)}
    if np.max(np.linalg.eigvals(a).real) < 0:
        w_inf = linalg.solve_continuous_lyapunov(a.T, -q)
        e = linalg.expm(a * horizon)
        w_lyap = w_inf - e.T @ w_inf @ e
        diff = rel_frobenius(w_lyap, w)
        assert diff <= 1e-10, (name, diff)
        case["lyapunovRelativeDifference"] = diff
    return case


def power_case(name, a, b, steps):
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    n, m = b.shape
    total = np.zeros((n, m))
    term = b.copy()
    for _ in range(steps):
        total += term
        term = a @ term
    return {"name": name, "n": n, "m": m, "steps": steps, "a": flat(a), "b": flat(b),
            "transition": flat(np.linalg.matrix_power(a, steps)), "input": flat(total)}


def with_spectral_radius(a, rho):
    return a * (rho / np.max(np.abs(np.linalg.eigvals(a))))


def main():
    exponential = [
        exponential_case("scalar-norm-1e-3", [[-1e-3]]),
        exponential_case("random2-norm-0.1", random_matrix(2, 0.1)),
        exponential_case("nearly-defective3", nearly_defective(3)),
        exponential_case("random4-norm-0.6", random_matrix(4, 0.6)),
        exponential_case("random5-norm-1.8", random_matrix(5, 1.8)),
        exponential_case("random6-norm-4", random_matrix(6, 4.0)),
        exponential_case("stable7-norm-1e2", stable_random(7, 1e2)),
        exponential_case("skew8-norm-1e3", skew_plus_small(8, 1e3)),
        exponential_case("random9-norm-1e-2", random_matrix(9, 1e-2)),
        exponential_case("thermal-chain10", thermal_chain(10), t=1.0),
        exponential_case("random11-norm-30-t-0.5", random_matrix(11, 30.0), t=0.5),
        exponential_case("stable12-norm-3e2-t-2", stable_random(12, 3e2), t=2.0),
    ]

    zero_order_hold = [
        zoh_case("double-integrator", [[0, 1], [0, 0]], [[0], [1]], 0.1),
        zoh_case("scalar", [[-2.5]], [[4.0]], 0.3),
        zoh_case("random4-inputs2", random_matrix(4, 2.0), rng.standard_normal((4, 2)), 0.05),
        zoh_case("stable6-inputs3", stable_random(6, 50.0), rng.standard_normal((6, 3)), 0.2),
        zoh_case("thermal-chain10-inputs2", thermal_chain(10), thermal_inputs(10), 1.0),
    ]

    oscillator = [[0.0, 1.0], [-4.0, -0.1]]
    gramian = [
        gramian_case("double-integrator-T2", [[0, 1], [0, 0]], [[1, 0]], 2.0),
        gramian_case("stable4-outputs2-T1", stable_random(4, 3.0), rng.standard_normal((2, 4)), 1.0),
        gramian_case("oscillator-T10", oscillator, [[1.0, 0.0]], 10.0),
        gramian_case("thermal-chain5-T2", thermal_chain(5), [[0, 0, 0, 0, 1.0]], 2.0),
        gramian_case("unstable3-T1.5",
                     np.diag([0.5, 0.2, -0.3]) + np.triu(rng.standard_normal((3, 3)), 1),
                     [[1.0, 1.0, 0.0]], 1.5),
    ]

    rotation = [[np.cos(0.3), np.sin(0.3)], [-np.sin(0.3), np.cos(0.3)]]
    power = [
        power_case("random3-inputs1-steps1", random_matrix(3, 1.0), rng.standard_normal((3, 1)), 1),
        power_case("random4-inputs2-steps7", random_matrix(4, 1.5), rng.standard_normal((4, 2)), 7),
        power_case("radius0.95-5-inputs2-steps100",
                   with_spectral_radius(rng.standard_normal((5, 5)), 0.95), rng.standard_normal((5, 2)), 100),
        power_case("rotation-steps1000", rotation, [[1.0], [0.0]], 1000),
        power_case("radius0.9-6-inputs3-steps63",
                   with_spectral_radius(rng.standard_normal((6, 6)), 0.9), rng.standard_normal((6, 3)), 63),
    ]

    out = {
        "generator": "generate_transitions.py",
        "seed": SEED,
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "exponential": exponential,
        "zeroOrderHold": zero_order_hold,
        "gramian": gramian,
        "power": power,
    }
    path = pathlib.Path(__file__).with_name("transitions.json")
    path.write_text(json.dumps(out, indent=1) + "\n")
    print("wrote", path)


if __name__ == "__main__":
    main()
