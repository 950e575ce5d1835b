#!/usr/bin/env bash
# Wall time of one regression run over N stored traces on SQLite: in one piece on one worker
# (the baseline), split into chunks on one worker pool, and on two pools sharing the store (two
# "replicas" in one process), each pool one solving slot. Prints a Markdown table (also saved to
# bench/out/regression-chunks.md). The bench class lives in the service's test sources, beside
# the demo fixture it loads the traces with. Solving is CPU-bound: on 2 cores two pools can at
# best halve the time, and less when other work shares the machine.
#
#   bench/regression-chunks.sh            # 2000 traces, 500 a chunk
#   bench/regression-chunks.sh 10000 500
set -euo pipefail

cd "$(dirname "$0")/.."
OUT=bench/out
mkdir -p "$OUT"

echo "== build" >&2
mvn -q -B -pl service test-compile
mvn -q -B -pl service dependency:build-classpath -Dmdep.includeScope=test \
  -Dmdep.outputFile="$PWD/$OUT/regression-classpath.txt" >/dev/null
CLASSPATH="service/target/classes:service/target/test-classes:$(cat "$OUT/regression-classpath.txt")"

echo "load average at start: $(cut -d' ' -f1-3 /proc/loadavg)" >&2
java -cp "$CLASSPATH" backstate.regression.ChunkedRunBench "${1:-2000}" "${2:-500}" | tee "$OUT/regression-chunks.md"
echo "load average at end: $(cut -d' ' -f1-3 /proc/loadavg)" >&2
