#!/usr/bin/env bash
# Gateway-scope glob match: wall time per match of patterns with up to 63 stars against a
# 64-character unit ID (the former regular-expression matcher took seconds to forever on these).
# Prints a Markdown table (also saved to bench/out/unit-pattern.md).
#
#   bench/unit-pattern.sh           # 15 timed runs of 10 000 matches a pattern (and as many warm-up runs)
#   RUNS=31 bench/unit-pattern.sh
set -euo pipefail

cd "$(dirname "$0")/.."
OUT=bench/out
RUNS=${RUNS:-15}
mkdir -p "$OUT"

mvn -q -B -pl service test-compile
mvn -q -B -pl service dependency:build-classpath -Dmdep.includeScope=test -Dmdep.outputFile="$PWD/$OUT/unit-pattern-classpath.txt" >/dev/null
CLASSPATH="service/target/classes:service/target/test-classes:$(cat "$OUT/unit-pattern-classpath.txt")"
java -cp "$CLASSPATH" backstate.auth.UnitPatternBench "$RUNS" | tee "$OUT/unit-pattern.md"
