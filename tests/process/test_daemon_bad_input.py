"""heftd keeps running through bad input on its feed port.

Run: python3 test_daemon_bad_input.py --build-dir B --source-dir S  (exit 0 = pass)

Cases, all over loopback TCP to one daemon (listen.max_connections 3):
  * connections beyond max_connections are closed, with a log line;
  * a peer that connects, sends nothing and disconnects;
  * one connection carrying good records mixed with binary noise, a 1 MiB
    line and malformed records: good ones are stored, bad ones counted and
    logged (rate-limited: 5 lines, then a count);
  * a later connection still works;
  * SIGTERM: exit 0; the database is intact and holds exactly the good records.
Also: --check-config on a bad file exits 2 and prints every error.
"""

import os
import random
import socket
import sqlite3
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402

T0_MS = 1772431200000  # 2026-03-02T06:00:00Z, epoch ms


def good_records(rng, first, count, line="test-9"):
    """`count` plausible 500 g packs, one every 500 ms."""
    out = []
    for i in range(first, first + count):
        grams = 503.0 + rng.gauss(0.0, 1.5)
        out.append(b"%d,%s,%d,%.1f\n" % (T0_MS + 500 * i, line.encode(), i % 12, grams))
    return out


# Records the native parser must refuse (time,line,head,weight[,status]).
MALFORMED = [
    b"2026-03-02T06:10:00Z,oats-1,3\n",                 # 3 fields
    b"2026-03-02T06:10:00Z,oats-1,3,abc\n",             # weight not a number
    b"2026-13-45T99:00:00Z,oats-1,3,500.1\n",           # impossible time
    b"2026-03-02T06:10:00Z,bad line!,3,500.1\n",        # line id with a space and '!'
    b"2026-03-02T06:10:00Z,oats-1,-4,500.1\n",          # negative head
    b"2026-03-02T06:10:00Z,oats-1,3,500.1stone\n",      # unknown unit
    b"2026-03-02T06:10:00Z,oats-1,3,500.1,maybe\n",     # unknown status
    b"a,b,c,d,e,f,g\n",                                 # 7 fields
]


def check_bad_config(args, tmp):
    bad = os.path.join(tmp, "bad.yaml")
    with open(bad, "w") as f:
        f.write("listen:\n  port: 99999\nstorage:\n  flush_interval_ms: -5\nnonsense: 1\n")
    result = subprocess.run([os.path.join(args.build_dir, "daemon", "heftd"), "--config", bad,
                             "--check-config"], capture_output=True, text=True)
    errors = [line for line in result.stderr.splitlines() if line.strip()]
    h.check(result.returncode == 2, "--check-config on a bad file exits 2 (got %d)" %
            result.returncode)
    h.check(len(errors) >= 3, "--check-config prints every error line (%d lines: %s)" %
            (len(errors), " | ".join(errors)))
    result = subprocess.run([os.path.join(args.build_dir, "daemon", "heftd"), "--config", bad,
                             "--db", os.path.join(tmp, "x.db")], capture_output=True, text=True)
    h.check(result.returncode == 2, "starting with a bad config exits 2 (got %d)" %
            result.returncode)


def recv_closed(sock, timeout=5.0):
    """True when the peer closed the connection (EOF or reset) within timeout."""
    sock.settimeout(timeout)
    try:
        return sock.recv(1) == b""
    except ConnectionResetError:
        return True
    except socket.timeout:
        return False


