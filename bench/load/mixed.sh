#!/usr/bin/env bash
# (b) 32 clients, half trace posts and half reads (latest estimate, history page, job status),
# for SECONDS_ (default 60, ceiling 600): throughput, latency, errors, lost traces.
source "$(dirname "$0")/common.sh"
build
start_server "${SERVER_HEAP:-1g}"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg) (other work on this machine skews every figure)"
time driver mixed --clients "${CLIENTS:-32}" --seconds "${SECONDS_:-60}" --samples "${SAMPLES:-1000}"
server_cpu
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"
stop_server
