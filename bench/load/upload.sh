#!/usr/bin/env bash
# Large uploads: for 10^5, 10^6 and 2*10^6 samples (demo-like CSV, 36 bytes a row), the server's
# resident memory above idle (peak during post, parse, store and solve; and after a forced GC),
# the post's time to 202, the server's solve time, and, in the driver's JVM on the same bytes, the
# warm parse and solve times and the live heap of parse + stored encoding. Prints the targets
# (RSS peak <= 150 MB above idle at 10^6; parse <= solve) and the baseline (main before the
# streaming intake: RSS 628 MB at 10^6, parse 0.37 s) as ratios, and the scaling ratios.
#
#   bench/load/upload.sh                       # about 3 minutes on 2 cores
#   SIZES=1000000 RUNS=3 FORMAT=json bench/load/upload.sh
#   SERVER_HEAP=300m bench/load/upload.sh      # the server's -Xmx (default 1g, see bench/README.md "Uploads")
source "$(dirname "$0")/common.sh"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg)"
build
# G1 (the JDK's default) with a fixed maximum heap, so the figure does not follow the machine's
# RAM (the Docker image's -XX:MaxRAMPercentage=75 would give 18 GB here); NMT to say where the
# committed memory goes.
SERVER_JAVA_OPTS="${SERVER_JAVA_OPTS:--XX:+UseG1GC -XX:NativeMemoryTracking=summary}" start_server "${SERVER_HEAP:-1g}"
jcmd "$SERVER_PID" VM.native_memory baseline >/dev/null
java -Xmx"${DRIVER_HEAP:-3g}" -Dbackstate.testData="$ROOT/test-data" -cp "$CP" backstate.reliability.UploadBench \
  --base "$BASE" --db "$DB" --pid "$SERVER_PID" --sizes "${SIZES:-100000,1000000,2000000}" --runs "${RUNS:-4}" \
  --format "${FORMAT:-csv}" | tee "$WORK/upload.out"
python3 - "$WORK/upload.out" <<'PY'
import re, sys
rows = [l.split('|')[1:-1] for l in open(sys.argv[1]) if re.match(r'^\| \d', l)]
for r in rows:
    n, parse, solve, post, peak = int(r[0]), float(r[2]), float(r[3]), float(r[6]), float(r[10].split(',')[0])
    if n == 1000000:
        print(f"target at 10^6: RSS peak above idle {peak:.0f} MB against <= 150 MB: {peak/150:.2f} of the target"
              f" ({'met' if peak <= 150 else 'NOT met'}); baseline 628 MB (main before this change): {peak/628:.2f}x")
        print(f"target at 10^6: parse {parse:.3f} s against solve {solve:.3f} s: parse/solve {parse/solve:.2f}"
              f" ({'met' if parse <= solve else 'NOT met'}); baseline parse 0.37 s: {parse/0.37:.2f}x;"
              f" server post->202 {post:.3f} s against the baseline's 0.37 s: {post/0.37:.2f}x")
PY
echo "server memory by NMT category, committed now against the idle baseline (after the last upload, before a GC):"
jcmd "$SERVER_PID" VM.native_memory summary.diff scale=MB | grep -E '^-|Total' | sed 's/^/  /' | head -24
server_cpu
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"
stop_server
