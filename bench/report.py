"""Prints the benchmark's Markdown table from the Java TSV files and the NumPy JSON file.

Speed-up is NumPy time over Java time, both medians (numpy build and lstsq are medians of each
part; the speed-up uses the median of their per-run sum). "max rel diff" is max_i |x_java_i - x_numpy_i| /
|x_numpy_i| over the entries of x0 (elementwise, so stricter than a norm-wise comparison).

usage: report.py NUMPY_JSON JAVA_TSV [JAVA_TSV ...]
"""

import csv
import json
import sys

#: The issue's targets: Java at least this many times faster, and estimates agreeing this closely.
SPEEDUP_TARGET = 5.0
AGREEMENT_TARGET = 1e-8


def java_rows(path):
    with open(path) as f:
        return list(csv.DictReader(f, delimiter="\t"))


def rel_diff(java, numpy):
    return max(abs(j - n) / abs(n) for j, n in zip(java, numpy))


def label(samples):
    exponent = len(str(samples)) - 1
    return f"10^{exponent}" if samples == 10 ** exponent else str(samples)


def main(numpy_file, java_files):
    with open(numpy_file) as f:
        numpy_runs = {r["samples"]: r for r in json.load(f)["runs"]}
    print("| N | Java heap limit | Java solve median (s) | Java min (s) | numpy build (s) | numpy lstsq (s) "
          "| speed-up vs build+lstsq | speed-up vs lstsq alone | max rel diff x̂0 "
          "| Java allocated MB/solve | Java peak live heap MB |")
    print("|---|---|---|---|---|---|---|---|---|---|---|")
    by_size = {}
    verdicts = []
    for path in java_files:
        for row in java_rows(path):
            samples = int(row["samples"])
            nr = numpy_runs[samples]
            java_s = float(row["median_s"])
            x_java = [float(v) for v in row["x0"].split(",")]
            diff = rel_diff(x_java, nr["x0"])
            speedup = nr["total_s"] / java_s
            by_size.setdefault(samples, (java_s, float(row["min_s"])))
            verdicts.append((label(samples), row["max_heap_mb"], speedup, diff))
            print(f"| {label(samples)} | {float(row['max_heap_mb']):.0f} MB | {java_s:.3f} | {float(row['min_s']):.3f} "
                  f"| {nr['build_s']:.3f} "
                  f"| {nr['lstsq_s']:.3f} | {speedup:.2f}x | {nr['lstsq_s'] / java_s:.2f}x | {diff:.1e} "
                  f"| {float(row['alloc_mb']):.1f} | {float(row['live_peak_mb']):.2f} |")
    print()
    sizes = sorted(by_size)
    if len(sizes) >= 2:
        small, large = sizes[0], sizes[-1]
        print(f"Scaling {label(small)} -> {label(large)} (x{large // small} samples): "
              f"Java time x{by_size[large][0] / by_size[small][0]:.2f} (medians), "
              f"x{by_size[large][1] / by_size[small][1]:.2f} (mins); "
              f"numpy build+lstsq x{numpy_runs[large]['total_s'] / numpy_runs[small]['total_s']:.2f}")
    for size, heap, speedup, diff in verdicts:
        print(f"N={size} (heap {float(heap):.0f} MB): speed-up {speedup:.2f}x "
              f"({'meets' if speedup >= SPEEDUP_TARGET else 'misses'} the {SPEEDUP_TARGET:g}x target), "
              f"agreement {diff:.1e} ({'meets' if diff <= AGREEMENT_TARGET else 'misses'} {AGREEMENT_TARGET:g})")


if __name__ == "__main__":
    if len(sys.argv) < 3:
        sys.exit(__doc__)
    main(sys.argv[1], sys.argv[2:])