def body(args):
    tmp = tempfile.mkdtemp(prefix="heftd-bad-")
    check_bad_config(args, tmp)

    db = os.path.join(tmp, "heft.db")
    config = os.path.join(tmp, "heftd.yaml")
    h.write_config(config, db, extra_listen="  max_connections: 3\n")
    daemon = h.Daemon(args.build_dir, config, db)
    rng = random.Random(87)
    try:
        daemon.wait_listening()

        # Port in use: a second daemon on the same port must fail cleanly with 2.
        second = subprocess.run([daemon.binary, "--config", config, "--db",
                                 os.path.join(tmp, "other.db"), "--port", str(daemon.port)],
                                capture_output=True, text=True, timeout=20)
        h.check(second.returncode == 2 and "cannot listen on" in second.stderr,
                "a second daemon on a port in use exits 2 with 'cannot listen on' (got %d)" %
                second.returncode)

        # max_connections: 3 idle sessions fill the server; the 4th is closed.
        idle = [daemon.connect() for _ in range(3)]
        h.check(daemon.wait_for(r"session tcp:\S+ opened \(3 open\)") is not None,
                "three sessions open")
        extra = daemon.connect()
        h.check(recv_closed(extra), "a 4th connection is closed by heftd")
        h.check(daemon.wait_for(r"refusing connection tcp:127\.0\.0\.1:%d" %
                                extra.getsockname()[1]) is not None,
                "the refusal is logged with the peer")
        extra.close()
        # Peers that connected, sent nothing and went away.
        ports = [s.getsockname()[1] for s in idle]
        for s in idle:
            s.close()
        for p in ports:
            h.check(daemon.wait_for(r"session tcp:127\.0\.0\.1:%d ended \(closed by peer\): 0 "
                                    r"records" % p) is not None,
                    "silent peer %d: session ended with 0 records" % p)

        # One connection, good records with bad input between them.
        good = 0
        bad = 0
        stream = []
        stream += good_records(rng, 0, 300)
        good += 300
        noise = bytes(rng.choice([b for b in range(256) if b not in (10, 13)])
                      for _ in range(3000))
        stream.append(noise + b"\n")  # one record of binary noise
        bad += 1
        stream += good_records(rng, 300, 100)
        good += 100
        stream.append(b"9" * (1 << 20) + b"\n")  # 1 MiB line: over the 4096-byte limit
        bad += 1
        index = 400
        for record in MALFORMED:
            stream += good_records(rng, index, 20)
            index += 20
            good += 20
            stream.append(record)
            bad += 1
        stream += good_records(rng, index, 50)
        index += 50
        good += 50
        payload = b"".join(stream)

        sock = daemon.connect()
        local = sock.getsockname()[1]
        pos = 0
        while pos < len(payload):
            n = rng.randint(1, 70000)
            sock.sendall(payload[pos:pos + n])
            pos += n
        sock.close()
        summary = daemon.wait_for(
            r"session tcp:127\.0\.0\.1:%d ended \(closed by peer\): (\d+) records: (\d+) "
            r"accepted, (\d+) malformed" % local, timeout=30)
        h.check(summary is not None, "mixed session ended with a summary")
        h.check((int(summary.group(2)), int(summary.group(3))) == (good, bad),
                "accepted %s and malformed %s (want %d and %d)" %
                (summary.group(2), summary.group(3), good, bad))
        source = r"source tcp:127\.0\.0\.1:%d" % local
        shown = daemon.count(r"malformed record: %s record \d+: " % source)
        h.check(shown == 5, "rate limit: 5 malformed records logged in full (got %d)" % shown)
        h.check(daemon.wait_for(r"malformed record: %s: %d more not logged" %
                                (source, bad - 5)) is not None,
                "the other %d are summarised in one line" % (bad - 5))
        h.check(daemon.wait_for(r"%s record 300: binary" % source) is not None,
                "the noise record is reported as 'binary' at its index (300)")
        h.check(daemon.wait_for(r"%s record 401: too_long" % source) is not None,
                "the 1 MiB line is reported as 'too_long' at its index (401)")

        # The daemon still takes a new feed.
        sock = daemon.connect()
        sock.sendall(b"".join(good_records(rng, 0, 25, line="test-8")))
        sock.close()
        good += 25
        got = h.wait_samples(db, good)
        h.check(got == good, "all good records stored while running (%d of %d)" % (got, good))
        h.check(daemon.proc.poll() is None, "heftd still running")

        code = daemon.terminate(10)
        h.check(code == 0, "SIGTERM: exit 0 within 10 s (got %s)" % code)
        stopped = daemon.wait_for(r"heftd stopped: (\d+) records \((\d+) accepted, (\d+) "
                                  r"malformed", 1)
        h.check(stopped is not None and (int(stopped.group(2)), int(stopped.group(3))) ==
                (good, bad), "shutdown summary counts %d accepted, %d malformed" % (good, bad))
    except BaseException:
        daemon.dump_log()
        raise
    finally:
        daemon.kill()

    con = sqlite3.connect(db)
    h.check(con.execute("PRAGMA integrity_check").fetchone()[0] == "ok", "integrity_check = ok")
    samples = con.execute("SELECT COUNT(*) FROM samples").fetchone()[0]
    h.check(samples == good, "samples in db = good records sent (%d = %d)" % (samples, good))
    con.close()


if __name__ == "__main__":
    h.run_main(body)
