"""heftd end to end: a mixed-plant feed sent over loopback TCP must give the
very events `heft replay` gives for the same file, and every pack as a sample.

Run: python3 test_daemon_replay.py --build-dir B --source-dir S  (exit 0 = pass)

Steps: copy config/demo.yaml (baseline_packs 200, silence_s 20; an inline
config of the same schema when it is absent), start B/daemon/heftd on an
ephemeral port, send S/demo_feeds/mixed-plant.csv (or a generated mixed feed
when that file is absent) in random-size chunks, close, wait for the session
summary and for every sample to be in SQLite, SIGTERM, expect exit 0 within
10 s, then compare the database with `heft replay --events-out`.

Silence: heftd's 1 s tick raises `silence` for a line whose last record
*arrived* more than silence_s ago by the wall clock, which replay cannot see.
The whole run takes a few seconds, far below silence_s = 20 s, so both must
give the same events; a machine stalled for 20 s would break that.
"""

import json
import os
import random
import re
import shutil
import sqlite3
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402

LINES_YAML = """\
  - id: oats-1
    product: Rolled oats 500 g
    nominal_g: 500
    target_g: 503
    heads: 12
  - id: oats-2
    product: Rolled oats 1 kg
    nominal_g: 1000
    target_g: 1004
    heads: 12
  - id: honey-2
    product: Clover honey 340 g jar
    nominal_g: 340
    target_g: 343
    heads: 4
"""


def feed_path(args, tmp):
    path = os.path.join(args.source_dir, "demo_feeds", "mixed-plant.csv")
    if os.path.exists(path):
        print("feed: %s" % path)
        return path
    # The demo feed is not in the tree yet: make a mixed feed with the simulator.
    path = os.path.join(tmp, "mixed.csv")
    cmd = [os.path.join(args.build_dir, "tools", "heft"), "feed", "--scenario",
           "drift@oats-1,hunting@honey-2,step@oats-2", "--seed", "7", "--out", path]
    subprocess.run(cmd, check=True)
    print("feed: generated with: %s" % " ".join(cmd[1:]))
    return path


def data_records(data):
    """Data records as StreamIngest counts them: non-blank records at LF, CR or
    CRLF, the first one skipped when it is the native header."""
    records = [r for r in re.split(rb"\r\n|\r|\n", data) if r.strip()]
    if records and records[0].startswith(b"time,line,head,weight"):
        records = records[1:]
    return len(records)


def replay_events(args, feed, config, tmp):
    out = os.path.join(tmp, "replay.jsonl")
    cmd = [os.path.join(args.build_dir, "tools", "heft"), "replay", feed, "--config", config,
           "--events-out", out]
    result = subprocess.run(cmd, capture_output=True, text=True)
    h.check(result.returncode == 0, "heft replay exits 0 (got %d: %s)" %
            (result.returncode, result.stderr.strip()[:300]))
    events = []
    with open(out, encoding="utf-8") as f:
        for line in f:
            if line.strip():
                e = json.loads(line)
                events.append((e["event"], e["kind"], e["line"], e["at"], e["onset"], e["end"]))
    return events


