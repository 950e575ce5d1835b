#!/usr/bin/env python3
"""Independent reference values for backstate.estimation.InitialStateEstimator.

Writes estimates/case-*.json (one solve each) and estimates/gramian-convergence.json next to
this file; the format is described in README.md beside it. Nothing here reads or imitates the
Java code: every expected value comes from numpy / scipy on a weighted least-squares problem
built from first principles.

Sources of the expected values:
  transition Phi(t)     scipy.linalg.expm(A t) (continuous); numpy.linalg.matrix_power (discrete)
  input (zero-order hold) top-right block of scipy.linalg.expm([[A, B], [0, 0]] h)
                        (Van Loan 1978, IEEE TAC 23(3), sec. 1 - from memory); discrete:
                        sum_{i<s} A^i B accumulated step by step
  solution              numpy.linalg.lstsq on the stacked weighted equations M theta = rhs
  covariance            V diag(1/s^2) V' from numpy.linalg.svd(M); cross-checked against
                        numpy.linalg.inv(M'M) where kappa allows; CONTINUOUS: K Sigma K' of the
                        linear estimator, (M'M)^-1 M2'M2 (M'M)^-1 with M2 the w-weighted rows
  information           M'M
  condition number      (s_max / s_min)^2 from the SVD of M, and numpy.linalg.cond(M'M) for reference
  null directions       scipy.linalg.null_space(M)
  p-values              scipy.stats.chi2.sf
  Ljung-Box Q           Ljung & Box (1978), Biometrika 65(2), 297-303, eq. for Q~ (coded here with
                        numpy; statsmodels is only used as a cross-check when it is installed)
  Gramian W_o(T)        scipy.integrate.quad_vec of exp(A't) C'C exp(At) over [0, T], cross-checked
                        against Van Loan's block exponential (Van Loan 1978, Theorem 1 - from memory)

Semantics mirrored (from the estimator's specification, not its code): the time origin is the
first sample; inputs are held from a sample to the next; y = C x + D u + offset + noise; each
present y_kj is one equation weighted 1/sigma_j (SAMPLED) or sqrt(w_kj)/sigma_j with trapezoid
weights w over the channel's present samples in units of the trace's mean sample spacing
(CONTINUOUS), whose covariance is the sandwich B^-1 M B^-1 (B = sum w a a', M = sum w^2 a a',
a = regressor / sigma) and whose chi-square is that of the best per-sample (SAMPLED) fit; a prior
adds L^-1 (x0 - mu) = 0 with P0 = L L' and weight 1. Times are rounded to 1 microsecond ticks as the engine does.

Run: python3 generate_estimates.py   (numpy and scipy; every random generator is seeded below)
"""
import json
import math
import pathlib

import numpy as np
from scipy import integrate, linalg, stats

HERE = pathlib.Path(__file__).resolve().parent
OUT = HERE / "estimates"

EPS = np.finfo(float).eps
TICKS_PER_SECOND = 1_000_000
# Mirrors EstimationOptions.DEFAULT_MISMATCH_LEVEL (the engine's documented default).
MISMATCH_LEVEL = 1e-3
# Mirrors Conditioning.ILL_CONDITIONED_LIMIT and FEW_SAMPLES_DOF (documented thresholds).
ILL_CONDITIONED_LIMIT = 1e8
FEW_SAMPLES_DOF = 10
# Mirrors Conditioning.OFFSET_INFLATION_LIMIT: an offset's variance inflation factor above it is confounded.
OFFSET_INFLATION_LIMIT = 100.0
OUTLIER_SIGMAS = 4.0
# Default relative tolerance the Java test applies to well-conditioned cases (from the brief).
DEFAULT_RTOL = 1e-9
# Two double-precision routes to the same covariance agree to about kappa(M)^2 * eps; below
# kappa(W) = 1e6 that is < 1e-9, so the cross-check is run there with this margin.
COVARIANCE_CROSS_CHECK_RTOL = 1e-9
LJUNG_BOX_MAX_LAGS = 10
QUAD_EPSABS = 1e-15
QUAD_EPSREL = 1e-13


# ----------------------------------------------------------------------------- helpers

def to_ticks(t):
    return int(round(t * TICKS_PER_SECOND))


def nested(m):
    return [[float(v) for v in row] for row in np.atleast_2d(np.asarray(m, dtype=float))]


def vec(v):
    return [float(x) for x in np.asarray(v, dtype=float).ravel()]


def nullable_rows(y):
    """N x p array with NaN -> JSON null."""
    return [[None if math.isnan(v) else float(v) for v in row] for row in y]


