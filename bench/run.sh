#!/usr/bin/env bash
# Speed and memory benchmark of the estimation engine against the fastest dense NumPy route on the same trace.
# Builds the service and bench jars, writes the trace once (bench/out/trace-2000000.bin), times both sides,
# and prints a Markdown table (also saved to bench/out/report.md). See bench/README.md.
set -euo pipefail

cd "$(dirname "$0")/.."
OUT=bench/out
# Java times every size (the scaling table); NumPy the sizes with a target (10^6 rows of the dense
# route take 240 MB, 2*10^6 twice that plus lstsq's copies).
JAVA_SIZES=${JAVA_SIZES:-100000 200000 1000000 2000000}
NUMPY_SIZES=${NUMPY_SIZES:-200000 1000000}
TRACE_SAMPLES=2000000
TRACE=$OUT/trace-$TRACE_SAMPLES.bin
LARGE=1000000
SMALL=100000
WARMUPS=${WARMUPS:-3}
REPEATS=${REPEATS:-7}
SMALL_HEAP=${SMALL_HEAP:-256m}
# Timing JVM: a fixed, pre-touched heap, so heap growth (first-touch page faults, slow on this VM)
# does not land inside timed solves; the second JVM shows the solve also runs in a small heap.
TIMING_HEAP_OPTS=${TIMING_HEAP_OPTS:--Xms2g -Xmx2g -XX:+AlwaysPreTouch}
mkdir -p "$OUT"
# Other work on the machine skews timings: the load average is printed before and after.
START_LOAD=$(cut -d' ' -f1-3 /proc/loadavg)
echo "load average at start: $START_LOAD"
if awk '{ exit !($1 > 0.5) }' /proc/loadavg; then
  echo "WARNING: the machine is busy (1-minute load > 0.5); timings will be skewed, numpy's 2 BLAS threads most"
fi

echo "== build"
mvn -q -DskipTests -pl bench -am package
CLASSPATH_JARS=service/target/backstate.jar:bench/target/backstate-bench.jar

if [[ ! -f $TRACE || bench/make_trace.py -nt $TRACE || bench/statespace_np.py -nt $TRACE ]]; then
  echo "== trace: N=$TRACE_SAMPLES samples"
  python3 bench/make_trace.py "$TRACE" "$TRACE_SAMPLES"
fi

echo "== Java, $TIMING_HEAP_OPTS (load $(cut -d" " -f1 /proc/loadavg))"
# shellcheck disable=SC2086 # the options are meant to split
java $TIMING_HEAP_OPTS -cp "$CLASSPATH_JARS" backstate.bench.EstimatorBench "$TRACE" "$OUT/java.tsv" \
  "$WARMUPS" "$REPEATS" $JAVA_SIZES

echo "== Java, -Xmx$SMALL_HEAP (load $(cut -d" " -f1 /proc/loadavg))"
java "-Xmx$SMALL_HEAP" -cp "$CLASSPATH_JARS" backstate.bench.EstimatorBench "$TRACE" \
  "$OUT/java_small_heap.tsv" "$WARMUPS" "$REPEATS" "$LARGE"

echo "== Java, continuous formulation against sampled (its baseline), same JVM, alternating (load $(cut -d" " -f1 /proc/loadavg))"
# shellcheck disable=SC2086 # the options are meant to split
java $TIMING_HEAP_OPTS -cp "$CLASSPATH_JARS" backstate.bench.FormulationBench "$TRACE" \
  "$WARMUPS" "$REPEATS" "$SMALL" "$LARGE" | tee "$OUT/formulations.md"

echo "== NumPy, OPENBLAS_CORETYPE and OPENBLAS_L2_SIZE unset for this command only (load $(cut -d" " -f1 /proc/loadavg))"
# shellcheck disable=SC2086 # the sizes are meant to split
env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE python3 bench/numpy_lstsq.py "$TRACE" "$OUT/numpy.json" \
  "$REPEATS" $NUMPY_SIZES

echo
END_LOAD=$(cut -d' ' -f1-3 /proc/loadavg)
echo "load average at end: $END_LOAD"
echo "== Results ($(nproc) cores)"
{
  echo "Load average (1, 5, 15 min): $START_LOAD at the start, $END_LOAD at the end; $(nproc) cores."
  echo
  python3 bench/report.py "$OUT/numpy.json" "$OUT/java.tsv" "$OUT/java_small_heap.tsv"
} | tee "$OUT/report.md"
