#!/usr/bin/env python3
# Where the writer's time goes (bench/README.md, "Ingest"): replays, offline, the statements the
# SQLite writer thread runs for each trace (the post, the claim, the completion with its fleet rows),
# as named in service/src/main/java/backstate/store (SqlSubmissions, SqlJobs, SqlEstimates, SqlFleet,
# SqlFleetTotals) at the commit that added this script, over a copy of a database the ingest bench
# filled (KEEP_WORK=1 bash bench/load/ingest.sh keeps it). Python's sqlite3, WAL, synchronous=FULL,
# foreign keys on, as the service opens it. Prints each statement's thread CPU and wall time per
# trace, COMMIT's, and the WAL frames written per trace, with the load average before and after.
#   python3 bench/load/writer_statements.py /tmp/backstate-load.XXXX/load.db
#   SOLO=1: one transaction per write (what a quiet server does: batches of 1.2 writes);
#   default: PER (4) posts, one claim and the previous completions share a transaction (a busy one).
#   IDS=ordered: time-ordered row IDs (RFC 9562 version 7) instead of random ones (version 4).
# Checkpoints run outside the timed statements (the service runs them on another thread), but the
# writer-thread total includes them and Python's own overhead: read the per-statement lines.
import sqlite3, time, uuid, os, sys, shutil, collections
SRC, DB = sys.argv[1], os.path.join(os.environ.get("TMPDIR", "/tmp"), "writer-statements.db")
N = int(os.environ.get("N", "3000")); PER = int(os.environ.get("PER", "4"))
IDS = os.environ.get("IDS", "random"); CACHE = os.environ.get("CACHE")
print(f"load average before: {' '.join(open('/proc/loadavg').read().split()[:3])}")
for s in ("", "-wal", "-shm"):
    if os.path.exists(DB + s): os.remove(DB + s)
shutil.copy(SRC, DB)
c = sqlite3.connect(DB, isolation_level=None)
c.execute("pragma journal_mode=wal"); c.execute("pragma synchronous=FULL"); c.execute("pragma foreign_keys=ON")
if CACHE: c.execute(f"pragma cache_size={CACHE}")
c.execute("pragma wal_checkpoint(TRUNCATE)")
tr = c.execute("select unit_id, family, version, samples, window_start, window_end, payload from traces limit 1").fetchone()
est = c.execute("select chi2_per_dof, flags, summary_json, id from estimates limit 1").fetchone()
states = c.execute("select state, value, standard_error, lower, upper from estimate_states where estimate_id=?", (est[3],)).fetchall()
chans = c.execute("select channel, rms from estimate_channels where estimate_id=?", (est[3],)).fetchall()
units = [r[0] for r in c.execute("select unit_id from unit_latest")]
fam, ver = tr[1], tr[2]
cpu = collections.Counter(); cnt = collections.Counter(); wall = collections.Counter()
def ex(name, sql, args=()):
    t0 = time.thread_time(); w0 = time.perf_counter()
    r = c.execute(sql, args).fetchall()
    cpu[name] += time.thread_time() - t0; wall[name] += time.perf_counter() - w0; cnt[name] += 1
    return r
seq = [0]
def newid():
    if IDS == "random": return str(uuid.uuid4())
    seq[0] += 1  # time-ordered: 48-bit ms + counter, UUID-shaped
    ms = int(time.time() * 1000)
    h = f"{ms:012x}7{seq[0] & 0xfff:03x}{(0x8000 | (seq[0] >> 12 & 0x3fff)):04x}{uuid.uuid4().hex[:12]}"
    return f"{h[:8]}-{h[8:12]}-{h[12:16]}-{h[16:20]}-{h[20:]}"
