"""heftd when its database cannot be written: it keeps ingesting, logs the
failure once, bounds its sample queue, recovers, and a second signal during a
stuck shutdown exits at once.

Run: python3 test_daemon_storage_fault.py --build-dir B --source-dir S  (exit 0 = pass)

The fault is real, not simulated: this script holds SQLite's write lock
(BEGIN EXCLUSIVE on the WAL database), so heftd's WriteBatch fails with
"database is locked" after the store's busy timeout. batch_max_rows is 50, so
the sample queue cap is 10 x 50 = 500.
"""

import os
import random
import sqlite3
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402

T0_MS = 1772431200000  # 2026-03-02T06:00:00Z
CAP = 500


def records(rng, first, count, line="test-7"):
    return b"".join(b"%d,%s,%d,%.1f\n" % (T0_MS + 500 * i, line.encode(), i % 12,
                                          503.0 + rng.gauss(0.0, 1.5))
                    for i in range(first, first + count))


def send(daemon, payload):
    sock = daemon.connect()
    port = sock.getsockname()[1]
    sock.sendall(payload)
    sock.close()
    return port


def body(args):
    tmp = tempfile.mkdtemp(prefix="heftd-fault-")
    db = os.path.join(tmp, "heft.db")
    config = os.path.join(tmp, "heftd.yaml")
    h.write_config(config, db)
    with open(config) as f:
        text = f.read().replace("batch_max_rows: 5000", "batch_max_rows: 50")
    with open(config, "w") as f:
        f.write(text)

    rng = random.Random(5)
    daemon = h.Daemon(args.build_dir, config, db)
    try:
        daemon.wait_listening()
        send(daemon, records(rng, 0, 100))
        h.check(h.wait_samples(db, 100) == 100, "100 samples stored before the fault")

        lock = sqlite3.connect(db, isolation_level=None, timeout=10)
        lock.execute("BEGIN EXCLUSIVE")
        print("holding the database write lock")
        port = send(daemon, records(rng, 100, 800))
        h.check(daemon.wait_for(r"storage: write failed: .*lock", 20) is not None,
                "the write failure is logged (with SQLite's reason)")
        h.check(daemon.wait_for(r"session tcp:127\.0\.0\.1:%d ended \(closed by peer\): 800 "
                                r"records: 800 accepted" % port, 20) is not None,
                "ingest goes on while storage fails (800 accepted)")
        port = send(daemon, records(rng, 0, 50, line="test-6"))
        h.check(daemon.wait_for(r"session tcp:127\.0\.0\.1:%d ended \(closed by peer\): 50 "
                                r"records: 50 accepted" % port, 30) is not None,
                "a new connection is served while storage fails")
        h.check(daemon.wait_for(r"storage: sample queue full \(%d samples\)" % CAP, 1)
                is not None, "the sample queue stops at its cap (%d) and says so" % CAP)
        # Retries run on heftd's writer thread, each waiting out SQLite's 5 s busy
        # timeout, so the lock is held long enough for at least one retry to fail too.
        time.sleep(6.0)
        lock.execute("ROLLBACK")
        print("released the lock")
        recovered = daemon.wait_for(r"storage: writes recovered after (\d+) failed attempts.*; "
                                    r"(\d+) samples were dropped meanwhile", 20)
        h.check(recovered is not None, "recovery is logged")
        failures = int(recovered.group(1))
        dropped = int(recovered.group(2))
        h.check(failures >= 2, "several retries failed (%d)" % failures)
        h.check(daemon.count(r"storage: write failed") == 1,
                "the failure was logged once, not once per retry")
        # 850 packs arrived while failing; the queue keeps CAP of them.
        h.check(dropped == 850 - CAP, "dropped = arrivals beyond the cap (%d = %d)" %
                (dropped, 850 - CAP))
        h.check(h.wait_samples(db, 100 + CAP) == 100 + CAP,
                "samples = 100 before + %d queued (none lost that were queued)" % CAP)

        # Stuck shutdown: lock again, queue some rows, SIGTERM, then a second one.
        lock.execute("BEGIN EXCLUSIVE")
        send(daemon, records(rng, 2000, 10))
        time.sleep(0.5)
        daemon.proc.send_signal(h.signal.SIGTERM)
        h.check(daemon.wait_for(r"received SIGTERM: shutting down", 15) is not None,
                "first SIGTERM starts the shutdown")
        time.sleep(0.3)  # the final flush now waits on the lock
        t0 = time.monotonic()
        daemon.proc.send_signal(h.signal.SIGTERM)
        try:
            code = daemon.proc.wait(3)
        except h.subprocess.TimeoutExpired:
            code = None
        h.check(code == 1, "second SIGTERM during shutdown exits 1 at once (got %s in %.2f s)" %
                (code, time.monotonic() - t0))
        daemon.reader.join(5)
        h.check(daemon.wait_for(r"second signal during shutdown", 1) is not None,
                "the immediate exit says why")
        lock.execute("ROLLBACK")
        lock.close()
    except BaseException:
        daemon.dump_log()
        raise
    finally:
        daemon.kill()

    con = sqlite3.connect(db)
    h.check(con.execute("PRAGMA integrity_check").fetchone()[0] == "ok",
            "integrity_check = ok after the abrupt exit")
    con.close()


if __name__ == "__main__":
    h.run_main(body)
