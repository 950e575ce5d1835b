"""Why a prior needs every output's sigma: Monte-Carlo coverage of x0's 95 % intervals under the
rule the service no longer applies (sigma assumed 1, then the whole covariance, prior included,
scaled by sigma-hat^2 = chi^2/dof with Student-t quantiles), against the same design with sigma
given (normal quantiles). numpy/scipy only; nothing here is read by the tests.

Design (invented): dx/dt = [[-0.5, 0.5], [0, -0.001]] x, y = x_0 + noise, 40 samples 0.2 s apart,
true sigma 0.1, prior N(0, I) in the states' units and x0 drawn from it each draw.

    python3 prior_without_sigma_coverage.py [DRAWS]   (default 2000; prints the coverage per state)
"""
import sys

import numpy as np
import scipy.linalg
import scipy.stats

A = np.array([[-0.5, 0.5], [0.0, -0.001]])
C = np.array([[1.0, 0.0]])
TIMES = np.arange(40) * 0.2
SIGMA = 0.1
PRIOR_MEAN = np.zeros(2)
PRIOR_COV = np.eye(2)


def rows():
    """C e^{A t_k}, one row per sample (no inputs: the forced response is zero)."""
    return np.vstack([C @ scipy.linalg.expm(A * t) for t in TIMES])


def intervals(y, obs, sigma_given):
    """x0 and its 95 % half-widths by weighted least squares with the prior's pseudo-equations."""
    weight = 1.0 / (SIGMA if sigma_given else 1.0)
    prior_root = np.linalg.cholesky(np.linalg.inv(PRIOR_COV)).T          # R0 with R0^T R0 = P0^-1
    a = np.vstack([obs * weight, prior_root])
    b = np.concatenate([y * weight, prior_root @ PRIOR_MEAN])
    x, *_ = np.linalg.lstsq(a, b, rcond=None)
    cov = np.linalg.inv(a.T @ a)
    se = np.sqrt(np.diag(cov))
    if sigma_given:
        return x, scipy.stats.norm.ppf(0.975) * se
    dof = a.shape[0] - 2
    scale = np.sqrt(np.sum((a @ x - b) ** 2) / dof)
    return x, scipy.stats.t.ppf(0.975, dof) * scale * se


def main():
    draws = int(sys.argv[1]) if len(sys.argv) > 1 else 2000
    rng = np.random.default_rng(20261203)
    obs = rows()
    held = {True: np.zeros(2), False: np.zeros(2)}
    for _ in range(draws):
        x0 = rng.multivariate_normal(PRIOR_MEAN, PRIOR_COV)
        y = obs @ x0 + SIGMA * rng.standard_normal(len(TIMES))
        for given in (True, False):
            x, half = intervals(y, obs, given)
            held[given] += np.abs(x - x0) <= half
    for given in (True, False):
        print(f"sigma {'given' if given else 'not given (1, then scaled)'}: {draws} draws,"
              f" x0 95 % intervals held the truth in {np.round(held[given] / draws, 3).tolist()}")


if __name__ == "__main__":
    main()
