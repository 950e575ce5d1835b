#!/usr/bin/env bash
# Stored-trace codec: bytes and encode/decode times of format 1 (row-wise doubles) against format 2
# (column-wise decimal-delta or raw) and against the JDK's Deflater on the format-1 bytes, for
# demo-like traces of 10^3 and 10^6 samples and a 10^6-sample trace of arbitrary doubles; before
# that, the CSV parse of the demo-like traces by our reader and by jackson-dataformat-csv.
# Prints Markdown tables (also saved to bench/out/codec.md).
# The bench class lives in the service's test sources, beside the format-1 encoder it compares with.
#
#   bench/codec.sh              # 15 timed runs a case (and as many warm-up runs)
#   RUNS=31 bench/codec.sh
set -euo pipefail

cd "$(dirname "$0")/.."
OUT=bench/out
RUNS=${RUNS:-15}
HEAP_OPTS=${HEAP_OPTS:--Xms2g -Xmx2g -XX:+AlwaysPreTouch}
mkdir -p "$OUT"

echo "== build" >&2
mvn -q -B -pl service test-compile
mvn -q -B -pl service dependency:build-classpath -Dmdep.includeScope=test -Dmdep.outputFile="$PWD/$OUT/codec-classpath.txt" >/dev/null
CLASSPATH="service/target/classes:service/target/test-classes:$(cat "$OUT/codec-classpath.txt")"

echo "load average at start: $(cut -d' ' -f1-3 /proc/loadavg)" >&2
# shellcheck disable=SC2086 # the options are meant to split
java $HEAP_OPTS -cp "$CLASSPATH" backstate.formats.TraceCodecBench test-data "$RUNS" | tee "$OUT/codec.md"
echo "load average at end: $(cut -d' ' -f1-3 /proc/loadavg)" >&2
