#!/usr/bin/env bash
# Shared by the load scripts: build once, then a server on loopback on a fresh SQLite file, the
# load driver (service/src/test/java/backstate/reliability/LoadDriver.java) and a clean stop.
# Traffic goes to 127.0.0.1 only; every run is bounded in count and time.
set -euo pipefail

ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)"
JAR="$ROOT/service/target/backstate.jar"
LAUNCHER="$ROOT/service/target/backstate"
WORK="$(mktemp -d /tmp/backstate-load.XXXXXX)"
DB="$WORK/load.db"
LOG="$WORK/server.log"
SERVER_PID=""
BASE=""
# The database and server log go when the script ends; KEEP_WORK=1 keeps them for a look.
cleanup() {
  stop_server
  if [ "${KEEP_WORK:-0}" = 1 ]; then echo "kept $WORK"; else rm -rf "$WORK"; fi
}
trap cleanup EXIT

build() {
  if [ "${SKIP_BUILD:-0}" != 1 ]; then
    (cd "$ROOT" && mvn -q -B -pl service package -DskipTests)
  fi
  (cd "$ROOT" && mvn -q -B -pl service dependency:build-classpath -Dmdep.outputFile="$WORK/cp.txt" >/dev/null)
  CP="$ROOT/service/target/test-classes:$ROOT/service/target/classes:$(cat "$WORK/cp.txt")"
}

# start_server HEAP [extra serve flags...]: the packaged jar on 127.0.0.1, a free port, a new database.
start_server() {
  local heap="$1"; shift
  rm -f "$DB" "$DB-wal" "$DB-shm"
  if ! launch "$heap" --auth off "$@"; then
    grep -q -- "got flag --auth" "$LOG" && launch "$heap" "$@" || { cat "$LOG"; exit 1; }
  fi
  BASE="http://127.0.0.1:$PORT"
  curl -sf -o /dev/null -X POST "$BASE/v1/models" -H 'Content-Type: application/json' \
    -d '{"name":"reefer-40","description":"load test"}'
  curl -sf -o /dev/null -X POST "$BASE/v1/models/reefer-40/versions" -H 'Content-Type: application/json' \
    --data-binary "@$ROOT/test-data/demo/models/reefer-40.v1.json"
  echo "server pid $SERVER_PID on $BASE, heap $heap, database $DB"
  # The JVM options the server really runs with (the launcher's and SERVER_JAVA_OPTS), before -jar.
  echo "server JVM options: $(tr '\0' ' ' <"/proc/$SERVER_PID/cmdline" | sed 's/ -jar .*//; s/^[^ ]* //')"
}

launch() {
  local heap="$1"; shift
  : >"$LOG"
  # As deployed: through the launcher (service/target/backstate, the Docker entry point), with its
  # JVM settings and archive. SERVER_JAVA_OPTS: extra JVM flags, e.g.
  # -XX:StartFlightRecording=filename=/tmp/server.jfr,settings=profile, or -XX:TieredStopAtLevel=4
  # for the JVM's default compilers (bench/README.md, "Which compiler the service runs").
  # SERVER_JAR: another build's jar (e.g. main before a change), run with the launcher's compiler setting.
  if [ -n "${SERVER_JAR:-}" ]; then
    java -XX:TieredStopAtLevel=1 ${SERVER_JAVA_OPTS:-} -Xmx"$heap" -jar "$SERVER_JAR" serve --host 127.0.0.1 --port 0 \
      --database "$DB" "$@" >>"$LOG" 2>&1 &
  else
    BACKSTATE_JAVA_OPTS="${SERVER_JAVA_OPTS:-} -Xmx$heap" "$LAUNCHER" serve --host 127.0.0.1 --port 0 --database "$DB" "$@" \
      >>"$LOG" 2>&1 &
  fi
  SERVER_PID=$!
  for _ in $(seq 1 600); do # up to 60 s
    PORT="$(grep -o 'listening on http://localhost:[0-9]*' "$LOG" | grep -o '[0-9]*$' | head -1 || true)"
    [ -n "$PORT" ] && return 0
    kill -0 "$SERVER_PID" 2>/dev/null || { wait "$SERVER_PID" || true; SERVER_PID=""; return 1; }
    sleep 0.1
  done
  echo "server did not start within 60 s" >&2; cat "$LOG" >&2; exit 1
}

# server_cpu: CPU seconds (user + system) the server process has used so far.
server_cpu() {
  awk -v hz="$(getconf CLK_TCK)" '{printf "  server CPU %.1f s (user %.1f, system %.1f)\n", ($14+$15)/hz, $14/hz, $15/hz}' "/proc/$SERVER_PID/stat"
}

stop_server() {
  if [ -n "$SERVER_PID" ] && kill -0 "$SERVER_PID" 2>/dev/null; then
    kill -TERM "$SERVER_PID"
    wait "$SERVER_PID" || true
  fi
  SERVER_PID=""
}

# driver MODE [flags...]: the load driver against the running server (or alone, for "offline").
# The driver shares the cores with the server, so it runs as light as it can: the quick compiler
# only (the optimising one took seconds of CPU from the server's cores in every run).
driver() {
  local heap="${DRIVER_HEAP:-1g}"
  java -XX:TieredStopAtLevel=1 -Xmx"$heap" -Dbackstate.testData="$ROOT/test-data" -cp "$CP" backstate.reliability.LoadDriver "$@" \
    ${BASE:+--base "$BASE"} --db "$DB"
}

# server_metric NAME: sum and count of a Micrometer timer from /metrics, e.g. backstate_solve_duration_seconds.
server_metric() {
  curl -sf "$BASE/metrics" | awk -v m="$1" '$1 ~ "^"m"_(sum|count)" {print "  server " $1 " " $2}'
}