def body(args):
    tmp = tempfile.mkdtemp(prefix="heftd-replay-")
    db = os.path.join(tmp, "heft.db")
    config = os.path.join(tmp, "heftd.yaml")
    demo = os.path.join(args.source_dir, "config", "demo.yaml")
    if os.path.exists(demo):
        shutil.copyfile(demo, config)  # --db and --port override its storage and listen
        print("config: copy of %s" % demo)
    else:
        h.write_config(config, os.path.join(tmp, "unused.db"), lines_yaml=LINES_YAML)
        print("config: inline (config/demo.yaml not found)")
    feed = feed_path(args, tmp)
    with open(feed, "rb") as f:
        data = f.read()
    want_samples = data_records(data)
    print("feed: %d bytes, %d data records" % (len(data), want_samples))

    check_config = subprocess.run(
        [os.path.join(args.build_dir, "daemon", "heftd"), "--config", config, "--check-config"],
        capture_output=True, text=True)
    h.check(check_config.returncode == 0 and "config OK" in check_config.stdout,
            "heftd --check-config accepts the test config")

    daemon = h.Daemon(args.build_dir, config, db)
    try:
        address, port = daemon.wait_listening()
        h.check(address == "127.0.0.1" and port > 0,
                "heftd logs 'listening on 127.0.0.1:PORT' with the real port (%d)" % port)
        h.check(daemon.count(r"listening on") == 1, "exactly one 'listening on' line")

        # Random-size chunks over a real loopback socket.
        rng = random.Random(20260302)
        sock = daemon.connect()
        local_port = sock.getsockname()[1]
        t0 = time.monotonic()
        pos = 0
        chunks = 0
        while pos < len(data):
            n = rng.choice([1, 7, 100, 1500, 4096, 65536, rng.randint(1, 20000)])
            sock.sendall(data[pos:pos + n])
            pos += n
            chunks += 1
        sock.close()
        summary = daemon.wait_for(
            r"session tcp:127\.0\.0\.1:%d ended \(closed by peer\): (\d+) records: (\d+) accepted, "
            r"(\d+) malformed.* in ([\d.]+) s \((\d+) records/s\)" % local_port, timeout=60)
        t1 = time.monotonic()
        h.check(summary is not None, "session summary logged after the peer closed")
        h.check(int(summary.group(1)) == want_samples and int(summary.group(2)) == want_samples
                and int(summary.group(3)) == 0,
                "session counted %s records, %s accepted, %s malformed (want %d, %d, 0)" %
                (summary.group(1), summary.group(2), summary.group(3), want_samples, want_samples))
        print("sent %d bytes in %d chunks; client-side %.3f s from connect to summary line = "
              "%.0f records/s; daemon-side %s s = %s records/s" %
              (len(data), chunks, t1 - t0, want_samples / (t1 - t0), summary.group(4),
               summary.group(5)))

        got = h.wait_samples(db, want_samples)
        h.check(got == want_samples,
                "periodic flush stored all %d samples before shutdown (got %d)" %
                (want_samples, got))

        code = daemon.terminate(10)
        h.check(code == 0, "SIGTERM: heftd exits 0 within 10 s (got %s)" % code)
        h.check(daemon.wait_for(r"heftd stopped: %d records" % want_samples, 1) is not None,
                "shutdown summary line logged")
    except BaseException:
        daemon.dump_log()
        raise
    finally:
        daemon.kill()

    con = sqlite3.connect(db)
    h.check(con.execute("PRAGMA integrity_check").fetchone()[0] == "ok",
            "PRAGMA integrity_check = ok")
    samples = con.execute("SELECT COUNT(*) FROM samples").fetchone()[0]
    h.check(samples == want_samples, "samples in db = data records in feed (%d = %d)" %
            (samples, want_samples))
    stored = [tuple(r) for r in con.execute(
        "SELECT transition, kind, line, record_index, onset_index, end_index FROM events "
        "ORDER BY id")]
    con.close()

    replayed = replay_events(args, feed, config, tmp)
    kinds = sorted({e[1] for e in replayed})
    print("replay: %d events, kinds %s" % (len(replayed), ", ".join(kinds)))
    h.check(len(replayed) > 0, "the feed gives at least one event (else the comparison is empty)")
    if stored != replayed:
        # A common cause while the core changes: heftd and heft linked against
        # different builds of libheft_core.a.
        core = os.path.join(args.build_dir, "lib", "libheft_core.a")
        for exe in (os.path.join("daemon", "heftd"), os.path.join("tools", "heft")):
            path = os.path.join(args.build_dir, exe)
            if os.path.exists(core) and os.path.getmtime(path) < os.path.getmtime(core):
                print("NOTE: %s is older than libheft_core.a: rebuild it before trusting "
                      "this comparison" % exe)
        for i, (a, b) in enumerate(zip(stored, replayed)):
            if a != b:
                print("first difference at event %d: daemon %s, replay %s" % (i, a, b))
                break
    h.check(stored == replayed, "daemon events (%d) equal replay events (%d), in order, on "
            "transition, kind, line, record index, onset, end" % (len(stored), len(replayed)))
    alerts = daemon.count(r" ALERT ") + daemon.count(r" CLEAR ")
    h.check(alerts == len(replayed), "one ALERT/CLEAR log line per event (%d)" % alerts)


if __name__ == "__main__":
    h.run_main(body)
