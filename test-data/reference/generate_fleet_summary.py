#!/usr/bin/env python3
"""Independent expected values for the fleet summary's percentiles (backstate fleet views).

Writes fleet-summary.json next to this file:

  chiSquarePerDof   count, median, p95, max of chi^2/dof over the v1 estimates FleetViewsTest
                    writes: every unit of ../demo/fleet.json once, plus RCX-85159 twice more.
                    chi^2/dof per unit = referenceChiSquare / referenceDegreesOfFreedom, i.e.
                    numpy.linalg.lstsq's fit (generate_demo.py); percentiles by numpy.percentile.
  quantileCases     seeded data sets with numpy.percentile at several probabilities, for
                    SampleQuantilesTest: sizes 1, 2, 3, 10, 1000, ties, negative values.

Percentiles: numpy.percentile(..., method="linear"), numpy's default, which is definition 7 of
Hyndman & Fan (1996), The American Statistician 50(4):361-365.

Run: python3 generate_fleet_summary.py   (numpy; the generator is seeded below)
"""
import json
import pathlib

import numpy as np

HERE = pathlib.Path(__file__).resolve().parent
FLEET = HERE.parent / "demo" / "fleet.json"
SEED = 20250301
REPEATED = "RCX-85159"
REPEATS = 2
PROBABILITIES = [0.0, 0.05, 0.25, 0.5, 0.9, 0.95, 0.99, 1.0]


def percentiles(values, probabilities):
    return [float(np.percentile(values, 100.0 * p, method="linear")) for p in probabilities]


def fleet_chi_square():
    units = json.loads(FLEET.read_text())["units"]
    per_unit = {u["unitId"]: u["referenceChiSquare"] / u["referenceDegreesOfFreedom"] for u in units}
    values = list(per_unit.values()) + [per_unit[REPEATED]] * REPEATS
    median, p95, top = percentiles(values, [0.5, 0.95, 1.0])
    return {"count": len(values), "median": median, "p95": p95, "max": top,
            "source": "numpy.percentile(method='linear') of referenceChiSquare/referenceDegreesOfFreedom"}


def quantile_cases():
    rng = np.random.default_rng(SEED)
    data = {
        "one": [3.5],
        "two": [2.0, -1.0],
        "three": [0.3, 0.1, 0.2],
        "ties": [1.0, 1.0, 2.0, 2.0, 2.0, 3.0, 1.0, 5.0, 5.0, 0.0],
        "lognormal-1000": [float(x) for x in rng.lognormal(0.0, 1.0, 1000)],
        "normal-1001": [float(x) for x in rng.normal(-2.0, 3.0, 1001)],
    }
    return [{"name": name, "values": values, "probabilities": PROBABILITIES,
             "expected": percentiles(values, PROBABILITIES)} for name, values in data.items()]


def main():
    out = {"chiSquarePerDof": fleet_chi_square(), "quantileCases": quantile_cases()}
    (HERE / "fleet-summary.json").write_text(json.dumps(out, indent=1) + "\n")
    print("chi2/dof over the fleet:", out["chiSquarePerDof"])


if __name__ == "__main__":
    main()
