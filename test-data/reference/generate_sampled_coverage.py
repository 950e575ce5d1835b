#!/usr/bin/env python3
"""Designs for the Monte-Carlo proof of the SAMPLED formulation's uncertainty, per option.

Writes sampled-coverage.json.gz next to this file: per scenario a model, a trace with its missing
values, known inputs and options (prior, sensor offsets, reference time, series stride), and from
numpy / scipy alone:
  regressors            C Phi(t_k) per sample and output (scipy.linalg.expm, no accumulation)
  forcedOutput          C f_k + D u_k, the zero-initial-state response with the input held
  phis, forcedStates    Phi(t_k) and f_k per sample, so a test can form the true state x(t_k) of any
                        draw as Phi(t_k) x0 + f_k
  referencePhi, referenceForced   the same at the reference time (input held from the sample before it)
  ljungBoxSize          per output, the share of white Gaussian sequences as long as that output's
                        present values whose Ljung-Box test (Ljung & Box 1978, chi-square reference, the
                        estimator's lag rule) rejects at level/p: the whiteness half of the
                        model-mismatch flag's false-alarm rate, seeded numpy draws
  expected              the closed-form covariance of the unknowns (x0, then offsets) under the stated
                        sigma, (M'M)^-1 of the whitened equations with the prior's rows (Gauss-Markov;
                        with x0 drawn from the prior, the posterior covariance), and Phi P Phi' at the
                        reference time, the window's end and every sample (generate_estimates.py's
                        solve_reference, the same code that writes the estimator's reference cases)
The Java test (SampledCoverageTest) draws x0 (from the prior where there is one), adds Gaussian noise
of the true sigma to the noise-free outputs formed from these designs, solves every draw with the
engine, and holds the reported covariance to these closed forms and the reported intervals, bands
and chi-square to what they claim over the draws.

Scenarios are invented: a refrigerated container's cargo core, air and evaporator coil seen through
its air and coil sensors, sampled irregularly or on a grid with gaps, and a sampled-data level loop.

Run: python3 generate_sampled_coverage.py   (numpy and scipy; seeded, output byte-identical)
"""
import gzip
import json
import math
import pathlib

import numpy as np

from scipy import stats

from generate_estimates import (LJUNG_BOX_MAX_LAGS, MISMATCH_LEVEL, TICKS_PER_SECOND, Model, free_and_forced, nested,
                                solve_reference, to_ticks, vec)

HERE = pathlib.Path(__file__).resolve().parent
OUT = HERE / "sampled-coverage.json.gz"
#: White sequences per Ljung-Box size: about 100 rejections at a size of 1e-3, so +-10 % (one sd).
SIZE_DRAWS = 100_000
SIZE_BATCH = 5_000


