#!/usr/bin/env bash
# Reads while 500 uploads crawl (a byte every 2 s each, every one cut off replaced at once) for
# 20 s: p50/p99/max of /healthz, /readyz and an estimate read, against the target p99 ≤ 100 ms,
# on fresh servers with both upload caps at their highest (125; defaults 64 and 32). Clients and server share
# one JVM, as in SlowUploadsTest. Prints a Markdown table (also saved to bench/out/slow-uploads.md).
#
#   bench/slow-uploads.sh          # 3 runs, about 1.5 minutes
#   RUNS=5 bench/slow-uploads.sh
set -euo pipefail

cd "$(dirname "$0")/.."
OUT=bench/out
RUNS=${RUNS:-3}
mkdir -p "$OUT"

mvn -q -B -pl service test-compile
mvn -q -B -pl service dependency:build-classpath -Dmdep.includeScope=test -Dmdep.outputFile="$PWD/$OUT/slow-uploads-classpath.txt" >/dev/null
CLASSPATH="target/classes:target/test-classes:$(cat "$OUT/slow-uploads-classpath.txt")"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg)"
# From service/, where the test fixtures find the demo models; the server's log goes to bench/out.
# The quick compiler only, as the launcher runs the service (bench/README.md, "Which compiler the
# service runs"); SLOW_UPLOADS_JAVA_OPTS=-XX:TieredStopAtLevel=4 for the JVM's default.
(cd service && java ${SLOW_UPLOADS_JAVA_OPTS:--XX:TieredStopAtLevel=1} -cp "$CLASSPATH" backstate.reliability.SlowUploadsBench "$RUNS" 2>"../$OUT/slow-uploads.log") | tee "$OUT/slow-uploads.md"
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"
