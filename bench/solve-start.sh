#!/usr/bin/env bash
# Whole-process `solve` of a 10-row trace: the launcher service/target/backstate (class-data-sharing
# archive + quick-start JVM settings, see service/src/launcher/backstate) against the baseline, a
# plain `java -jar service/target/backstate.jar solve ...`. Each case runs RUNS times, the cases
# interleaved round by round so that load from elsewhere falls on all of them alike; every run's
# output must be byte-identical to the baseline's. Prints the median and fastest wall time, the
# median CPU time (user + system, less sensitive to other load), the ratio to the baseline, the
# 0.4 s target, and the load average before and after (also saved to bench/out/solve-start.md).
#
#   bench/solve-start.sh              # packages the service first (writes the archive), 15 runs
#   RUNS=31 SKIP_BUILD=1 bench/solve-start.sh
set -euo pipefail

cd "$(dirname "$0")/.."
OUT=bench/out
RUNS=${RUNS:-15}
TARGET_SECONDS=0.4
mkdir -p "$OUT"
[[ "$RUNS" -ge 10 ]] || { echo "RUNS=$RUNS: at least 10, for a median worth quoting" >&2; exit 2; }

if [[ -z "${SKIP_BUILD:-}" ]]; then
  echo "== build (mvn package: shaded jar, launcher, start-up archive)" >&2
  mvn -q -B -o -pl service -am package -Dmaven.test.skip=true >&2
fi
jar=service/target/backstate.jar
launcher=service/target/backstate
[[ -f "$jar" && -x "$launcher" && -f service/target/backstate.jsa ]] \
  || { echo "no $jar, $launcher and service/target/backstate.jsa: package the service first" >&2; exit 2; }

# A 10-row trace of another demo unit than the one the archive was written from (the training
# trace is service/src/launcher/training-trace.csv, RCX-85159's first 10 rows).
model=test-data/demo/models/reefer-40.v1.json
trace="$OUT/solve-start-trace.csv"
head -n 11 test-data/demo/traces/RCX-12471.csv >"$trace"

# The launcher without its archive: the same script and jar from a folder with no backstate.jsa.
bare="$(mktemp -d)"
trap 'rm -rf "$bare"' EXIT
cp "$launcher" "$bare/backstate"
ln -s "$PWD/$jar" "$bare/backstate.jar"

# -Xshare:on turns an archive the JVM would silently ignore into an error: the figures below are
# only worth reading when this passes.
BACKSTATE_JAVA_OPTS=-Xshare:on "$launcher" --help >/dev/null \
  || { echo "the JVM refuses service/target/backstate.jsa (stale? another JVM?): package again" >&2; exit 2; }

# "archive only": the archive with the JVM's default settings, to show what each part gives. The
# archive serves the jar by the path it was written for, the launcher's resolved folder.
archive_only="java -XX:SharedArchiveFile=$(pwd -P)/service/target/backstate.jsa -Xlog:disable -Xlog:all=warning,cds*=off:stderr -jar $(pwd -P)/$jar"
names=("java -jar (baseline)" "launcher, no archive (quick-start settings only)" "archive only (JVM defaults)"
  "launcher + archive (what users run)" "JVM alone: java -version")
commands=("java -jar $jar" "$bare/backstate" "$archive_only" "$launcher" "")
floor=4
solve_args=(solve --model "$model" --trace "$trace")
java -jar "$jar" "${solve_args[@]}" >"$OUT/solve-start-expected.json"

declare -A walls cpus
run_once() { # case index -> appends wall and CPU seconds
  local i=$1 start end
  start=$(date +%s%N)
  if [[ $i -eq $floor ]]; then
    /usr/bin/time -f '%U %S' -o "$OUT/solve-start-time.txt" java -version 2>/dev/null
  else
    # shellcheck disable=SC2086 # the command is meant to split
    /usr/bin/time -f '%U %S' -o "$OUT/solve-start-time.txt" ${commands[$i]} "${solve_args[@]}" >"$OUT/solve-start-got.json"
    cmp -s "$OUT/solve-start-expected.json" "$OUT/solve-start-got.json" \
      || { echo "${names[$i]}: output differs from the baseline's" >&2; exit 1; }
  fi
  end=$(date +%s%N)
  walls[$i]+="$(awk -v ns=$((end - start)) 'BEGIN { printf "%.4f ", ns / 1e9 }')"
  cpus[$i]+="$(awk '{ printf "%.2f ", $1 + $2 }' "$OUT/solve-start-time.txt")"
}
median() { tr ' ' '\n' | grep . | sort -g | awk '{ v[NR] = $1 } END { print (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2 }'; }
fastest() { tr ' ' '\n' | grep . | sort -g | head -n 1; }

{
  echo "load average at start: $(cut -d' ' -f1-3 /proc/loadavg) ($(nproc) cores); $(java -version 2>&1 | head -n 1)"
  echo "whole-process solve of a 10-row trace ($trace), $RUNS runs a case, cases interleaved"
} | tee "$OUT/solve-start.md" >&2
for ((round = 0; round < RUNS; round++)); do
  for i in "${!names[@]}"; do run_once "$i"; done
done

baseline=$(median <<<"${walls[0]}")
{
  echo
  echo "| case | median wall s | fastest s | median CPU s | baseline / case | ≤ $TARGET_SECONDS s |"
  echo "|---|---|---|---|---|---|"
  for i in "${!names[@]}"; do
    wall=$(median <<<"${walls[$i]}")
    awk -v n="${names[$i]}" -v w="$wall" -v f="$(fastest <<<"${walls[$i]}")" -v c="$(median <<<"${cpus[$i]}")" \
      -v b="$baseline" -v t="$TARGET_SECONDS" -v floor=$((i == floor)) \
      'BEGIN { printf "| %s | %.3f | %.3f | %.2f | %.2f× | %s |\n", n, w, f, c, b / w, floor ? "(floor)" : (w <= t ? "met" : "NOT met") }'
  done
  echo
  product=$(median <<<"${walls[3]}")
  awk -v w="$product" -v b="$baseline" -v t="$TARGET_SECONDS" 'BEGIN { printf "target: whole-process solve ≤ %s s with the launcher: median %.3f s, %s (baseline %.3f s, %.2f× faster)\n", t, w, (w <= t ? "met" : "NOT met"), b, b / w }'
  echo "load average at end: $(cut -d' ' -f1-3 /proc/loadavg)"
  awk -v l="$(cut -d' ' -f1 /proc/loadavg)" -v c="$(nproc)" 'BEGIN { if (l > 0.5 * c) print "warning: the machine was busy (load above half the cores): wall times are inflated; CPU times less so" }'
} | tee -a "$OUT/solve-start.md"