BIN = lambda col: f"CASE WHEN {col} <= 0 THEN -1000000 WHEN {col} > 1e300 THEN 1000000 ELSE CAST(floor(256 * ln({col})) AS BIGINT) END"
def addbin(table, key, col, src):
    return (f"INSERT INTO {table} ({key}, bin, estimates, low_value) SELECT {key}, {BIN(col)}, 1, {col} FROM {src} AND {col} IS NOT NULL"
            f" ON CONFLICT ({key}, bin) DO UPDATE SET estimates = {table}.estimates + 1, low_value = CASE WHEN excluded.low_value < {table}.low_value THEN excluded.low_value ELSE {table}.low_value END")
LATEST = "unit_id, family, version, estimate_id, window_start, window_end, received_at, created_at, chi2_per_dof, flags"
def latest(table, key, setv):
    return (f"INSERT INTO {table} ({LATEST}) SELECT unit_id, family, version, id, window_start, window_end, received_at, created_at, chi2_per_dof, flags FROM estimates WHERE id = ?"
            f" ON CONFLICT ({key}) DO UPDATE SET {setv} estimate_id = excluded.estimate_id, window_start = excluded.window_start, window_end = excluded.window_end, received_at = excluded.received_at, created_at = excluded.created_at, chi2_per_dof = excluded.chi2_per_dof, flags = excluded.flags"
            f" WHERE (excluded.window_start, excluded.created_at, excluded.estimate_id) > ({table}.window_start, {table}.created_at, {table}.estimate_id)")
def post(i):
    ex("savepoint", "SAVEPOINT request")
    ex("count_queued", "SELECT queued FROM queue_length WHERE id = 1")
    ex("find_version", "SELECT * FROM model_versions WHERE family = ? AND version = ?", (fam, ver))
    tid = newid(); now = int(time.time()*1000)
    ex("insert_trace", "INSERT INTO traces (id, unit_id, family, version, received_at, samples, window_start, window_end, payload) VALUES (?,?,?,?,?,?,?,?,?)",
       (tid, units[i % len(units)], fam, ver, now, tr[3], 1e6 + i, 1e6 + i + 100, tr[6]))
    jid = newid()
    ex("insert_job", "INSERT INTO jobs (id, kind, state, trace_id, params_json, attempt, created_at, progress_done, progress_total) VALUES (?, 'estimate', 'queued', ?, NULL, 0, ?, 0, 0)", (jid, tid, now))
    ex("release", "RELEASE request")
    return tid, jid
def claim(k):
    now = int(time.time()*1000)
    ex("savepoint", "SAVEPOINT request")
    r = ex("claim", "UPDATE jobs SET state = 'running', attempt = attempt + 1, started_at = ?, lease_expires_at = ? WHERE id IN (SELECT id FROM jobs WHERE state = 'queued' ORDER BY created_at, id LIMIT ?) RETURNING id, kind, trace_id, params_json, attempt", (now, now + 60000, k))
    ex("release", "RELEASE request")
    return r
