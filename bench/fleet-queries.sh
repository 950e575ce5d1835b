#!/usr/bin/env bash
# Fleet-view query timings on a 10 000-unit × 100-estimate SQLite database (10⁶ estimates).
# Fills the database once through the service's schema and write-path SQL (FleetBulkLoad), then
# times the fleet summary, unit list and trend through the store and over HTTP, and prints a
# Markdown table (also saved to bench/out/fleet-queries.md). See docs/fleet-and-planning.md.
# The all-time summary is timed from the running totals and, as the baseline, from the rows;
# the last line gives both, their ratio, the target (<= 20 ms) and whether the answers agree.
# A database filled by a build before the totals is migrated (back-filled) when opened.
#
#   bench/fleet-queries.sh                       # fill /tmp/backstate-fleet-bench.db and time
#   REUSE=true bench/fleet-queries.sh            # time an existing file again
#   UNITS=1000 PER_UNIT=20 bench/fleet-queries.sh   # a quick small run
set -euo pipefail

cd "$(dirname "$0")/.."
OUT=bench/out
DATABASE=${DATABASE:-/tmp/backstate-fleet-bench.db}
UNITS=${UNITS:-10000}
PER_UNIT=${PER_UNIT:-100}
REPEAT=${REPEAT:-7}
REUSE=${REUSE:-false}
HEAP_OPTS=${HEAP_OPTS:--Xms1g -Xmx1g}
mkdir -p "$OUT"

echo "== build" >&2
mvn -q -B -pl service test-compile
mvn -q -B -pl service dependency:build-classpath -Dmdep.includeScope=test -Dmdep.outputFile="$PWD/$OUT/fleet-classpath.txt" >/dev/null
CLASSPATH="service/target/classes:service/target/test-classes:$(cat "$OUT/fleet-classpath.txt")"

echo "== run (units=$UNITS per-unit=$PER_UNIT reuse=$REUSE)" >&2
{
  echo "Load average before: $(cut -d' ' -f1-3 /proc/loadavg) ($(nproc) CPUs; other work skews every figure)."
  echo
  # shellcheck disable=SC2086
  java $HEAP_OPTS -Dorg.slf4j.simpleLogger.defaultLogLevel=warn -cp "$CLASSPATH" backstate.bench.FleetQueryBench \
    --database "$DATABASE" --units "$UNITS" --per-unit "$PER_UNIT" --repeat "$REPEAT" --reuse "$REUSE" \
    --testData test-data
  echo
  echo "Load average after: $(cut -d' ' -f1-3 /proc/loadavg)."
} | tee "$OUT/fleet-queries.md"