class Model:
    def __init__(self, a, c, b=None, d=None, sample_period=None, noise_sigma=None):
        self.a = np.asarray(a, dtype=float)
        self.c = np.atleast_2d(np.asarray(c, dtype=float))
        self.n = self.a.shape[0]
        self.p = self.c.shape[0]
        self.b = None if b is None else np.atleast_2d(np.asarray(b, dtype=float))
        self.m = 0 if self.b is None else self.b.shape[1]
        if d is None and self.m > 0:
            d = np.zeros((self.p, self.m))
        self.d = None if d is None else np.atleast_2d(np.asarray(d, dtype=float))
        self.sample_period = sample_period
        self.noise_sigma = None if noise_sigma is None else np.asarray(noise_sigma, dtype=float)

    @property
    def discrete(self):
        return self.sample_period is not None

    def steps(self, dt_ticks):
        """Number of sample periods in a time step (discrete models only)."""
        period_ticks = to_ticks(self.sample_period)
        s, rem = divmod(dt_ticks, period_ticks)
        assert rem == 0, f"time step of {dt_ticks} ticks is not a multiple of the period"
        return s

    def phi(self, dt_ticks):
        if self.discrete:
            return np.linalg.matrix_power(self.a, self.steps(dt_ticks))
        return linalg.expm(self.a * (dt_ticks / TICKS_PER_SECOND))

    def gamma(self, dt_ticks):
        """Input matrix of one held step: integral_0^h e^{As} ds B, or sum_{i<s} A^i B."""
        if self.m == 0:
            return np.zeros((self.n, 0))
        if self.discrete:
            acc = np.zeros((self.n, self.m))
            power = np.eye(self.n)
            for _ in range(self.steps(dt_ticks)):
                acc = acc + power @ self.b
                power = power @ self.a
            return acc
        h = dt_ticks / TICKS_PER_SECOND
        block = np.zeros((self.n + self.m, self.n + self.m))
        block[: self.n, : self.n] = self.a
        block[: self.n, self.n:] = self.b
        return linalg.expm(block * h)[: self.n, self.n:]

    def to_json(self):
        return {
            "kind": "discrete" if self.discrete else "continuous",
            "a": nested(self.a),
            "b": None if self.b is None else nested(self.b),
            "c": nested(self.c),
            "d": None if self.d is None else nested(self.d),
            "samplePeriod": self.sample_period,
            "noiseSigma": None if self.noise_sigma is None else vec(self.noise_sigma),
        }


def free_and_forced(model, ticks, u):
    """Phi(t_k - t0) for every sample (direct exponential, no accumulation) and the forced state
    f_k (zero initial state, input held between samples, propagated sample to sample)."""
    n = model.n
    phis = np.array([model.phi(t - ticks[0]) for t in ticks])
    forced = np.zeros((len(ticks), n))
    for k in range(1, len(ticks)):
        dt = ticks[k] - ticks[k - 1]
        step = model.phi(dt) @ forced[k - 1]
        if model.m:
            step = step + model.gamma(dt) @ u[k - 1]
        forced[k] = step
    return phis, forced


def simulate(model, ticks, u, x0, offsets):
    phis, forced = free_and_forced(model, ticks, u)
    x = phis @ x0 + forced
    y = x @ model.c.T
    if model.m:
        y = y + u @ model.d.T
    return y + offsets


def trapezoid_weights(ticks_present):
    t = np.asarray(ticks_present, dtype=float) / TICKS_PER_SECOND
    assert len(t) >= 2, "the continuous formulation needs two present samples per channel"
    w = np.empty(len(t))
    w[0] = (t[1] - t[0]) / 2
    w[-1] = (t[-1] - t[-2]) / 2
    w[1:-1] = (t[2:] - t[:-2]) / 2
    return w


