#!/usr/bin/env bash
# What the intake shortcuts (a fresh-trace cache, a solve-ahead of long uploads) could save an
# estimate job: decode of the stored payload against taking the parsed trace from memory, and the
# solve against the durable write it would overlap, for demo-like traces of 10^3, 10^5 and 10^6
# samples. Prints a Markdown table (also saved to bench/out/intake.md). The bench class lives in the
# service's test sources, beside the demo-trace generator and the store fixture it uses.
#
#   bench/intake.sh             # 11 timed runs a case (and as many warm-up runs)
#   RUNS=21 bench/intake.sh
set -euo pipefail

cd "$(dirname "$0")/.."
OUT=bench/out
RUNS=${RUNS:-11}
HEAP_OPTS=${HEAP_OPTS:--Xms2g -Xmx2g -XX:+AlwaysPreTouch}
mkdir -p "$OUT"

echo "== build" >&2
mvn -q -B -o -pl service test-compile
mvn -q -B -o -pl service dependency:build-classpath -Dmdep.includeScope=test -Dmdep.outputFile="$PWD/$OUT/intake-classpath.txt" >/dev/null
CLASSPATH="service/target/classes:service/target/test-classes:$(cat "$OUT/intake-classpath.txt")"

echo "load average at start: $(cut -d' ' -f1-3 /proc/loadavg)" | tee "$OUT/intake.md" >&2
# shellcheck disable=SC2086 # the options are meant to split
java $HEAP_OPTS -cp "$CLASSPATH" backstate.intake.IntakeShortcutsBench test-data "$RUNS" | tee -a "$OUT/intake.md"
echo "load average at end: $(cut -d' ' -f1-3 /proc/loadavg)" | tee -a "$OUT/intake.md" >&2
