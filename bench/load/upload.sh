#!/usr/bin/env bash
# Large uploads: for 10^5, 10^6 and 2*10^6 samples (demo-like CSV, about 36 bytes a row; FORMAT=json
# for the JSON body), each against a fresh server: its resident memory above idle (idle = after
# start-up and a forced GC; peak during post, parse, store and solve, from VmHWM; and after a forced
# GC), the post's time to 202, the server's own solve time, and, in the driver's JVM on the same
# bytes, the warm parse (TraceReader.readCsvColumns, what the intake runs; wall time, and the CPU
# time of its two threads), the assembly of the row-major trace, the solve, and the live heap of parse + stored encoding. Prints the
# targets (RSS peak <= 150 MB above idle at 10^6; parse <= solve), the baseline (main before the
# streaming intake: RSS 628 MB at 10^6, parse 0.37 s) as ratios, the scaling ratios, and where the
# server's committed memory went (NMT).
#
#   bench/load/upload.sh                       # about 5 minutes on 2 cores
#   SIZES=1000000 RUNS=3 FORMAT=json bench/load/upload.sh
#   OFFLINE_RUNS=41 bench/load/upload.sh      # offline parse, assembly and solve runs a size (default 31; medians of all after the first 11)
#   SERVER_HEAP=300m bench/load/upload.sh      # the server's -Xmx (default 1g, see bench/README.md "Uploads")
#   OFFLINE_JAVA_OPTS=-XX:TieredStopAtLevel=1 bench/load/upload.sh   # the offline parse and solve on the
#                                              # service's compiler (default: the JVM's, as the baseline was)
source "$(dirname "$0")/common.sh"
# SERVER_JAR: another build's jar for the server (e.g. main before this change), same driver (common.sh).
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg)"
build
ROWS="$WORK/rows.txt"
: >"$ROWS"
# G1 (the JDK's default) with a fixed maximum heap and a small initial one, so the figure does not
# follow the machine's RAM (the JDK sizes the initial heap at 1/64 of it, and the Docker image's
# -XX:MaxRAMPercentage=75 gives an 18 GB maximum on a 24 GB machine): the heap grows from 64 MB only
# as far as G1 needs for the upload. NMT says where the committed memory goes.
export SERVER_JAVA_OPTS="${SERVER_JAVA_OPTS:--XX:+UseG1GC -Xms64m -XX:NativeMemoryTracking=summary}"
for size in ${SIZES:-100000 1000000 2000000}; do
  start_server "${SERVER_HEAP:-1g}"
  jcmd "$SERVER_PID" VM.native_memory baseline >/dev/null
  # shellcheck disable=SC2086 # OFFLINE_JAVA_OPTS may hold several options
  java ${OFFLINE_JAVA_OPTS:-} -Xmx"${DRIVER_HEAP:-3g}" -Dbackstate.testData="$ROOT/test-data" -cp "$CP" backstate.reliability.UploadBench \
    --base "$BASE" --db "$DB" --pid "$SERVER_PID" --sizes "$size" --runs "${RUNS:-4}" --offline-runs "${OFFLINE_RUNS:-31}" --format "${FORMAT:-csv}" \
    | tee -a "$ROWS" | grep -v '^ROW'
  echo "  server memory by NMT category, committed after the last upload against start-up (before a GC):"
  jcmd "$SERVER_PID" VM.native_memory summary.diff scale=MB | grep -E '^-|Total' | grep -E '[+-][0-9]+MB' | sed 's/^/   /'
  server_cpu
  stop_server
done
python3 - "$ROWS" "${FORMAT:-csv}" <<'PY'
import sys
rows = [list(map(float, l.split()[1:])) for l in open(sys.argv[1]) if l.startswith('ROW ')]
print()
print(f"| samples | {sys.argv[2]} MB | offline parse s | parse CPU s (both threads) | assemble s | offline solve s | parse / solve"
      " | live heap parse+encode MB | post→202 s | job done s | server solve s | idle RSS MB | RSS peak above idle MB"
      " | warm run's peak above its own idle MB | RSS above idle after GC MB |")
print("|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|")
for n, mb, parse, solve, live, post, job, ssolve, idle, peak, peakmax, after, cpu, assemble in rows:
    print(f"| {n:.0f} | {mb:.1f} | {parse:.3f} | {cpu:.3f} | {assemble:.3f} | {solve:.3f} | {parse/solve:.2f} | {live:.0f}"
          f" | {post:.3f} | {job:.3f} | {ssolve:.3f} | {idle:.0f} | {peakmax:.0f} | {peak:.0f} | {after:.0f} |")
for a, b in zip(rows, rows[1:]):
    print(f"scaling {a[0]:.0f} -> {b[0]:.0f} (x{b[0]/a[0]:.0f} samples): offline parse x{b[2]/a[2]:.2f}, post->202 x{b[5]/a[5]:.2f},"
          f" server solve x{b[7]/a[7]:.2f}, RSS peak above idle x{b[10]/a[10]:.2f}, live heap x{b[4]/a[4]:.2f}")
for n, mb, parse, solve, live, post, job, ssolve, idle, peak, peakmax, after, cpu, assemble in rows:
    if n == 1000000:
        print(f"target at 10^6: RSS peak above idle {peakmax:.0f} MB against <= 150 MB: {peakmax/150:.2f} of the"
              f" target ({'met' if peakmax <= 150 else 'NOT met'}); against the baseline's 628 MB: {peakmax/628:.2f}x")
        print(f"target at 10^6: parse {parse:.3f} s against solve {solve:.3f} s: parse / solve {parse/solve:.2f}"
              f" ({'met' if parse <= solve else 'NOT met'}); against the baseline's 0.37 s parse: {parse/0.37:.2f}x")
        print(f"  the parse's CPU time {cpu:.3f} s, its two threads together (what load disturbs least);"
              f" parse + assembly of the row-major trace (the offline solve's input; the intake stores the columns):"
              f" {(parse+assemble)/solve:.2f} of the solve")
PY
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"