def ljung_box(e):
    """Ljung & Box (1978) Q on a residual sequence; h = min(10, floor(N/5)); p = chi2.sf(Q, h)."""
    n = len(e)
    lags = min(LJUNG_BOX_MAX_LAGS, n // 5)
    if lags < 1:
        return None
    z = e - e.mean()
    denom = float(z @ z)
    q = 0.0
    for k in range(1, lags + 1):
        rho = float(z[k:] @ z[:-k]) / denom
        q += rho * rho / (n - k)
    q *= n * (n + 2)
    p = float(stats.chi2.sf(q, lags))
    try:  # optional cross-check; statsmodels is not a dependency and is not installed on purpose
        from statsmodels.stats.diagnostic import acorr_ljungbox  # noqa: PLC0415
        other = acorr_ljungbox(e, lags=[lags])
        assert abs(float(other["lb_stat"].iloc[0]) - q) <= 1e-10 * q
    except ImportError:
        pass
    return {"q": q, "lags": lags, "p": p}


# ----------------------------------------------------------------------------- one solve

def interval_half_widths(covariance, chi_square, dof, sigma_all_given):
    """95 % intervals by the rule the estimator documents (its Javadoc, not its code): normal quantile
    times the standard error when every sigma is given, else Student-t(dof) quantile times the
    standard error scaled by sqrt(chi2/dof), and none when no sigma is given and dof = 0. Quantiles
    from scipy.stats."""
    se = np.sqrt(np.diag(covariance))
    if sigma_all_given:
        return {"quantile": float(stats.norm.ppf(0.975)), "halfWidth": vec(stats.norm.ppf(0.975) * se)}
    if dof == 0:
        return {"quantile": None, "halfWidth": [None] * len(se)}
    factor = float(stats.t.ppf(0.975, dof))
    return {"quantile": factor, "halfWidth": vec(factor * se * math.sqrt(chi_square / dof))}


def solve_reference(model, ticks, y, u, trace_sigma, options, noise_free):
    """Builds the stacked weighted equations and returns the 'expected' block."""
    n, p = model.n, model.p
    offsets_on = options.get("offsets", False)
    q = n + (p if offsets_on else 0)
    continuous = options.get("formulation", "SAMPLED") == "CONTINUOUS"

    sigma, source = np.ones(p), ["ASSUMED_ONE"] * p
    for j in range(p):
        if trace_sigma is not None and not math.isnan(trace_sigma[j]):
            sigma[j], source[j] = trace_sigma[j], "TRACE"
        elif model.noise_sigma is not None:
            sigma[j], source[j] = model.noise_sigma[j], "MODEL"

    phis, forced = free_and_forced(model, ticks, u)
    forced_out = forced @ model.c.T
    if model.m:
        forced_out = forced_out + u @ model.d.T
    big_n = len(ticks)
    regressors = np.zeros((big_n, p, q))            # d yhat_kj / d theta, unweighted
    regressors[:, :, :n] = np.einsum("jn,knm->kjm", model.c, phis)
    if offsets_on:
        for j in range(p):
            regressors[:, j, n + j] = 1.0

    # CONTINUOUS: trapezoid weights over each channel's present samples, in units of the trace's
    # mean sample spacing (t_{N-1} - t_0) / (N - 1), so an evenly sampled interior sample weighs 1.
    spacing_ticks = (ticks[-1] - ticks[0]) / (big_n - 1) if big_n > 1 and ticks[-1] > ticks[0] else TICKS_PER_SECOND
    trap = np.full((big_n, p), np.nan)
    for j in range(p):
        present = np.flatnonzero(~np.isnan(y[:, j]))
        trap[present, j] = trapezoid_weights(ticks[present]) / (spacing_ticks / TICKS_PER_SECOND) if continuous else 1.0

    # Three stackings of the same whitened equations a = regressor / sigma, b = (y - forced) / sigma:
    # the estimate's (sqrt(w) a), the per-sample fit's (a) and the spread's (w a); a prior adds
    # L^-1 (x0 - mu) = 0 with weight 1 to each. With SAMPLED weights (w = 1) all three are one.
    rows, rhs, rows_sample, rhs_sample, rows_spread = [], [], [], [], []
    for k in range(big_n):                          # sample order, channel order
        for j in range(p):
            if not math.isnan(y[k, j]):
                whitening = 1.0 / sigma[j]
                a = regressors[k, j] * whitening
                b = (y[k, j] - forced_out[k, j]) * whitening
                w = trap[k, j]
                rows.append(a * math.sqrt(w))
                rhs.append(b * math.sqrt(w))
                rows_sample.append(a)
                rhs_sample.append(b)
                rows_spread.append(a * w)
    data_rows = len(rows)
    prior = options.get("prior")
    if prior is not None:
        mu = np.asarray(prior["mean"], dtype=float)
        p0 = np.asarray(prior["covariance"], dtype=float)
        l_inv = np.linalg.inv(np.linalg.cholesky(p0))
        for i in range(n):
            row = np.zeros(q)
            row[:n] = l_inv[i]
            for stack in (rows, rows_sample, rows_spread):
                stack.append(row)
            rhs.append(float(l_inv[i] @ mu))
            rhs_sample.append(float(l_inv[i] @ mu))
    m_mat, rhs = np.array(rows), np.array(rhs)

    u_svd, s, vt = np.linalg.svd(m_mat, full_matrices=False)
    theta, _, rank, _ = np.linalg.lstsq(m_mat, rhs, rcond=None)
    data_rank = int(np.linalg.matrix_rank(m_mat[:data_rows]))
    if rank < q:
        null = linalg.null_space(m_mat)
        return {
            "result": "unobservable",
            "rank": int(rank),
            "singularValues": vec(s),
            "directions": [vec(null[:, i]) for i in range(null.shape[1])],
        }, None

    information = m_mat.T @ m_mat
    bread_inverse = (vt.T / s**2) @ vt
    kappa_m = float(s[0] / s[-1])
    if kappa_m**2 < 1e6:
        direct = np.linalg.inv(information)
        assert np.linalg.norm(direct - bread_inverse) <= COVARIANCE_CROSS_CHECK_RTOL * np.linalg.norm(bread_inverse)
    weighted_residual = m_mat @ theta - rhs
    if continuous:
        # Covariance of the linear estimator theta = K y under independent per-sample noise of the
        # stated sigma: K Sigma K' = B^-1 M B^-1 with B = sum w a a', M = sum w^2 a a' (sandwich form).
        spread = np.array(rows_spread)
        covariance = bread_inverse @ (spread.T @ spread) @ bread_inverse
        covariance = (covariance + covariance.T) / 2
        # Goodness of fit on the per-sample noise scale: the best per-sample fit's residual sum.
        sample_mat, sample_rhs = np.array(rows_sample), np.array(rhs_sample)
        theta_sample = np.linalg.lstsq(sample_mat, sample_rhs, rcond=None)[0]
        fit_residual = sample_mat @ theta_sample - sample_rhs
    else:
        covariance = bread_inverse
        fit_residual = weighted_residual
    chi_square = float(fit_residual @ fit_residual)
    dof = m_mat.shape[0] - q
    weakest = vt[-1]
    weakest_std = float(math.sqrt(weakest @ covariance @ weakest)) if continuous else float(1.0 / s[-1])

    fitted = np.einsum("kjq,q->kj", regressors, theta) + forced_out
    residual = y - fitted
    channels = []
    for j in range(p):
        present = ~np.isnan(y[:, j])
        r = residual[present, j]
        yj = y[present, j]
        ss_tot = float(((yj - yj.mean()) ** 2).sum())
        channels.append({
            "samples": int(present.sum()),
            "sigma": float(sigma[j]),
            "sigmaSource": source[j],
            "rms": float(np.sqrt(np.mean(r**2))),
            "maxAbs": float(np.max(np.abs(r))),
            "rSquared": float(1.0 - (r @ r) / ss_tot) if ss_tot > 0 else None,
            "outliers": int(np.sum(np.abs(r) > OUTLIER_SIGMAS * sigma[j])),
            "ljungBox": None if noise_free else ljung_box(r),
        })

    expected = {
        "result": "estimate",
        "unknownNames": [f"x0[{i}]" for i in range(n)] + ([f"offset[{j}]" for j in range(p)] if offsets_on else []),
        "solution": vec(theta),
        "covariance": nested(covariance),
        "standardErrors": vec(np.sqrt(np.diag(covariance))),
        "information": nested(information),
        "eigenvalues": vec(np.sort(s**2)),
        "conditionNumber": kappa_m**2,
        "conditionNumberNumpyCond": float(np.linalg.cond(information)),
        "weakestDirection": vec(vt[-1]),
        "weakestStd": weakest_std,
        "rank": int(rank),
        "dataRank": data_rank,
        "chiSquare": chi_square,
        "degreesOfFreedom": int(dof),
        "chiSquareP": float(stats.chi2.sf(chi_square, dof)) if dof > 0 else None,
        "sigmaScale": float(math.sqrt(chi_square / dof)) if dof > 0 else None,
        "interval": interval_half_widths(covariance, chi_square, dof, all(src != "ASSUMED_ONE" for src in source)),
        "channels": channels,
        "forcedOutput": nested(forced_out),
        "regressors": [[vec(regressors[k, j]) for j in range(p)] for k in range(big_n)],
        "fitted": nested(fitted),
    }

    # The state along the window: x(t_k) = Phi_k x0 + forced_k, Cov = Phi_k P Phi_k' (P the states' block).
    p_states = covariance[:n, :n]
    trajectory = phis @ theta[:n] + forced
    trajectory_se = np.sqrt(np.einsum("kij,jl,kil->ki", phis, p_states, phis))
    end_cov = phis[-1] @ p_states @ phis[-1].T
    expected["windowEnd"] = {
        "time": float(ticks[-1]) / TICKS_PER_SECOND,
        "state": vec(trajectory[-1]),
        "covariance": nested(end_cov),
        "standardErrors": vec(np.sqrt(np.diag(end_cov))),
    }
    expected["stateTrajectory"] = {"states": nested(trajectory), "standardErrors": nested(trajectory_se)}

    t_ref = options.get("referenceTime")
    if t_ref is not None:
        ref_ticks = to_ticks(t_ref)
        last = int(np.searchsorted(ticks, ref_ticks, side="right")) - 1
        assert 0 <= last, "reference time before the first sample"
        dt = ref_ticks - ticks[last]
        x_forced = model.phi(dt) @ forced[last]
        if model.m:
            x_forced = x_forced + model.gamma(dt) @ u[last]
        phi_ref = model.phi(ref_ticks - ticks[0])
        state = phi_ref @ theta[:n] + x_forced
        ref_cov = phi_ref @ covariance[:n, :n] @ phi_ref.T
        expected["reference"] = {
            "time": t_ref,
            "state": vec(state),
            "covariance": nested(ref_cov),
            "standardErrors": vec(np.sqrt(np.diag(ref_cov))),
        }
    return expected, {"m": m_mat, "rhs": rhs, "theta": theta, "s": s, "residual": fit_residual}


def tolerances(solved, noise_free, big_n, expected):
    """Relative tolerances the Java test applies.

    Where kappa(W) <= ILL_CONDITIONED_LIMIT: DEFAULT_RTOL (1e-9) for everything. Two honest double
    builds of a problem with kappa(M) <= 1e4 agree to ~1e-12 in the solution, so 1e-9 leaves three
    digits of room and still catches any modelling slip (a wrong weight, a wrong hold, an off-by-one
    sample all move results by far more).

    Where kappa(W) is larger, a bound: the two builds of M (ours with scipy.linalg.expm, the engine's
    with its own exponential and step propagation) differ by rounding that may accumulate coherently
    over the N propagated steps, delta = N eps (common practice, no source). The least-squares
    perturbation bound (Golub & Van Loan, Matrix Computations, 4th ed., Thm 5.3.1 - from memory)
        |d theta| / |theta| <~ delta (2 kappa + kappa^2 tan(angle)),  tan(angle) = |r| / |M theta|,
    with kappa = kappa(M) = sqrt(kappa(W)), then bounds the rest as commented below. Each bound
    carries one safety factor SAFETY."""
    keys = ("solution", "covariance", "information", "chiSquare", "chiSquareP", "channel", "ljungBox", "ljungBoxP",
            "reference", "conditionNumber")
    tol = {k: DEFAULT_RTOL for k in keys}
    if solved is None or expected["conditionNumber"] <= ILL_CONDITIONED_LIMIT:
        return tol
    safety = 10.0
    m_mat, theta, s, r = solved["m"], solved["theta"], solved["s"], solved["residual"]
    kappa = s[0] / s[-1]
    delta = big_n * EPS
    tan_angle = np.linalg.norm(r) / np.linalg.norm(m_mat @ theta)
    theta_error = delta * (2 * kappa + kappa**2 * tan_angle)

    def bounded(x):
        return max(DEFAULT_RTOL, float(safety * x))

    tol["solution"] = bounded(theta_error)
    # Covariance P = R^-1 R^-T moves by ~ 2 kappa delta relative to |P| (perturbation of an inverse);
    # kappa(W) = (s_max / s_min)^2 moves by ~ 2 delta kappa as s_min moves by ~ delta s_max.
    tol["covariance"] = bounded(2 * kappa * delta)
    tol["conditionNumber"] = bounded(2 * kappa * delta)
    tol["reference"] = max(tol["solution"], tol["covariance"])
    if noise_free:
        return tol
    # Residual bound of the same theorem: |d r| / |rhs| <~ delta (1 + 2 kappa); relative to |r| that
    # is multiplied by |rhs| / |r| (the residual lives in a subspace that tilts by ~ kappa delta; the
    # large d theta along the weak direction hardly moves the fit). chi-square is the minimised sum,
    # insensitive to d theta to first order: 2 delta |rhs| / |r|.
    scale = float(np.linalg.norm(solved["rhs"]) / np.linalg.norm(r))
    channel_error = delta * (1 + 2 * kappa) * scale
    tol["channel"] = bounded(channel_error)
    tol["chiSquare"] = bounded(2 * delta * scale)
    # p = chi2.sf(chi2, dof) moves by the density times the change of chi2.
    p_expected = expected["chiSquareP"]
    moved = stats.chi2.sf(expected["chiSquare"] * (1 + 2 * delta * scale), expected["degreesOfFreedom"])
    tol["chiSquareP"] = bounded(abs(moved - p_expected) / p_expected)
    # Ljung-Box: rho_k (~ 1/sqrt(N)) moves by ~ the relative residual change e, so Q (a sum of
    # rho^2) by ~ 2 e sqrt(N) relative, and p by the chi-square density at Q times that change.
    worst_q, worst_p = DEFAULT_RTOL, DEFAULT_RTOL
    for ch in expected["channels"]:
        lb = ch["ljungBox"]
        if lb is None:
            continue
        dq = 2 * channel_error * math.sqrt(ch["samples"])
        dp = abs(stats.chi2.sf(lb["q"] * (1 + dq), lb["lags"]) - lb["p"]) / lb["p"]
        worst_q, worst_p = max(worst_q, bounded(dq)), max(worst_p, bounded(dp))
    tol["ljungBox"], tol["ljungBoxP"] = worst_q, worst_p
    return tol


def expected_flags(expected, noise_free, sigma_given):
    present, absent = [], []
    if expected["result"] != "estimate":
        return present, absent
    (present if expected["conditionNumber"] > ILL_CONDITIONED_LIMIT else absent).append("ILL_CONDITIONED")
    (present if expected["dataRank"] < expected["rank"] else absent).append("UNOBSERVABLE")
    (present if expected["degreesOfFreedom"] < FEW_SAMPLES_DOF else absent).append("FEW_SAMPLES")
    # Variance inflation of each offset, diag(W^-1) * diag(W) (Belsley, Kuh & Welsch 1980 - from memory),
    # asserted only when no offset sits within a factor 3 of the limit.
    w = np.array(expected["information"])
    n_states = sum(1 for name in expected["unknownNames"] if name.startswith("x0["))
    inflation = (np.diag(np.linalg.inv(w)) * np.diag(w))[n_states:]
    assert all(v > 3 * OFFSET_INFLATION_LIMIT or v < OFFSET_INFLATION_LIMIT / 3 for v in inflation), inflation
    (present if any(inflation > OFFSET_INFLATION_LIMIT) else absent).append("OFFSET_CONFOUNDED")
    if not noise_free:
        ps = [c["ljungBox"]["p"] for c in expected["channels"] if c["ljungBox"]]
        if sigma_given:
            ps.append(expected["chiSquareP"])
        # Only write a flag expectation when no p-value sits within a factor 10 of the level,
        # so a slightly different but valid p-value computation cannot flip it.
        assert all(pv > 10 * MISMATCH_LEVEL or pv < MISMATCH_LEVEL / 10 for pv in ps), ps
        (present if min(ps) < MISMATCH_LEVEL else absent).append("MODEL_MISMATCH")
    return present, absent


def write_case(name, description, model, times, u, x0, offsets, noise_sd, rng, options,
               trace_sigma=None, missing=None):
    """Simulates, adds noise and missing values, solves the reference problem and writes a case."""
    times = np.asarray(times, dtype=float)
    ticks = np.array([to_ticks(t) for t in times], dtype=np.int64)
    assert np.all(np.abs(ticks / TICKS_PER_SECOND - times) < 1e-9), "times must sit on microsecond ticks"
    assert len(times) <= 2000
    u = None if u is None else np.atleast_2d(np.asarray(u, dtype=float))
    if u is not None and u.shape[0] != len(times):
        u = u.T
    x0 = np.asarray(x0, dtype=float)
    offsets = np.zeros(model.p) if offsets is None else np.asarray(offsets, dtype=float)
    clean = simulate(model, ticks, u, x0, offsets)
    noise_sd = np.broadcast_to(np.asarray(noise_sd, dtype=float), (model.p,))
    y = clean + rng.standard_normal(clean.shape) * noise_sd
    if missing is not None:
        y[missing] = np.nan
    noise_free = bool(np.all(noise_sd == 0))

    expected, solved = solve_reference(model, ticks, y, u, trace_sigma, options, noise_free)
    tol = tolerances(solved, noise_free, len(times), expected)
    if expected["result"] == "estimate":
        sigma_given = all(c["sigmaSource"] != "ASSUMED_ONE" for c in expected["channels"])
        present, absent = expected_flags(expected, noise_free, sigma_given)
        expected["flagsPresent"], expected["flagsAbsent"] = present, absent
    case = {
        "name": name,
        "description": description,
        "model": model.to_json(),
        "trace": {
            "times": vec(times),
            "outputs": nullable_rows(y),
            "inputs": None if u is None else nested(u),
            "noiseSigma": None if trace_sigma is None else [None if math.isnan(v) else float(v) for v in trace_sigma],
        },
        "options": {
            "formulation": options.get("formulation", "SAMPLED"),
            "prior": options.get("prior"),
            "offsets": options.get("offsets", False),
            "referenceTime": options.get("referenceTime"),
        },
        "truth": {"x0": vec(x0), "offsets": vec(offsets), "noiseSd": vec(noise_sd), "noiseFree": noise_free,
                  "noiseFreeOutputs": nested(clean)},
        "tolerance": tol,
        "expected": expected,
    }
    OUT.mkdir(exist_ok=True)
    (OUT / f"case-{name}.json").write_text(json.dumps(case, indent=1) + "\n")
    return case


def grid(t0, step, count):
    """count times t0 + k step, rounded to microsecond ticks then back to seconds."""
    return [to_ticks(t0 + k * step) / TICKS_PER_SECOND for k in range(count)]


# ----------------------------------------------------------------------------- cases

def oscillator():
    """A lightly damped 2-state oscillator (a hanging sign swinging after a gust), position only."""
    omega, zeta = 2.5, 0.1
    return Model(a=[[0.0, 1.0], [-omega**2, -2 * zeta * omega]], c=[[1.0, 0.0]], noise_sigma=[0.05])


def case_oscillator(rng):
    write_case("oscillator-free", "No-input 2-state oscillator, one position output, sigma from the model.",
               oscillator(), grid(0.0, 0.02, 401), None, [0.8, -1.5], None, 0.05, rng, {})


def thermal_chain():
    """Three masses in a row (heater plate, block, sensor housing), heater power known, housing measured.
    Temperatures are deviations from ambient in kelvin, power in watts."""
    a = [[-0.30, 0.22, 0.0], [0.15, -0.27, 0.10], [0.0, 0.08, -0.14]]
    return Model(a=a, b=[[0.05], [0.0], [0.0]], c=[[0.0, 0.0, 1.0]], d=[[0.0]])


def case_thermal(rng):
    times = grid(0.0, 0.5, 601)
    u = [[0.0 if t < 60 else (20.0 if t < 200 else 5.0)] for t in times]
    write_case("thermal-chain", "3-state thermal chain, one known heater input, housing temperature output, "
               "sigma given in the trace.", thermal_chain(), times, u, [4.0, 2.5, 1.0], None, 0.02, rng, {},
               trace_sigma=[0.02])


def case_two_outputs(rng):
    # A tank feeding a second tank and a pipe temperature; level gauge (precise, sigma from trace) and
    # a flow-derived signal with direct feedthrough of the pump command (sigma from the model default).
    model = Model(a=[[-0.20, 0.0, 0.0], [0.20, -0.10, 0.0], [0.0, 0.05, -0.50]],
                  b=[[0.40], [0.0], [0.1]], c=[[1.0, 0.0, 0.0], [0.0, 0.3, 1.0]], d=[[0.0], [0.25]],
                  noise_sigma=[0.5, 0.2])
    times = grid(0.0, 0.1, 500)
    u = [[1.0 + 0.5 * math.sin(0.3 * t) + (0.8 if 20 <= t < 30 else 0.0)] for t in times]
    write_case("two-outputs-sigma", "3 states, 2 outputs with different sigma: channel 0 sigma 0.01 from the "
               "trace, channel 1 sigma 0.2 from the model default (trace gives NaN); D nonzero.",
               model, times, u, [2.0, -1.0, 0.5], None, [0.01, 0.2], rng, {}, trace_sigma=[0.01, math.nan])


def case_discrete_gaps(rng):
    # A sampled-data level loop: period 0.25 s, first sample at t0 = 10 s, some samples lost.
    model = Model(a=[[0.95, 0.10], [-0.08, 0.90]], b=[[0.02], [0.10]], c=[[1.0, 0.5]], d=[[0.0]],
                  sample_period=0.25, noise_sigma=[0.1])
    steps = list(range(0, 240))
    dropped = set(range(37, 41)) | {80, 81} | set(range(150, 163)) | {200}
    steps = [s for s in steps if s not in dropped]
    times = [to_ticks(10.0 + s * 0.25) / TICKS_PER_SECOND for s in steps]
    u_rng = np.random.default_rng(7001)
    u = u_rng.choice([-1.0, 0.0, 1.0, 2.0], size=(len(times), 1))
    write_case("discrete-gaps", "Discrete-time 2-state model, period 0.25 s, t0 = 10 s, gaps of 1, 2, 4 and "
               "13 periods with the input held across each gap.", model, times, u, [3.0, -2.0], None, 0.1,
               rng, {})


def case_nonuniform_missing(rng):
    # Vibration isolator: 3 states (mount position, velocity, actuator lag), actuator command known,
    # accelerometer-derived and displacement outputs; first sample at t0 = 100 s, jittery timestamps.
    model = Model(a=[[0.0, 1.0, 0.0], [-9.0, -0.6, 1.5], [0.0, 0.0, -4.0]], b=[[0.0], [0.0], [4.0]],
                  c=[[1.0, 0.0, 0.0], [0.0, 1.0, 0.0]], d=[[0.0], [0.0]])
    t_rng = np.random.default_rng(7002)
    steps_ms = t_rng.integers(5, 61, size=299)
    ticks = 100_000_000 + np.concatenate([[0], np.cumsum(steps_ms) * 1000])
    times = ticks / TICKS_PER_SECOND
    u = np.where((times - 100.0) % 3.0 < 1.0, 1.0, -0.5)[:, None]
    missing = t_rng.random((len(times), 2)) < np.array([0.15, 0.25])
    missing[0, :] = False
    write_case("nonuniform-missing", "Non-uniform times (5-60 ms steps, t0 = 100 s), 15 % / 25 % missing "
               "per channel; sigma given for channel 0 only (channel 1 assumed 1, true noise 1).",
               model, times, u, [0.3, -0.4, 0.2], None, [0.02, 1.0], rng, {}, trace_sigma=[0.02, math.nan],
               missing=missing)


def case_ill_conditioned(rng):
    # Two nearly equal first-order lags summed (two parallel filters of a sensor, time constants
    # 2.0 s and 2.0 s x (1 + 4e-5)): their columns are nearly collinear; 4e-5 was tuned by hand
    # so that kappa(W) comes out at 1.0e10 on this grid.
    tau1 = 2.0
    tau2 = tau1 * (1 + 4e-5)
    model = Model(a=[[-1 / tau1, 0.0], [0.0, -1 / tau2]], c=[[1.0, 1.0]], noise_sigma=[1e-3])
    write_case("ill-conditioned", "Two nearly equal time constants with a summed output: kappa(W) ~ 1e10.",
               model, grid(0.0, 0.025, 401), None, [1.0, 2.0], None, 1e-3, rng, {})


def two_heaters():
    """Two identical heaters feeding a common measured node: only their sum is observable."""
    return Model(a=[[-0.5, 0.0, 0.0], [0.0, -0.5, 0.0], [0.3, 0.3, -1.2]], c=[[0.0, 0.0, 1.0]],
                 noise_sigma=[0.01])


def case_unobservable(rng):
    write_case("unobservable", "Two identical decoupled heaters feeding one measured node: the direction "
               "(1, -1, 0)/sqrt(2) is unobservable, no prior.", two_heaters(), grid(0.0, 0.05, 300), None,
               [1.0, 0.6, 0.2], None, 0.01, rng, {})


def case_unobservable_prior(rng):
    prior = {"mean": [0.9, 0.9, 0.0], "covariance": [[0.25, 0.05, 0.0], [0.05, 0.25, 0.0], [0.0, 0.0, 1.0]]}
    write_case("unobservable-prior", "The two-heater model with a Gaussian prior on x0: solved, the data "
               "rank is 2 of 3 and the estimate is flagged UNOBSERVABLE.", two_heaters(), grid(0.0, 0.05, 300),
               None, [1.0, 0.6, 0.2], None, 0.01, rng, {"prior": prior})


def offset_model():
    """A room (air, wall) with a known heater; two thermometers, each with its own unknown bias."""
    return Model(a=[[-0.40, 0.25], [0.10, -0.15]], b=[[0.30], [0.0]], c=[[1.0, 0.0], [0.0, 1.0]],
                 d=[[0.0], [0.0]], noise_sigma=[0.05, 0.05])


def offset_input(times):
    return [[2.0 if (t % 20.0) < 8.0 else 0.0] for t in times]


def case_offsets(rng):
    times = grid(0.0, 0.1, 600)
    write_case("sensor-offset", "Offsets on: two biased thermometers, noise 0.05; offsets (0.35, -1.2) "
               "recovered within 3 standard errors.", offset_model(), times, offset_input(times), [3.0, 1.0],
               [0.35, -1.2], 0.05, rng, {"offsets": True})


def case_offsets_noise_free(rng):
    times = grid(0.0, 0.1, 600)
    write_case("sensor-offset-noise-free", "Offsets on, noise-free data: x0 and offsets recovered exactly.",
               offset_model(), times, offset_input(times), [3.0, 1.0], [0.35, -1.2], 0.0, rng,
               {"offsets": True})


def case_reference_time(rng):
    # A motor (current, speed) with a known voltage; speed measured; state asked at a time between samples.
    model = Model(a=[[-8.0, -1.2], [2.5, -0.5]], b=[[6.0], [0.0]], c=[[0.0, 1.0]], d=[[0.0]],
                  noise_sigma=[0.02])
    times = grid(5.0, 0.01, 700)
    u = [[1.0 if t < 6.5 else (-0.5 if t < 9.0 else 0.75)] for t in times]
    write_case("reference-time", "Reference time 8.2345 s (t0 = 5 s, between samples, input held from the "
               "sample at 8.23 s): state and covariance there.", model, times, u, [0.4, -0.2], None, 0.02, rng,
               {"referenceTime": 8.2345})


def case_continuous(rng):
    # The oscillator again, irregular times, a prior, the CONTINUOUS (trapezoid) weighting.
    t_rng = np.random.default_rng(7003)
    steps_ms = t_rng.integers(10, 41, size=249)
    ticks = 2_000_000 + np.concatenate([[0], np.cumsum(steps_ms) * 1000])
    missing = np.zeros((len(ticks), 1), dtype=bool)
    missing[t_rng.choice(np.arange(1, len(ticks) - 1), size=20, replace=False), 0] = True
    prior = {"mean": [0.5, -1.0], "covariance": [[1.0, 0.0], [0.0, 4.0]]}
    write_case("continuous-formulation", "Oscillator, irregular 10-40 ms steps from t0 = 2 s, 20 missing, "
               "CONTINUOUS weighting with trapezoid weights, a prior, reference time at the last sample.",
               oscillator(), ticks / TICKS_PER_SECOND, None, [0.8, -1.5], None, 0.05, rng,
               {"formulation": "CONTINUOUS", "prior": prior, "referenceTime": float(ticks[-1]) / TICKS_PER_SECOND},
               missing=missing)


def case_continuous_stretches(rng):
    # The two-tank model with its pump input: long evenly sampled stretches (0.1 s) broken by a
    # 0.35 s and a 0.27 s gap and a few missing values, so the CONTINUOUS weights are constant on
    # long runs (where the engine may fold blocks) and vary near the breaks and the missing values.
    model = Model(a=[[-0.20, 0.0, 0.0], [0.20, -0.10, 0.0], [0.0, 0.05, -0.50]],
                  b=[[0.40], [0.0], [0.1]], c=[[1.0, 0.0, 0.0], [0.0, 0.3, 1.0]], d=[[0.0], [0.25]],
                  noise_sigma=[0.05, 0.2])
    times = grid(0.0, 0.1, 300) + grid(30.25, 0.1, 400) + grid(70.17, 0.1, 350)
    u = [[1.0 + 0.5 * math.sin(0.3 * t) + (0.8 if 20 <= t < 30 else 0.0)] for t in times]
    missing = np.zeros((len(times), 2), dtype=bool)
    missing[[40, 41, 520, 900], 0] = True
    missing[[610, 611, 612], 1] = True
    write_case("continuous-stretches", "Two tanks with a pump input, 2 outputs, 0.1 s stretches of 300, 400 "
               "and 350 samples between two gaps, 7 values missing, CONTINUOUS weighting.",
               model, times, u, [2.0, -1.0, 0.5], None, [0.05, 0.2], rng, {"formulation": "CONTINUOUS"},
               missing=missing)


# ----------------------------------------------------------------------------- Gramian convergence

def gramian_convergence():
    """W_o(T) = int_0^T e^{A't} C'C e^{At} dt against the trapezoid information matrices of the
    CONTINUOUS formulation with sigma = 1 at three sampling densities."""
    model = Model(a=[[0.0, 1.0], [-4.0, -0.8]], c=[[1.0, 0.0]])
    horizon = 4.0
    a, c = model.a, model.c
    ctc = c.T @ c

    def integrand(t):
        e = linalg.expm(a * t)
        return e.T @ ctc @ e

    w_quad, err = integrate.quad_vec(integrand, 0.0, horizon, epsabs=QUAD_EPSABS, epsrel=QUAD_EPSREL)
    n = model.n
    block = np.zeros((2 * n, 2 * n))
    block[:n, :n] = -a.T
    block[:n, n:] = ctc
    block[n:, n:] = a
    e = linalg.expm(block * horizon)
    w_van_loan = e[n:, n:].T @ e[:n, n:]
    assert np.linalg.norm(w_quad - w_van_loan) <= 1e-12 * np.linalg.norm(w_quad), (w_quad, w_van_loan)

    # Leading trapezoid error (Euler-Maclaurin): T_h - W = h^2/12 (f'(T) - f'(0)) + O(h^4),
    # f(t) = e^{A't} C'C e^{At}, f' = A' f + f A.
    def fprime(t):
        f = integrand(t)
        return a.T @ f + f @ a

    lead = (fprime(horizon) - fprime(0.0)) / 12.0
    densities = []
    for intervals in (40, 80, 160):
        ticks = np.array([to_ticks(k * horizon / intervals) for k in range(intervals + 1)])
        w = trapezoid_weights(ticks)
        trap = sum(wk * integrand(tk / TICKS_PER_SECOND) for wk, tk in zip(w, ticks))
        h = horizon / intervals
        densities.append({
            "intervals": intervals,
            "step": h,
            "trapezoid": nested(trap),
            "error": float(np.linalg.norm(trap - w_quad)),
            "leadingError": nested(lead * h * h),
        })
    ratios = [densities[i]["error"] / densities[i + 1]["error"] for i in range(2)]
    doc = {
        "description": "Finite-horizon observability Gramian vs trapezoid information matrices (sigma = 1).",
        "model": model.to_json(),
        "horizon": horizon,
        "gramian": nested(w_quad),
        "gramianQuadErrorEstimate": float(err),
        "densities": densities,
        "errorRatios": ratios,
    }
    (OUT / "gramian-convergence.json").write_text(json.dumps(doc, indent=1) + "\n")
    return doc


def main():
    OUT.mkdir(exist_ok=True)
    for old in OUT.glob("case-*.json"):
        old.unlink()
    # One seeded generator per case so adding a case never changes another's noise.
    builders = [case_oscillator, case_thermal, case_two_outputs, case_discrete_gaps, case_nonuniform_missing,
                case_ill_conditioned, case_unobservable, case_unobservable_prior, case_offsets,
                case_offsets_noise_free, case_reference_time, case_continuous, case_continuous_stretches]
    for index, build in enumerate(builders):
        build(np.random.default_rng(20240700 + index))
    gramian_convergence()


if __name__ == "__main__":
    main()
