#!/usr/bin/env bash
# Regenerates the README's console screenshots at 1280×800: docs/images/console-unit.png (the
# unit page of a flagged demo unit) and docs/images/console-fleet.png (the fleet page).
# It builds the jar, starts the demo on a free loopback port with its own database in a
# temporary folder, drives Debian's headless Chromium through the console tests' Selenium
# harness (backstate.console.ReadmeScreenshots, on the test class path) and stops the demo.
# Needs JDK 17, Maven, chromium and chromium-driver (apt-get install chromium chromium-driver).
#   SKIP_BUILD=1   reuse service/target as it is
#   UNIT=RCX-…     the unit page's unit (default: the first unit flagged model_mismatch)
#   OUT=DIR        where the PNGs go (default: docs/images)
#   MVN_FLAGS=-o   extra Maven flags, e.g. offline
set -euo pipefail

ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)"
JAR="$ROOT/service/target/backstate.jar"
OUT="${OUT:-$ROOT/docs/images}"
WORK="$(mktemp -d /tmp/backstate-screenshots.XXXXXX)"
LOG="$WORK/demo.log"
DEMO_PID=""

cleanup() {
  if [ -n "$DEMO_PID" ] && kill -0 "$DEMO_PID" 2>/dev/null; then
    kill -TERM "$DEMO_PID"
    wait "$DEMO_PID" || true
  fi
  rm -rf "$WORK"
}
trap cleanup EXIT

for tool in chromium chromedriver; do
  command -v "$tool" >/dev/null || { echo "missing $tool: apt-get install chromium chromium-driver" >&2; exit 1; }
done

if [ "${SKIP_BUILD:-0}" != 1 ]; then
  (cd "$ROOT" && mvn -q -B ${MVN_FLAGS:-} -pl service package -DskipTests)
fi
(cd "$ROOT" && mvn -q -B ${MVN_FLAGS:-} -pl service dependency:build-classpath -Dmdep.outputFile="$WORK/cp.txt" >/dev/null)
CP="$ROOT/service/target/test-classes:$ROOT/service/target/classes:$(cat "$WORK/cp.txt")"

java -jar "$JAR" demo --host 127.0.0.1 --port 0 --database "$WORK/demo.db" --workers 2 >"$LOG" 2>&1 &
DEMO_PID=$!
PORT=""
for _ in $(seq 1 600); do # up to 60 s
  PORT="$(grep -o 'listening on http://[^ ]*:[0-9]*' "$LOG" | grep -o '[0-9]*$' | head -1 || true)"
  [ -n "$PORT" ] && break
  kill -0 "$DEMO_PID" 2>/dev/null || { cat "$LOG" >&2; exit 1; }
  sleep 0.1
done
[ -n "$PORT" ] || { echo "the demo did not start within 60 s" >&2; cat "$LOG" >&2; exit 1; }

java -cp "$CP" backstate.console.ReadmeScreenshots "http://127.0.0.1:$PORT" "$OUT" ${UNIT:-}