def ljung_box_size(values, level, rng):
    """Share of SIZE_DRAWS white Gaussian sequences of this length whose Ljung-Box p-value is below level."""
    lags = min(LJUNG_BOX_MAX_LAGS, values // 5)
    critical = stats.chi2.isf(level, lags)
    rejected = 0
    for _ in range(SIZE_DRAWS // SIZE_BATCH):
        z = rng.standard_normal((SIZE_BATCH, values))
        z -= z.mean(axis=1, keepdims=True)
        denominator = (z * z).sum(axis=1)
        q = np.zeros(SIZE_BATCH)
        for k in range(1, lags + 1):
            q += ((z[:, k:] * z[:, :-k]).sum(axis=1) / denominator) ** 2 / (values - k)
        rejected += int(np.count_nonzero(q * values * (values + 2) > critical))
    return rejected / SIZE_DRAWS


def reefer(with_sigma=True):
    """Cargo core, container air and evaporator coil (deg C). The core exchanges with the air (3 h),
    the air with the core (20 min) and the coil (400 s), the coil with the air (15 min) and with the
    refrigerant, whose temperature is the known input (5 min). Air and coil are measured; the coil
    sensor's default sigma is 0.4 (the air sensor's sigma comes with each trace)."""
    a = [[-1 / 10_800, 1 / 10_800, 0.0],
         [1 / 1_200, -1 / 1_200 - 1 / 400, 1 / 400],
         [0.0, 1 / 900, -1 / 900 - 1 / 300]]
    return Model(a=a, b=[[0.0], [0.0], [1 / 300]], c=[[0.0, 1.0, 0.0], [0.0, 0.0, 1.0]], d=[[0.0], [0.0]],
                 noise_sigma=[0.3, 0.4] if with_sigma else None)


def refrigerant(times_s):
    """Refrigerant temperature: -8 deg C while cooling, +6 deg C during a 25-minute defrost each 2 h."""
    t = np.asarray(times_s) - times_s[0]
    return np.where((t % 7_200.0) < 1_500.0, 6.0, -8.0)[:, None]


def level_loop():
    """A sampled-data level loop: level and valve lag, period 30 s, valve command known, level measured."""
    return Model(a=[[0.995, 0.03], [-0.02, 0.96]], b=[[0.01], [0.12]], c=[[1.0, 0.0]], d=[[0.0]],
                 sample_period=30.0, noise_sigma=[0.05])


def irregular_ticks(rng, start_s, low_s, high_s, count):
    steps = rng.uniform(low_s, high_s, size=count - 1)
    return np.array([to_ticks(t) for t in start_s + np.concatenate([[0.0], np.cumsum(steps)])], dtype=np.int64)


def missing_mask(rng, count, shares):
    mask = rng.random((count, len(shares))) < np.asarray(shares)
    mask[0, :] = False
    mask[-1, :] = False
    return mask


def between(ticks, index, share):
    """A time between samples index and index + 1, on a microsecond tick."""
    return float(ticks[index] + int((ticks[index + 1] - ticks[index]) * share)) / TICKS_PER_SECOND


def scenario(name, description, model, ticks, u, missing, trace_sigma, true_sigma, truth, options, stride):
    """truth: {"x0": ...} for a fixed initial state, or {"drawFromPrior": true}; always "offsets"."""
    n, p = model.n, model.p
    clean = np.zeros((len(ticks), p))  # solve_reference needs only which values are present
    y = np.where(missing, np.nan, clean)
    expected, _ = solve_reference(model, ticks, y, u, trace_sigma, options, noise_free=True)
    assert expected["result"] == "estimate", name
    phis, forced = free_and_forced(model, ticks, u)
    forced_out = forced @ model.c.T + (u @ model.d.T if model.m else 0.0)
    regressors = np.einsum("jn,knm->kjm", model.c, phis)

    # A state whose spread is near the rounding of its value cannot show coverage: keep every checked
    # standard error far above it.
    floor = 1e-8 * (1.0 + np.abs(forced).max())
    for key in ("windowEnd", "reference", "stateTrajectory"):
        se = np.asarray(expected[key]["standardErrors"])
        assert np.all(se > floor), (name, key, se.min())
    ref = options["referenceTime"]
    ref_ticks = to_ticks(ref)
    last = int(np.searchsorted(ticks, ref_ticks, side="right")) - 1
    dt = ref_ticks - ticks[last]
    ref_forced = model.phi(dt) @ forced[last] + (model.gamma(dt) @ u[last] if model.m else 0.0)
    ref_phi = model.phi(ref_ticks - ticks[0])

    size_rng = np.random.default_rng(7200)
    sizes = [{"values": int((~missing[:, j]).sum()), "level": MISMATCH_LEVEL / p,
              "size": ljung_box_size(int((~missing[:, j]).sum()), MISMATCH_LEVEL / p, size_rng)} for j in range(p)]
    return {
        "name": name,
        "description": description,
        "model": model.to_json(),
        "trace": {
            "times": vec(ticks / TICKS_PER_SECOND),
            "inputs": None if not model.m else nested(u),
            "noiseSigma": None if trace_sigma is None else [None if math.isnan(v) else float(v) for v in trace_sigma],
        },
        "missing": [[bool(v) for v in row] for row in missing],
        "options": {
            "formulation": "SAMPLED",
            "prior": options.get("prior"),
            "offsets": options.get("offsets", False),
            "referenceTime": ref,
            "seriesStride": stride,
        },
        "truth": dict(truth, noiseSd=vec(true_sigma)),
        "design": {
            "regressors": [nested(r) for r in regressors],
            "forcedOutput": nested(forced_out),
            "phis": [nested(f) for f in phis],
            "forcedStates": nested(forced),
            "referencePhi": nested(ref_phi),
            "referenceForced": vec(ref_forced),
        },
        "expected": {
            "covariance": expected["covariance"],
            "reference": expected["reference"]["covariance"],
            "windowEnd": expected["windowEnd"]["covariance"],
            "stateStandardErrors": expected["stateTrajectory"]["standardErrors"],
            "degreesOfFreedom": expected["degreesOfFreedom"],
            "sigmaAllGiven": all(c["sigmaSource"] != "ASSUMED_ONE" for c in expected["channels"]),
            "mismatchLevel": MISMATCH_LEVEL,
            "ljungBoxSize": sizes,
        },
    }


def reefer_prior_offsets(rng):
    ticks = irregular_ticks(rng, 1_790_000_000.0, 40.0, 80.0, 220)
    u = refrigerant(ticks / TICKS_PER_SECOND)
    prior = {"mean": [5.0, 7.0, 0.0], "covariance": [[4.0, 1.5, 0.0], [1.5, 4.0, 0.0], [0.0, 0.0, 9.0]]}
    options = {"prior": prior, "offsets": True, "referenceTime": between(ticks, 117, 0.4)}
    return scenario(
        "reefer-prior-offsets",
        "Reefer, 220 samples 40-80 s apart, 10 % / 20 % missing; air sigma 0.15 from the trace, coil 0.4 from "
        "the model; a prior on x0 (each draw's x0 drawn from it) and both sensor offsets estimated.",
        reefer(), ticks, u, missing_mask(rng, len(ticks), [0.10, 0.20]), [0.15, math.nan], [0.15, 0.4],
        {"drawFromPrior": True, "offsets": [0.3, -0.5]}, options, 1)


def reefer_sigma_unknown(rng):
    ticks = irregular_ticks(rng, 1_790_000_000.0, 40.0, 80.0, 160)
    u = refrigerant(ticks / TICKS_PER_SECOND)
    options = {"referenceTime": between(ticks, 60, 0.7)}
    return scenario(
        "reefer-sigma-unknown",
        "Reefer with no sigma anywhere (assumed 1, true noise 0.25 on both sensors): Student-t intervals "
        "scaled by sigma-hat; 160 samples 40-80 s apart, 5 % missing on each; series every 4th sample.",
        reefer(with_sigma=False), ticks, u, missing_mask(rng, len(ticks), [0.05, 0.05]), None, [0.25, 0.25],
        {"x0": [4.0, 6.5, -3.0], "offsets": [0.0, 0.0]}, options, 4)


def reefer_even_blocks(rng):
    seconds = list(range(0, 300 * 60, 60)) + list(range(300 * 60 + 420, 700 * 60, 60)) + \
        list(range(700 * 60 + 180, 1000 * 60, 60))
    ticks = np.array([to_ticks(1_790_000_000.0 + s) for s in seconds], dtype=np.int64)
    u = refrigerant(ticks / TICKS_PER_SECOND)
    options = {"referenceTime": float(ticks[455]) / TICKS_PER_SECOND, "offsets": True}
    return scenario(
        "reefer-even-blocks",
        "Reefer on a 60 s grid in three even stretches of ~300 samples (gaps of 7 and 3 min), 3 % missing; "
        "sigma from the model; the coil sensor's offset and the air sensor's estimated; series every 10th.",
        reefer(), ticks, u, missing_mask(rng, len(ticks), [0.03, 0.03]), None, [0.3, 0.4],
        {"x0": [2.0, 3.5, -6.0], "offsets": [0.2, 0.1]}, options, 10)


def level_loop_gaps(rng):
    steps = [s for s in range(0, 420) if not (100 <= s < 104 or s in (250, 251) or 300 <= s < 330)]
    ticks = np.array([to_ticks(3_600.0 + 30.0 * s) for s in steps], dtype=np.int64)
    u = np.random.default_rng(7101).choice([0.0, 0.5, 1.0], size=(len(ticks), 1))
    options = {"referenceTime": float(ticks[200]) / TICKS_PER_SECOND}
    return scenario(
        "level-loop-gaps",
        "Discrete level loop, period 30 s, gaps of 4, 2 and 30 periods, valve command known, sigma 0.05 "
        "from the trace; series every 7th sample.",
        level_loop(), ticks, u, np.zeros((len(ticks), 1), dtype=bool), [0.05], [0.05],
        {"x0": [1.2, -0.4], "offsets": [0.0]}, options, 7)


def main():
    builders = [reefer_prior_offsets, reefer_sigma_unknown, reefer_even_blocks, level_loop_gaps]
    scenarios = [build(np.random.default_rng(20261203 + index)) for index, build in enumerate(builders)]
    payload = json.dumps({"scenarios": scenarios}, separators=(",", ":")).encode()
    with OUT.open("wb") as raw, gzip.GzipFile(fileobj=raw, mode="wb", mtime=0, filename="") as gz:
        gz.write(payload)


if __name__ == "__main__":
    main()
