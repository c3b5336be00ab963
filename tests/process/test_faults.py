"""heftd under faults, with real processes over loopback TCP (issue #9's fault tests).

Run: python3 test_faults.py --build-dir B --source-dir S  (exit 0 = pass)

1. kill -9 during heavy ingest, 20 times on the same database. Each time the daemon is
   frozen (SIGSTOP) at a random moment while a sender streams as fast as it can; what it
   had read is known exactly from the bytes sent minus the bytes still queued in the
   kernel (/proc/net/tcp); the events and samples committed so far are read; then SIGKILL.
   Five rounds per database. After each kill: PRAGMA integrity_check is ok, every committed event is still there,
   the connection's stored samples are exactly its first K records (no holes), and the
   raw samples lost are within the documented bound: at most two batches of
   batch_max_rows rows (the one heftd's writer thread is committing and the one being
   filled) plus one 64 KiB read chunk (storage.batch_max_rows in config/example.yaml).
2. The database's disk fills (a 6 MB tmpfs mounted for the test; skipped, with a note,
   where mounting is not allowed): the daemon logs the write failure, keeps raising alerts
   in its log, and writes what it held once space returns.
3. A peer sends 100 MB of random bytes: counted as malformed, memory stays bounded, the
   daemon serves the next connection.
4. 1,000 connections opened and dropped (half with a reset, some mid-record): every
   session ends, no file descriptor leaks, the daemon still serves.
5. A reload storm: 200 SIGHUPs during ingest, the file alternately edited and broken.
Bounded: about a minute in a Release build.
"""

import array
import fcntl
import os
import random
import re
import shutil
import signal
import socket
import sqlite3
import struct
import subprocess
import sys
import tempfile
import threading
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402

BATCH_MAX_ROWS = 2000
READ_CHUNK = 64 * 1024
KILL_ROUNDS = 20
SIOCOUTQNSD = 0x894B  # linux/sockios.h: bytes in the send queue not yet sent


def sanitized(build_dir):
    try:
        with open(os.path.join(build_dir, "CMakeCache.txt")) as f:
            return "HEFT_SANITIZE:BOOL=ON" in f.read()
    except OSError:
        return False


def write_config(path, db, extra_storage=""):
    h.write_config(path, db)
    with open(path) as f:
        text = f.read()
    text = text.replace("batch_max_rows: 5000", "batch_max_rows: %d" % BATCH_MAX_ROWS)
    # Retention off: the generated packs are dated 2026-03-02, and pruning them by the
    # wall clock would change the counts this test checks.
    text = text.replace("  flush_interval_ms: 100\n",
                        "  flush_interval_ms: 100\n  raw_retention_days: 0\n" + extra_storage)
    with open(path, "w") as f:
        f.write(text)


