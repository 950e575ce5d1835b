#!/usr/bin/env bash
# (b) After WARMUP_SECONDS (default 20) of the same mix, printed but not counted (the server's JIT
# settles; the cold start is what bench/load/ingest.sh's unpaced run measures), 32 clients for
# SECONDS_ (default 60, ceiling 600): half post traces, a quarter read a unit's
# latest estimate, a quarter read the fleet summary over all time (GET /v1/fleet/reefer-40/summary,
# a dashboard's front page). Prints each kind's throughput and latency, errors, lost traces, and
# the targets of issue 15: posts p99 <= 100 ms and no error under the summary readers.
# The driver talks over kept-alive plain sockets (LeanPoster), as bench/load/ingest.sh does: it shares
# the 2 cores with the server, and java.net.http took a quarter of them. DRIVER_CLIENT=jdk uses the JDK client.
source "$(dirname "$0")/common.sh"
build
# As bench/load/ingest.sh: a fixed heap, and the server's GC, safepoints and JIT logged, so the run
# prints what a slow answer may have waited for (GC, checkpoints, the writer, JIT, CPU by thread group).
JVM_LOG="$WORK/server-jvm.log"
SERVER_JAVA_OPTS="${SERVER_JAVA_OPTS:-} ${SERVER_GC--Xms${SERVER_HEAP:-1g}} -Xlog:gc,safepoint,jit+compilation=debug:file=$JVM_LOG:time,tags"
start_server "${SERVER_HEAP:-1g}"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg) ($(nproc) CPUs; other work on this machine skews every figure)"
time driver mixed --clients "${CLIENTS:-32}" --seconds "${SECONDS_:-60}" --samples "${SAMPLES:-1000}" --client "${DRIVER_CLIENT:-lean}" \
  --warmup-seconds "${WARMUP_SECONDS:-20}" --server-pid "$SERVER_PID" --jvm-log "$JVM_LOG"
server_cpu
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"
stop_server
