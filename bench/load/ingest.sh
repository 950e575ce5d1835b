#!/usr/bin/env bash
# (a) 32 clients post small traces (1 000 samples, demo reefer model v1, n = 4): first as fast as
# the service takes them (the sustained rate, stored AND solved end to end), then open loop at
# each rate in RATES (default "300 50" traces/s; latency counted from each post's due time).
# Bounded: TRACES posts per run (default 6 000, ceiling 100 000), then the queue drains.
# UNPACED_RUNS=2 repeats the unpaced run on the same server: the first includes the JIT's
# warm-up (a third of the server's CPU in its first 25 s), the second is the warm rate.
# The driver posts over kept-alive plain sockets (LeanPoster) by default: it shares the 2 cores with
# the server, and java.net.http costs it ~2.4 ms of CPU a post. DRIVER_CLIENT=jdk uses the JDK client.
source "$(dirname "$0")/common.sh"
build
start_server "${SERVER_HEAP:-1g}"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg) (other work on this machine skews every figure)"
for _ in $(seq 1 "${UNPACED_RUNS:-1}"); do
  time driver ingest --clients "${CLIENTS:-32}" --traces "${TRACES:-6000}" --samples "${SAMPLES:-1000}" --client "${DRIVER_CLIENT:-lean}"
done
for rate in ${RATES:-300 50}; do
  # A paced run lasts TRACES / rate seconds at most; keep it near 20 s.
  time driver ingest --clients "${CLIENTS:-32}" --traces "$((rate * ${PACED_SECONDS:-20}))" --samples "${SAMPLES:-1000}" --rate "$rate" --client "${DRIVER_CLIENT:-lean}"
done
server_metric backstate_solve_duration_seconds
server_metric backstate_job_duration_seconds
server_cpu
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"
stop_server