def heft_feed(build_dir, scenarios, packs, path):
    subprocess.run([os.path.join(build_dir, "tools", "heft"), "feed", "--scenario", scenarios,
                    "--seed", "9", "--packs", str(packs), "--out", path], check=True,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    with open(path, "rb") as f:
        return f.read()


def tcp_queues(local_port, remote_port):
    """(tx_queue, rx_queue) of the IPv4 socket local_port -> remote_port, or None."""
    with open("/proc/net/tcp") as f:
        next(f)
        for line in f:
            parts = line.split()
            lport = int(parts[1].split(":")[1], 16)
            rport = int(parts[2].split(":")[1], 16)
            if lport == local_port and rport == remote_port:
                tx, rx = parts[4].split(":")
                return int(tx, 16), int(rx, 16)
    return None


def wait_stopped(pid, timeout=5.0):
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        with open("/proc/%d/stat" % pid) as f:
            if f.read().rsplit(")", 1)[1].split()[0] == "T":
                return True
        time.sleep(0.002)
    return False


class Sender(threading.Thread):
    """Streams `data` over one connection as fast as the daemon reads it, until told to
    stop; counts the bytes the kernel took."""

    def __init__(self, port, data):
        super().__init__(daemon=True)
        self.sock = socket.create_connection(("127.0.0.1", port))
        self.sock.settimeout(0.02)
        self.local_port = self.sock.getsockname()[1]
        self.data = data
        self.sent = 0
        self.stop = threading.Event()

    def run(self):
        view = memoryview(self.data)
        while not self.stop.is_set() and self.sent < len(self.data):
            try:
                self.sent += self.sock.send(view[self.sent:self.sent + 65536])
            except socket.timeout:
                continue
            except OSError:
                break


def committed(db):
    con = sqlite3.connect("file:%s?mode=ro" % db, uri=True, timeout=5)
    try:
        events = con.execute("SELECT * FROM events ORDER BY id").fetchall()
    finally:
        con.close()
    return events


def source_samples(db, source):
    con = sqlite3.connect("file:%s?mode=ro" % db, uri=True, timeout=5)
    try:
        return con.execute("SELECT COUNT(*), MIN(record_index), MAX(record_index) FROM samples "
                           "WHERE source = ?", (source,)).fetchone()
    finally:
        con.close()


def kill_rounds(args, tmp, feed):
    rng = random.Random(99)
    # Records of one round start with the header; its lines are renamed per round.
    # The bound is in records of the feed as sent: line ids are renamed per round
    # (",fault-" becomes ",rNN-", two bytes shorter), so measure the renamed records.
    sent_form = feed.replace(b",fault-", b",r00-")
    newlines = [i for i, b in enumerate(sent_form) if b == 0x0A]
    min_record = min(b - a for a, b in zip(newlines, newlines[1:]))
    # Double buffering (daemon/batch_writer.h): one batch in the writer's transaction,
    # one filling (a full one waits), plus the records of the chunk being parsed.
    bound = 2 * BATCH_MAX_ROWS + READ_CHUNK // min_record + 1
    worst = (0, 0)
    events_total = 0
    events_seen = 0
    for rnd in range(KILL_ROUNDS):
        # Five rounds of crash and recovery on each database (it stays small enough for a
        # quick integrity_check).
        db = os.path.join(tmp, "kill-%d.db" % (rnd // 5))
        config = os.path.join(tmp, "kill-%d.yaml" % (rnd // 5))
        if rnd % 5 == 0:
            write_config(config, db)
        data = feed.replace(b",fault-", b",r%02d-" % rnd)
        daemon = h.Daemon(args.build_dir, config, db)
        try:
            daemon.wait_listening(30)
            sender = Sender(daemon.port, data)
            sender.start()
            time.sleep(rng.uniform(0.2, 0.6))
            os.kill(daemon.proc.pid, signal.SIGSTOP)
            if not wait_stopped(daemon.proc.pid):
                h.check(False, "round %d: heftd stops on SIGSTOP" % rnd)
            sender.stop.set()
            sender.join(5)
            # Let segments still in flight on loopback land in the daemon's receive
            # queue, where they are counted as unread; otherwise they would count as
            # read and show up as loss the daemon never had.
            time.sleep(0.2)
            # Bytes the daemon has not read: those the client kernel has not sent yet
            # (SIOCOUTQNSD; loopback delivers what it sends at once) plus those waiting in
            # the daemon's receive queue (/proc/net/tcp rx_queue). The client's tx_queue
            # would not do: it counts bytes read but not yet acknowledged (delayed ACK).
            notsent = array.array("i", [0])
            fcntl.ioctl(sender.sock.fileno(), SIOCOUTQNSD, notsent)
            server = tcp_queues(daemon.port, sender.local_port) or (0, 0)
            read_bytes = sender.sent - notsent[0] - server[1]
            read_records = data.count(b"\n", 0, read_bytes) - 1  # less the header
            events_before = committed(db)
            source = "tcp:127.0.0.1:%d" % sender.local_port
            stored_before = source_samples(db, source)[0]
            os.kill(daemon.proc.pid, signal.SIGKILL)
            daemon.proc.wait(10)
            sender.sock.close()
        finally:
            daemon.kill()
        con = sqlite3.connect(db, timeout=10)
        integrity = con.execute("PRAGMA integrity_check").fetchone()[0]
        events_after = con.execute("SELECT * FROM events ORDER BY id").fetchall()
        con.close()
        count, lo, hi = source_samples(db, source)
        lost = read_records - count
        worst = max(worst, (lost, rnd))
        events_total = len(events_after)
        events_seen += len(events_before)
        missing = set(events_before) - set(events_after)
        ok = (integrity == "ok" and not missing and count >= stored_before and
              (count == 0 or (lo == 0 and hi == count - 1)) and 0 <= lost <= bound)
        print("round %2d: read %7d records, stored %7d, lost %5d (bound %d), events %d "
              "committed before the kill, %d after" % (rnd, read_records, count, lost, bound,
                                                        len(events_before), len(events_after)),
              flush=True)
        if not ok:
            h.check(integrity == "ok", "round %d: integrity_check = ok (%s)" % (rnd, integrity))
            h.check(not missing, "round %d: every committed event is still there (%d missing)" %
                    (rnd, len(missing)))
            h.check(count >= stored_before, "round %d: committed samples kept" % rnd)
            h.check(count == 0 or (lo == 0 and hi == count - 1),
                    "round %d: stored samples are the first %d records (indexes %s..%s)" %
                    (rnd, count, lo, hi))
            h.check(0 <= lost <= bound, "round %d: lost %d <= bound %d" % (rnd, lost, bound))
    h.check(True, "%d kill -9 rounds: integrity ok, committed events kept, samples without "
            "holes, worst loss %d records (round %d) <= bound %d" %
            (KILL_ROUNDS, worst[0], worst[1], bound))
    h.check(events_seen > 0, "events were being written during the rounds (%d checked)" %
            events_seen)


def full_disk(args, tmp):
    mnt = os.path.join(tmp, "disk")
    os.makedirs(mnt)
    r = subprocess.run(["mount", "-t", "tmpfs", "-o", "size=6m", "tmpfs", mnt],
                       capture_output=True, text=True)
    if r.returncode != 0:
        print("SKIP  full disk: cannot mount a small tmpfs here (%s)" % r.stderr.strip(),
              flush=True)
        return
    try:
        db = os.path.join(mnt, "heft.db")
        config = os.path.join(tmp, "disk.yaml")
        write_config(config, db)
        feed = heft_feed(args.build_dir, "stuck@disk-1", 2400, os.path.join(tmp, "disk.csv"))
        lines = feed.split(b"\n")
        first, rest = b"\n".join(lines[:1001]) + b"\n", b"\n".join(lines[1001:])
        daemon = h.Daemon(args.build_dir, config, db)
        try:
            daemon.wait_listening(30)
            s = daemon.connect()
            s.sendall(first)
            s.close()
            h.check(h.wait_samples(db, 1000, 30) == 1000, "1000 samples stored before the disk fills")
            ballast = os.path.join(mnt, "ballast")
            with open(ballast, "wb") as f:
                try:
                    while True:
                        f.write(b"\0" * 65536)
                        f.flush()
                except OSError:
                    pass
            mark = len(daemon.lines)
            s = daemon.connect()
            s.sendall(b"time,line,head,weight\n" + rest)  # holds the stuck readings: an alert
            s.close()
            failed = daemon.wait_for(r"storage: write failed: .*(full|disk)", 30, start=mark)
            h.check(failed is not None, "the full disk is reported: %s" %
                    (failed.group(0) if failed else "nothing logged"))
            alert = daemon.wait_for(r"ALERT .*disk-1", 30, start=mark)
            h.check(alert is not None, "alerts keep flowing to the log while the disk is full")
            time.sleep(0.5)
            os.remove(ballast)
            recovered = daemon.wait_for(r"storage: writes recovered", 30, start=mark)
            h.check(recovered is not None, "writing resumes when space returns (logged)")
            con = sqlite3.connect("file:%s?mode=ro" % db, uri=True, timeout=5)
            stuck = con.execute("SELECT COUNT(*) FROM events WHERE line = 'disk-1' AND "
                                "kind = 'stuck'").fetchone()[0]
            samples = con.execute("SELECT COUNT(*) FROM samples").fetchone()[0]
            con.close()
            h.check(stuck >= 1, "the alert raised while the disk was full is stored afterwards")
            h.check(samples > 1000, "samples held while full are written afterwards (%d)" % samples)
            h.check(daemon.terminate(30) == 0, "heftd exits 0 after the disk episode")
        except BaseException:
            daemon.dump_log()
            raise
        finally:
            daemon.kill()
    finally:
        subprocess.run(["umount", "-l", mnt], capture_output=True)


def vm(pid, key):
    with open("/proc/%d/status" % pid) as f:
        for line in f:
            if line.startswith(key + ":"):
                return int(line.split()[1]) // 1024
    return -1


def random_and_churn(args, tmp):
    db = os.path.join(tmp, "noise.db")
    config = os.path.join(tmp, "noise.yaml")
    write_config(config, db)
    daemon = h.Daemon(args.build_dir, config, db)
    try:
        daemon.wait_listening(30)
        pid = daemon.proc.pid
        rss0 = vm(pid, "VmRSS")
        s = daemon.connect()
        port = s.getsockname()[1]
        rng = random.Random(3)
        block = bytes(rng.getrandbits(8) for _ in range(1 << 16))
        t0 = time.monotonic()
        for i in range(1600):  # 100 MiB: each 64 KiB block a fresh rotation of random bytes
            k = (i * 7919) % len(block)
            s.sendall(block[k:] + block[:k])
        s.close()
        ended = daemon.wait_for(r"session tcp:127\.0\.0\.1:%d ended .*: (\d+) records: (\d+) "
                                r"accepted, (\d+) malformed" % port, 120)
        h.check(ended is not None, "100 MiB of random bytes: the session ends normally (%.1f s)" %
                (time.monotonic() - t0))
        h.check(int(ended.group(3)) > 100000 and int(ended.group(2)) < int(ended.group(1)) // 100,
                "the random records are counted as malformed (%s of %s)" %
                (ended.group(3), ended.group(1)))
        hwm = vm(pid, "VmHWM")
        if sanitized(args.build_dir):
            print("note  peak RSS %d MB (ASan build: its shadow memory and quarantine make "
                  "the 64 MB bound meaningless here)" % hwm)
        else:
            h.check(hwm - rss0 < 64, "memory stays bounded: peak RSS %d MB, %d MB at start" %
                    (hwm, rss0))
        h.check(daemon.proc.poll() is None, "heftd is still running")

        fds_before = len(os.listdir("/proc/%d/fd" % pid))
        mark = len(daemon.lines)
        for batch in range(20):
            socks = []
            for i in range(50):
                c = socket.create_connection(("127.0.0.1", daemon.port))
                if i % 3 == 0:
                    c.sendall(b"1772431200000,churn-1,3,50")  # half a record
                socks.append(c)
            for i, c in enumerate(socks):
                if i % 2 == 0:  # reset instead of a clean close
                    c.setsockopt(socket.SOL_SOCKET, socket.SO_LINGER, struct.pack("ii", 1, 0))
                c.close()
        deadline = time.monotonic() + 60
        while daemon.count(r"session tcp:\S+ ended") < 1001 and time.monotonic() < deadline:
            time.sleep(0.1)
        ended = daemon.count(r"session tcp:\S+ ended")
        h.check(ended == 1001, "1,000 connections opened and dropped: every session ended "
                "(%d of 1,000)" % (ended - 1))
        h.check(daemon.count(r"refusing connection") == 0,
                "no connection refused (at most 50 open at once, the limit is 64)")
        time.sleep(0.2)
        fds_after = len(os.listdir("/proc/%d/fd" % pid))
        h.check(fds_after <= fds_before, "no file descriptors leaked (%d before, %d after)" %
                (fds_before, fds_after))
        s = daemon.connect()
        port = s.getsockname()[1]
        s.sendall(b"1772431200000,churn-2,1,500.1\n")
        s.close()
        h.check(daemon.wait_for(r"session tcp:127\.0\.0\.1:%d ended \(closed by peer\): 1 records: "
                                r"1 accepted" % port, 20) is not None,
                "a good record after all that is accepted")
        h.check(daemon.terminate(30) == 0, "heftd exits 0")
    except BaseException:
        daemon.dump_log()
        raise
    finally:
        daemon.kill()


def reload_storm(args, tmp):
    """200 SIGHUPs while a feed streams in, the config switching between a good edit and a
    broken file: every record is stored, each reload is done or rejected, none crashes."""
    db = os.path.join(tmp, "reload.db")
    config = os.path.join(tmp, "reload.yaml")
    write_config(config, db)
    with open(config) as f:
        good = f.read()
    edited = good.replace("  baseline_packs: 200\n", "  baseline_packs: 250\n")
    broken = good.replace("  baseline_packs: 200\n", "  baseline_packs: [oops\n")
    feed = heft_feed(args.build_dir, "step@reload-1,outliers@reload-2", 20000,
                     os.path.join(tmp, "reload.csv"))
    records = feed.count(b"\n") - 1
    daemon = h.Daemon(args.build_dir, config, db)
    try:
        daemon.wait_listening(30)
        sender = Sender(daemon.port, feed)
        sender.start()
        for i in range(200):
            # Each version replaces the file whole (write, then rename), as an editor or a
            # deployment tool does: a file rewritten in place can be read half-written,
            # and a valid prefix of it is a different configuration (defaults for the
            # rest: once it turned raw retention on and pruned this March feed).
            staged = config + ".new"
            with open(staged, "w") as f:
                f.write((edited, broken, good)[i % 3])
            os.replace(staged, config)
            os.kill(daemon.proc.pid, signal.SIGHUP)
            time.sleep(0.005)
        sender.join(120)
        sender.sock.close()
        with open(config, "w") as f:
            f.write(good)
        h.check(daemon.wait_for(r"session tcp:\S+ ended \(closed by peer\): %d records: %d "
                                r"accepted" % (records, records), 120) is not None,
                "ingest during a reload storm: all %d records accepted" % records)
        deadline = time.monotonic() + 30
        while (daemon.count(r"reload done|reload rejected") < 200 and
               time.monotonic() < deadline):
            time.sleep(0.1)
        done = daemon.count(r"reload done")
        rejected = daemon.count(r"reload rejected")
        h.check(daemon.proc.poll() is None and done > 0 and rejected > 0,
                "200 SIGHUPs: heftd still running, %d reloads done, %d rejected (bad file); "
                "signals that arrive together may be handled as one" % (done, rejected))
        h.check(h.wait_samples(db, records, 30) == records, "every record stored")
        h.check(daemon.terminate(30) == 0, "heftd exits 0 after the storm")
    except BaseException:
        daemon.dump_log()
        raise
    finally:
        daemon.kill()


def body(args):
    tmp = tempfile.mkdtemp(prefix="heftd-faults-")
    try:
        t0 = time.monotonic()
        # Two lines, so the per-line start (baseline and detector design, some 40 ms each)
        # is soon over and the kills land in steady, heavy ingest.
        feed = heft_feed(args.build_dir, "outliers@fault-0,step@fault-1", 100000,
                         os.path.join(tmp, "kill.csv"))
        kill_rounds(args, tmp, feed)
        print("(kill rounds: %.1f s)" % (time.monotonic() - t0), flush=True)
        full_disk(args, tmp)
        random_and_churn(args, tmp)
        reload_storm(args, tmp)
        print("(all faults: %.1f s)" % (time.monotonic() - t0), flush=True)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    h.run_main(body)
