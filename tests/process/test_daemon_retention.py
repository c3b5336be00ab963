"""heftd raw-sample retention: storage.raw_retention_days is applied from the
housekeeping tick (10 minutes after a start, then once an hour, and at the
next tick after a reload that changed it).

Run: python3 test_daemon_retention.py --build-dir B --source-dir S  (exit 0 = pass)

heftd starts with raw_retention_days: 0 (keep forever) and stores 120 packs
stamped 40 days ago and 60 stamped a minute ago: all 180 stay. A SIGHUP reload
with raw_retention_days: 30 prunes the 120 old ones at the next tick and logs
the count; the 60 recent ones and every event stay. A restart right after does
not prune at once (old-stamped demo feeds keep their samples).
"""

import os
import signal
import sqlite3
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402


def packs(first_ms, count, line):
    out = []
    for i in range(count):
        t = first_ms + i * 500
        stamp = time.strftime("%Y-%m-%dT%H:%M:%S", time.gmtime(t / 1000)) + ".%03dZ" % (t % 1000)
        out.append("%s,%s,%d,%.1f\n" % (stamp, line, i % 12, 503.0 + (i % 7) * 0.3))
    return "".join(out).encode()


def set_retention(config, days):
    with open(config, encoding="utf-8") as f:
        text = f.read()
    lines = [l for l in text.split("\n") if "raw_retention_days" not in l]
    at = lines.index("storage:") + 1
    lines.insert(at, "  raw_retention_days: %d" % days)
    with open(config, "w", encoding="utf-8") as f:
        f.write("\n".join(lines))


def body(args):
    tmp = tempfile.mkdtemp(prefix="heftd-retention-")
    db = os.path.join(tmp, "heft.db")
    config = os.path.join(tmp, "heftd.yaml")
    h.write_config(config, db)
    set_retention(config, 0)
    now_ms = int(time.time() * 1000)
    d = h.Daemon(args.build_dir, config, db)
    try:
        d.wait_listening()
        with d.connect() as sock:
            sock.sendall(b"time,line,head,weight\n")
            sock.sendall(packs(now_ms - 40 * 86_400_000, 120, "oats-1"))
            sock.sendall(packs(now_ms - 60_000, 60, "oats-1"))
        h.check(h.wait_samples(db, 180) == 180, "180 samples stored")
        time.sleep(1.5)  # a tick or two
        h.check(d.count(r"retention: pruned") == 0 and h.count_samples(db) == 180,
                "raw_retention_days 0: nothing pruned")
        con = sqlite3.connect(db)
        events = con.execute("SELECT COUNT(*) FROM events").fetchone()[0]
        con.close()

        set_retention(config, 30)
        start = len(d.lines)
        d.proc.send_signal(signal.SIGHUP)
        h.check(d.wait_for(r"reload: storage.raw_retention_days 0 -> 30", start=start)
                is not None, "the reload applies raw_retention_days at once")
        h.check(d.wait_for(r"retention: pruned 120 raw samples older than 30 days",
                           timeout=5, start=start) is not None,
                "the next tick prunes the 120 old samples and logs the count")
        h.check(h.count_samples(db) == 60, "the 60 recent samples stay")
        con = sqlite3.connect(db)
        old = con.execute("SELECT COUNT(*) FROM samples WHERE time_ms < ?",
                          (now_ms - 30 * 86_400_000,)).fetchone()[0]
        after = con.execute("SELECT COUNT(*) FROM events").fetchone()[0]
        con.close()
        h.check(old == 0, "no sample older than 30 days remains")
        h.check(after >= events, "events are kept (%d before, %d after)" % (events, after))

        with d.connect() as sock:
            sock.sendall(packs(now_ms - 50 * 86_400_000, 10, "honey-2"))
        h.check(h.wait_samples(db, 70) == 70, "old-stamped packs sent now are stored")
        h.check(d.terminate() == 0, "SIGTERM, exit 0")
    except h.Failure:
        d.dump_log()
        raise
    finally:
        d.kill()

    d = h.Daemon(args.build_dir, config, db)
    try:
        d.wait_listening()
        time.sleep(1.5)
        h.check(d.count(r"retention: pruned") == 0 and h.count_samples(db) == 70,
                "a restart does not prune at once (first prune 10 min after start)")
        h.check(d.terminate() == 0, "restart: SIGTERM, exit 0")
    except h.Failure:
        d.dump_log()
        raise
    finally:
        d.kill()


if __name__ == "__main__":
    h.run_main(body)