def complete(i, jid, tid, att):
    now = int(time.time()*1000)
    ex("savepoint", "SAVEPOINT request")
    ex("complete_job", "UPDATE jobs SET state = 'succeeded', finished_at = ?, result_json = ? WHERE id = ? AND state = 'running' AND attempt = ?", (now, None, jid, att))
    eid = newid(); unit = units[i % len(units)]
    ex("insert_estimate", "INSERT INTO estimates (id, job_id, trace_id, unit_id, family, version, created_at, received_at, window_start, window_end, chi2_per_dof, flags, summary_json) VALUES (?,?,?,?,?,?,?,(SELECT received_at FROM traces WHERE id = ?),?,?,?,?,?)",
       (eid, jid, tid, unit, fam, ver, now, tid, 1e6 + i, 1e6 + i + 100, est[0], est[1], est[2]))
    for s in states:
        ex("estimate_states", "INSERT INTO estimate_states (estimate_id, state, value, standard_error, lower, upper) VALUES (?,?,?,?,?,?) ON CONFLICT DO NOTHING", (eid,) + tuple(s))
    for ch, rms in chans:
        ex("estimate_channels", "INSERT INTO estimate_channels (family, version, channel, window_start, estimate_id, received_at, rms) VALUES (?,?,?,?,?,(SELECT received_at FROM estimates WHERE id = ?),?) ON CONFLICT DO NOTHING", (fam, ver, ch, 1e6 + i, eid, eid, rms))
        ex("rms_bin", addbin("fleet_rms_bins", "family, version, channel", "rms", "estimate_channels WHERE family = ? AND version = ? AND channel = ? AND window_start = ? AND estimate_id = ?"), (fam, ver, ch, 1e6 + i, eid))
    ex("unit_latest", latest("unit_latest", "family, unit_id", "version = excluded.version,"), (eid,))
    ex("unit_version_latest", latest("unit_version_latest", "family, version, unit_id", ""), (eid,))
    ex("fleet_unit_estimates", "INSERT INTO fleet_unit_estimates (family, version, unit_id, estimates) SELECT family, version, unit_id, 1 FROM estimates WHERE id = ? ON CONFLICT (family, version, unit_id) DO UPDATE SET estimates = fleet_unit_estimates.estimates + 1", (eid,))
    ex("chi2_bin", addbin("fleet_chi2_bins", "family, version", "chi2_per_dof", "estimates WHERE id = ?"), (eid,))
    ex("release", "RELEASE request")
walsize = lambda: os.path.getsize(DB + "-wal") if os.path.exists(DB + "-wal") else 0
frames = 0; pending = []; i = 0
BACKLOG = int(os.environ.get("BACKLOG", "0"))
if BACKLOG:
    c.execute("BEGIN IMMEDIATE")
    for b in range(BACKLOG): post(100000 + b)
    c.execute("COMMIT"); cpu.clear(); cnt.clear(); wall.clear()
t_all = time.thread_time(); w_all = time.perf_counter()
SOLO = os.environ.get("SOLO") == "1"
def tx(fn, *a):
    ex("begin", "BEGIN IMMEDIATE"); r = fn(*a)
    global frames
    w0 = walsize(); ex("commit", "COMMIT"); frames += (walsize() - w0) / (4096 + 24)
    if walsize() > 4_000_000: c.execute("pragma wal_checkpoint(TRUNCATE)")
    return r
while SOLO and i < N:
    tid, jid = tx(post, i); i += 1
    for jid2, kind, tid2, params, att in tx(claim, 1): tx(complete, i, jid2, tid2, att)
while not SOLO and i < N:
    ex("begin", "BEGIN IMMEDIATE")
    for j in pending: complete(*j)
    pending = []
    for _ in range(PER):
        post(i); i += 1
    for jid, kind, tid, params, att in claim(PER):
        pending.append((i, jid, tid, att))
    w0 = walsize()
    ex("commit", "COMMIT")
    frames += (walsize() - w0) / (4096 + 24)
    if walsize() > 4_000_000:  # like the auto checkpoint at 1000 pages, out of the timed statements
        c.execute("pragma wal_checkpoint(TRUNCATE)")
tot = time.thread_time() - t_all
print(f"SOLO={SOLO} IDS={IDS} CACHE={CACHE} N={N} PER={PER}: writer-thread CPU {1000*tot/N:.3f} ms/trace, wall {1000*(time.perf_counter()-w_all)/N:.3f} ms/trace, WAL frames/trace {frames/N:.1f}")
print(f"{'statement':22s} {'calls':>6s} {'CPU us/trace':>12s} {'share':>6s} {'wall us/trace':>13s}")
for k, v in sorted(cpu.items(), key=lambda kv: -kv[1]):
    print(f"{k:22s} {cnt[k]:6d} {1e6*v/N:12.1f} {100*v/tot:5.1f}% {1e6*wall[k]/N:13.1f}")
print(f"load average after: {' '.join(open('/proc/loadavg').read().split()[:3])}")
for s in ("", "-wal", "-shm"):
    if os.path.exists(DB + s): os.remove(DB + s)
