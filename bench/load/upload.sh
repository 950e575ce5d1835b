#!/usr/bin/env bash
# (c) One 10⁶-sample CSV upload to a server held to -Xmx300m: it must complete, in under twice
# the offline parse + solve time of the same CSV through the same code (TraceReader +
# DocumentSolver), measured here in a fresh JVM with the same heap. Two of each: the first runs
# cold (JIT warm-up included, like a fresh server's first upload), the second warm; compare the
# server's first upload with offline run 1 and its second with offline run 2.
source "$(dirname "$0")/common.sh"
build
DRIVER_HEAP=300m driver offline --samples "${SAMPLES:-1000000}"
start_server 300m
for _ in 1 2; do
  DRIVER_HEAP=1g driver upload --samples "${SAMPLES:-1000000}" --client "${DRIVER_CLIENT:-lean}"
done
server_metric backstate_solve_duration_seconds
server_metric backstate_job_duration_seconds
server_cpu
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"
stop_server
