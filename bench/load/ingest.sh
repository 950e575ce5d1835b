#!/usr/bin/env bash
# Ingest (bench/README.md, "Ingest"): 32 clients post small traces (1 000 samples, demo reefer
# model v1, n = 4) to one server started cold on a fresh SQLite file, with the project's load driver.
#  1. Unpaced from the cold start: as fast as the service takes them, TRACES posts (default
#     6 000); the rate is stored AND solved end to end (last job finished), beside its target
#     (600/s) and baseline (342-387/s), with the server's GC, JIT, writer and CPU by thread group
#     over the run. UNPACED_RUNS=2 repeats it on the same, now warm, server.
#  2. Warm-up, printed but not counted, in the same driver JVM as step 3 and running straight
#     into it: rounds of one window paced at RATE until one sees fewer than QUIET_JIT (default
#     200) JIT compilations in the server, at most WARMUP_ROUNDS (default 4). On 2 cores the
#     server's compiler threads take a third of a core or more for a minute after a cold start,
#     and a fresh driver JVM spends its own first seconds compiling: start-up, not steady state.
#  3. WINDOWS (default 5) consecutive windows of WINDOW_SECONDS (default 20) paced at RATE
#     (default 300 traces/s offered, open loop: latency counts from each post's due time). Each
#     window prints p50/p99/max beside the target (p99 <= 50 ms) and the baseline windows
#     (121, 147, 91 ms), and what else happened in it: the server's GC pauses, safepoints and JIT
#     compilations (from its -Xlog), the writer's queue wait, statements and COMMIT (fsync) and
#     the background checkpoints (from /metrics), the server's CPU by thread group, the driver's
#     own GC and the load average.
# The driver posts over kept-alive plain sockets (LeanPoster) by default: it shares the 2 cores with
# the server, and java.net.http costs it ~2.4 ms of CPU a post. DRIVER_CLIENT=jdk uses the JDK client.
# SERVER_GC: the server's heap and collector flags; by default the heap is fixed at SERVER_HEAP
# (-Xms = -Xmx), as bench/README.md "Ingest" advises for deployment: G1 then never shrinks the
# heap under a steady load (it went down to 137-207 MB of 1 GB), which made young collections
# 4-5x as frequent: 15-20 in a 20 s window at 300/s, against 4 with the heap fixed.
source "$(dirname "$0")/common.sh"
RATE="${RATE:-300}"
build
JVM_LOG="$WORK/server-jvm.log"
SERVER_GC="${SERVER_GC--Xms${SERVER_HEAP:-1g}}"
SERVER_JAVA_OPTS="${SERVER_JAVA_OPTS:-} $SERVER_GC -Xlog:gc,safepoint,jit+compilation=debug:file=$JVM_LOG:time,tags"
start_server "${SERVER_HEAP:-1g}"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg) (other work on this machine skews every figure)"
common=(--clients "${CLIENTS:-32}" --samples "${SAMPLES:-1000}" --client "${DRIVER_CLIENT:-lean}"
  --server-pid "$SERVER_PID" --jvm-log "$JVM_LOG")
# UNPACED_RUNS=2: the unpaced run again on the same server, warm (only the first is from a cold start).
for run in $(seq 1 "${UNPACED_RUNS:-1}"); do
  echo "== 1. unpaced, run $run$([ "$run" = 1 ] && echo ", from a cold start")"
  time driver ingest "${common[@]}" --traces "${TRACES:-6000}" --target-rate 600 --baseline-rate 342,387
done
echo "== 2. warm-up, then 3. ${WINDOWS:-5} windows of ${WINDOW_SECONDS:-20} s at $RATE traces/s offered"
driver ingest "${common[@]}" --rate "$RATE" --windows "${WINDOWS:-5}" --window-seconds "${WINDOW_SECONDS:-20}" \
  --warmup-rounds "${WARMUP_ROUNDS:-4}" --quiet-jit "${QUIET_JIT:-200}" --target-p99-ms 50 --baseline-p99-ms 121,147,91
# RATES="50 ...": extra paced runs of ~PACED_SECONDS (default 20) each after the windows, reported whole.
for rate in ${RATES:-}; do
  echo "== extra run paced at $rate traces/s"
  driver ingest "${common[@]}" --rate "$rate" --traces "$((rate * ${PACED_SECONDS:-20}))"
done
server_metric backstate_solve_duration_seconds
server_metric backstate_job_duration_seconds
server_cpu
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"
stop_server
