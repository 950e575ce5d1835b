"""Prints the engine benchmark's tables from the Java TSV files and the NumPy JSON file.

Speed-up is NumPy time over Java time, both medians of runs in the same bench run. The headline
ratio is against the fastest NumPy route that agrees with lstsq to 1e-8 (numpy_lstsq.py picks it);
the ratio against the lstsq route (same rows and forced response, numpy.linalg.lstsq to solve) is
printed beside it. "max rel diff" is max_i |x_java_i - x_numpy_i| / |x_numpy_i| over the entries of
x0 (elementwise, so stricter than a norm-wise comparison).

usage: report.py NUMPY_JSON JAVA_TSV [JAVA_TSV ...]   (the first Java file gives the scaling table)
"""

import csv
import json
import sys

#: The issue's targets: Java at least this many times faster than the best NumPy route, per N.
SPEEDUP_TARGETS = {200_000: 10.0, 1_000_000: 20.0}
AGREEMENT_TARGET = 1e-8


def java_rows(path):
    with open(path) as f:
        return list(csv.DictReader(f, delimiter="\t"))


def rel_diff(java, numpy):
    return max(abs(j - n) / abs(n) for j, n in zip(java, numpy))


def label(samples):
    mantissa, exponent = samples, 0
    while mantissa % 10 == 0:
        mantissa, exponent = mantissa // 10, exponent + 1
    return f"10^{exponent}" if mantissa == 1 else f"{mantissa}·10^{exponent}"


def speed_table(numpy_runs, java_files):
    print("| N | Java heap | Java median (min) s | fastest NumPy route | NumPy median (min) s | speed-up "
          "| target | NumPy lstsq route s | speed-up vs lstsq route | max rel diff x̂0 |")
    print("|---|---|---|---|---|---|---|---|---|---|")
    verdicts = []
    for path in java_files:
        for row in java_rows(path):
            samples = int(row["samples"])
            if samples not in numpy_runs:
                continue
            nr = numpy_runs[samples]
            java_s = float(row["median_s"])
            diff = rel_diff([float(v) for v in row["x0"].split(",")], nr["x0"])
            speedup = nr["total_s"] / java_s
            target = SPEEDUP_TARGETS.get(samples)
            heap = f"{float(row['max_heap_mb']):.0f} MB"
            print(f"| {label(samples)} | {heap} | {java_s:.4f} ({float(row['min_s']):.4f}) | {nr['route']} "
                  f"| {nr['total_s']:.4f} ({nr['total_min_s']:.4f}) | {speedup:.1f}x "
                  f"| {f'{target:g}x' if target else '-'} | {nr['lstsq_route_s']:.4f} "
                  f"| {nr['lstsq_route_s'] / java_s:.1f}x | {diff:.1e} |")
            verdicts.append((samples, heap, speedup, nr["lstsq_route_s"] / java_s, target, diff))
    return verdicts


def scaling_table(path):
    rows = java_rows(path)
    base = rows[0]
    print(f"| N | Java median (min) s | time / time at {label(int(base['samples']))} | samples ratio "
          "| ns per sample (median) | trace MB | allocated MB/solve | peak live heap above the trace MB |")
    print("|---|---|---|---|---|---|---|---|")
    for row in rows:
        samples = int(row["samples"])
        median = float(row["median_s"])
        print(f"| {label(samples)} | {median:.4f} ({float(row['min_s']):.4f}) "
              f"| {median / float(base['median_s']):.2f} | {samples / int(base['samples']):g} "
              f"| {median / samples * 1e9:.0f} | {float(row.get('trace_mb') or 'nan'):.0f} "
              f"| {float(row['alloc_mb']):.2f} | {float(row['live_peak_mb']):.2f} |")


def main(numpy_file, java_files):
    with open(numpy_file) as f:
        numpy_runs = {r["samples"]: r for r in json.load(f)["runs"]}
    print("Warm solve against the fastest NumPy route (same run, medians):\n")
    verdicts = speed_table(numpy_runs, java_files)
    print("\nScaling and memory of the Java solve (timing JVM):\n")
    scaling_table(java_files[0])
    print()
    for samples, heap, speedup, lstsq_speedup, target, diff in verdicts:
        goal = (f"{'meets' if speedup >= target else 'misses'} the {target:g}x target" if target
                else "no target at this N")
        print(f"N={label(samples)} (heap {heap}): {speedup:.1f}x the fastest NumPy route ({goal}), "
              f"{lstsq_speedup:.1f}x the lstsq route; agreement {diff:.1e} "
              f"({'meets' if diff <= AGREEMENT_TARGET else 'misses'} {AGREEMENT_TARGET:g})")


if __name__ == "__main__":
    if len(sys.argv) < 3:
        sys.exit(__doc__)
    main(sys.argv[1], sys.argv[2:])
