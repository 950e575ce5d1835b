#!/usr/bin/env bash
# Process-noise formulation against the deterministic sampled solve (its baseline) at N = 10^5 and
# 10^6 (n = 10, p = 3, m = 2), and against a dense NumPy MAP solve at the N it can reach (its memory
# is (N·p + N·n) × N·n doubles: 0.4 GB at N = 800, so it stops at 400). Prints both tables, the
# ratios and the load average before and after. "x0 + window end" is the service's solve without a
# series (forward filter, memory independent of N), printed beside the smoother's route it replaced.
# See docs/process-noise.md ("Benchmark").
set -euo pipefail

cd "$(dirname "$0")/.."
OUT=bench/out
WARMUPS=${WARMUPS:-2}
REPEATS=${REPEATS:-5}
DENSE_SIZES=${DENSE_SIZES:-100 200 400}
SIZES=${SIZES:-100000 1000000}
HEAP_OPTS=${HEAP_OPTS:--Xms1g -Xmx1g}
mkdir -p "$OUT"
echo "load average at start: $(cut -d' ' -f1-3 /proc/loadavg)"

echo "== build"
mvn -q -DskipTests -pl bench -am package
CLASSPATH_JARS=service/target/backstate.jar:bench/target/backstate-bench.jar
if [[ ! -f $OUT/trace.bin || bench/make_trace.py -nt $OUT/trace.bin || bench/statespace_np.py -nt $OUT/trace.bin ]]; then
  python3 bench/make_trace.py "$OUT/trace.bin" 1000000
fi

echo "== Java: process noise against sampled, same JVM, alternating (load $(cut -d" " -f1 /proc/loadavg))"
# shellcheck disable=SC2086 # the options are meant to split
java $HEAP_OPTS -cp "$CLASSPATH_JARS" backstate.bench.ProcessNoiseBench "$OUT/trace.bin" "$OUT/process-noise.tsv" \
  "$WARMUPS" "$REPEATS" $DENSE_SIZES $SIZES | tee "$OUT/process-noise.md"

echo "== NumPy dense MAP solve, OPENBLAS_CORETYPE and OPENBLAS_L2_SIZE unset (load $(cut -d" " -f1 /proc/loadavg))"
# shellcheck disable=SC2086
env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE python3 bench/process_noise_dense.py "$OUT/trace.bin" \
  "$OUT/process-noise.tsv" "$REPEATS" $DENSE_SIZES | tee -a "$OUT/process-noise.md"

echo "load average at end: $(cut -d' ' -f1-3 /proc/loadavg)"
