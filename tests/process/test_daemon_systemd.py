"""heftd under a service manager: sd_notify messages, watchdog pings and
SIGHUP reloads (good and bad), without systemd.

Run: python3 test_daemon_systemd.py --build-dir B --source-dir S  (exit 0 = pass)

The test binds its own AF_UNIX datagram socket and exports it as
NOTIFY_SOCKET (with WATCHDOG_USEC = 2 s), which is how systemd talks to a
Type=notify service (sd_notify(3); operations.md §3.1, §3.2, §3.8). Then:
  1. READY=1 arrives once heftd logs `listening on`, with a STATUS= line;
  2. WATCHDOG=1 arrives from the 1 s tick (at least 2 within 3.5 s);
  3. a bad config on SIGHUP: RELOADING=1 then READY=1 with a STATUS= that says
     rejected, every error logged, the daemon keeps ingesting on the old config;
  4. a good config on SIGHUP: oats-1's target_g changed -> oats-1 is
     re-baselined (a new `settling` raised after more packs), honey-2 unchanged
     keeps its state (no second `settling` for it), a new line is registered in
     the lines table, a changed listen.address is logged as needing a restart;
  5. SIGTERM: STOPPING=1 arrives, exit 0.
"""

import os
import random
import shutil
import signal
import socket
import subprocess
import sqlite3
import sys
import tempfile
import threading
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402
from test_events_command import SCHEMA_V1, T0  # noqa: E402

LINES = """\
  - id: oats-1
    product: Rolled oats 500 g
    nominal_g: 500
    target_g: {oats_target}
    heads: 12
  - id: honey-2
    product: Clover honey 340 g jar
    nominal_g: 340
    target_g: 342
    heads: 4
"""

NEW_LINE = """\
  - id: oats-3
    product: Jumbo oats 750 g
    nominal_g: 750
    target_g: 754
    heads: 12
"""


class NotifyListener:
    """Our stand-in for systemd's notification socket."""

    def __init__(self, path):
        self.sock = socket.socket(socket.AF_UNIX, socket.SOCK_DGRAM)
        self.sock.bind(path)
        self.sock.settimeout(0.1)
        self.messages = []
        # Read all the time, as systemd does: the socket's queue is short.
        self.thread = threading.Thread(target=self._read, daemon=True)
        self.thread.start()

    def _read(self):
        while True:
            try:
                data = self.sock.recv(4096)
            except socket.timeout:
                continue
            except OSError:
                return
            self.messages.append(data.decode("utf-8", "replace"))

    def drain(self, seconds):
        time.sleep(seconds)

    def wait(self, key, seconds=10.0, start=0):
        """Index of the first message from `start` with a `key` assignment."""
        deadline = time.monotonic() + seconds
        while True:
            for i in range(start, len(self.messages)):
                if key in self.messages[i].split("\n"):
                    return i
            if time.monotonic() >= deadline:
                return None
            self.drain(0.1)


def records(rng, first_ms, count, oats_target):
    """`count` packs of each line, interleaved in time order (one each 500 ms),
    so neither line looks silent on the records' own clock."""
    out = []
    for i in range(count):
        t = first_ms + i * 500
        stamp = time.strftime("%Y-%m-%dT%H:%M:%S", time.gmtime(t / 1000)) + ".%03dZ" % (t % 1000)
        out.append("%s,oats-1,%d,%.1f\n" % (stamp, i % 12, rng.gauss(oats_target, 1.5)))
        out.append("%s,honey-2,%d,%.1f\n" % (stamp, i % 4, rng.gauss(342, 1.5)))
    return "".join(out).encode()


def verify_unit(args, tmp):
    """config/heftd.service passes `systemd-analyze verify` (it works without
    systemd as PID 1, operations.md §3.7) with ExecStart pointed at our build."""
    tool = shutil.which("systemd-analyze")
    if tool is None:
        print("note  systemd-analyze not installed: unit file not verified")
        return
    with open(os.path.join(args.source_dir, "config", "heftd.service"), encoding="utf-8") as f:
        unit = f.read()
    h.check("Type=notify" in unit and "WatchdogSec=" in unit and "ExecReload=" in unit,
            "unit: Type=notify, WatchdogSec and ExecReload set")
    path = os.path.join(tmp, "heftd.service")
    with open(path, "w", encoding="utf-8") as f:
        f.write(unit.replace("/usr/local/bin/heftd",
                             os.path.abspath(os.path.join(args.build_dir, "daemon", "heftd"))))
    result = subprocess.run([tool, "verify", path], capture_output=True, text=True)
    h.check(result.returncode == 0 and not result.stderr.strip(),
            "systemd-analyze verify config/heftd.service: clean (%s)" % result.stderr.strip())


def journal_priorities(args, tmp):
    """With $JOURNAL_STREAM naming its stderr (as systemd sets it), heftd
    prefixes each line with its syslog priority <N> (sd-daemon(3)) and leaves
    the timestamp to journald."""
    db = os.path.join(tmp, "journal.db")
    config = os.path.join(tmp, "journal.yaml")
    h.write_config(config, db)
    read_end, write_end = os.pipe()
    st = os.fstat(write_end)
    env = dict(os.environ)
    env.pop("NOTIFY_SOCKET", None)
    env["JOURNAL_STREAM"] = "%d:%d" % (st.st_dev, st.st_ino)
    env["WATCHDOG_USEC"] = "1000000"  # shorter than two ticks: heftd warns
    binary = os.path.join(args.build_dir, "daemon", "heftd")
    proc = subprocess.Popen([binary, "--config", config, "--db", db, "--port", "0"],
                            stdout=subprocess.DEVNULL, stderr=write_end, env=env)
    os.close(write_end)
    lines = []
    try:
        with os.fdopen(read_end, "r", encoding="utf-8", errors="replace") as err:
            for line in err:
                lines.append(line.rstrip("\n"))
                if "shorter than two ticks" in line:  # logged after `listening on`
                    break
        listening = [l for l in lines if "listening on" in l]
        warning = [l for l in lines if "shorter than two ticks" in l]
        h.check(len(listening) == 1 and listening[0].startswith("<6>info listening on"),
                "journal: info lines start with <6> and no timestamp (%s)" % listening)
        h.check(len(warning) == 1 and warning[0].startswith("<4>warning "),
                "journal: warnings start with <4> (%s)" % warning)
    finally:
        proc.send_signal(signal.SIGTERM)
        try:
            proc.wait(10)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait()
    h.check(proc.returncode == 0, "journal run: SIGTERM, exit 0")


def start_notified(args, config, db, listener):
    """heftd with `listener` as its NOTIFY_SOCKET and a 2 s watchdog."""
    os.environ["NOTIFY_SOCKET"] = listener.sock.getsockname()
    os.environ["WATCHDOG_USEC"] = "2000000"
    os.environ.pop("WATCHDOG_PID", None)
    return h.Daemon(args.build_dir, config, db)


def schema_upgrade(args, tmp):
    """A database from an older heft: before the upgrade (which copies every raw
    sample) heftd says so in STATUS= and asks for time, EXTEND_TIMEOUT_USEC and
    a longer watchdog, then puts the configured watchdog back; the old sample
    reads back through the new schema."""
    db = os.path.join(tmp, "old.db")
    con = sqlite3.connect(db)
    con.executescript(SCHEMA_V1)
    con.execute("INSERT INTO samples VALUES ('oats-1', 'tcp:127.0.0.1:40000', 7, ?, 500.5, 3, 0)",
                (T0,))
    con.commit()
    con.close()
    config = os.path.join(tmp, "old.yaml")
    h.write_config(config, db)
    listener = NotifyListener(os.path.join(tmp, "old-notify.sock"))
    d = start_notified(args, config, db, listener)
    try:
        d.wait_listening()
        ready = listener.wait("READY=1")
        h.check(ready is not None, "READY=1 after the upgrade")
        version = sqlite3.connect(db).execute("PRAGMA user_version").fetchone()[0]
        first = listener.messages[0].split("\n")
        h.check("STATUS=upgrading database schema 1 -> %d" % version in first and
                "EXTEND_TIMEOUT_USEC=3600000000" in first and "WATCHDOG_USEC=3600000000" in first,
                "first message: upgrading 1 -> %d, more start time and watchdog (%s)"
                % (version, first))
        restored = listener.wait("WATCHDOG_USEC=2000000", seconds=0)
        h.check(restored is not None and restored < ready,
                "the configured watchdog timeout is back before READY=1")
        h.check(d.wait_for(r"upgrading schema 1 -> %d; raw samples are copied once" % version)
                is not None, "the upgrade is logged")
        row = sqlite3.connect(db).execute(
            "SELECT line, source, record_index, time_ms, grams, head, status FROM samples").fetchall()
        h.check(row == [("oats-1", "tcp:127.0.0.1:40000", 7, T0, 500.5, 3, 0)],
                "the old sample reads back through the view (%s)" % row)
        h.check(d.terminate() == 0, "SIGTERM: exit 0")
    except BaseException:
        d.dump_log()
        raise
    finally:
        d.kill()
        listener.sock.close()


def body(args):
    tmp = tempfile.mkdtemp(prefix="heftd-systemd-")
    verify_unit(args, tmp)
    journal_priorities(args, tmp)
    schema_upgrade(args, tmp)
    db = os.path.join(tmp, "heft.db")
    config = os.path.join(tmp, "heftd.yaml")
    notify_path = os.path.join(tmp, "notify.sock")
    listener = NotifyListener(notify_path)
    h.write_config(config, db, lines_yaml=LINES.format(oats_target=503))
    d = start_notified(args, config, db, listener)
    try:
        d.wait_listening()
        ready = listener.wait("READY=1")
        h.check(ready is not None, "READY=1 arrives after `listening on`")
        h.check(any(part.startswith("STATUS=") and "records/s" in part
                    for part in listener.messages[ready].split("\n")),
                "READY=1 comes with a STATUS= line in records/s")
        listener.drain(3.5)
        pings = sum(1 for m in listener.messages if m == "WATCHDOG=1")
        h.check(pings >= 2, "WATCHDOG=1 from the 1 s tick (%d in 3.5 s)" % pings)
        h.check(d.wait_for(r"systemd watchdog: every 2000 ms") is not None,
                "the watchdog interval is logged")

        rng = random.Random(11)
        t0 = int(time.time() * 1000) - 3_600_000
        sock = d.connect()
        sock.sendall(b"time,line,head,weight\n")
        sock.sendall(records(rng, t0, 400, 503))
        h.check(h.wait_samples(db, 800) == 800, "800 packs stored before the reloads")
        settled = d.count(r"CLEAR .*honey-2.*settl|CLEAR .*settl.*honey-2")
        raised_honey = d.count(r"ALERT .*honey-2")

        # 3. A bad config: two errors, both logged; old config stays.
        with open(config, "w", encoding="utf-8") as f:
            f.write("listen:\n  port: banana\nlines:\n  - id: oats-1\n    nominal_g: -5\n"
                    "    colour: blue\n")
        start_log = len(d.lines)
        start_msg = len(listener.messages)
        d.proc.send_signal(signal.SIGHUP)
        h.check(d.wait_for(r"reload rejected: \d+ error", start=start_log) is not None,
                "bad config: `reload rejected` logged")
        errors = [l for l in d.lines[start_log:] if " error reload: " in l]
        h.check(len(errors) >= 3, "every error is logged (%d lines)" % len(errors))
        h.check(any("heftd.yaml:2:" in l and "listen.port" in l for l in errors),
                "the port error names file:line and the key path")
        reloading = listener.wait("RELOADING=1", start=start_msg)
        h.check(reloading is not None, "RELOADING=1 sent on SIGHUP")
        after = listener.wait("READY=1", start=reloading or start_msg)
        h.check(after is not None and "rejected" in listener.messages[after],
                "then READY=1 with a STATUS= that says the reload was rejected")
        sock.sendall(records(rng, t0 + 200_000, 25, 503))
        h.check(h.wait_samples(db, 850) == 850, "still ingesting on the old config")

        # 4. A good config: oats-1 target changed, honey-2 same, oats-3 new, port changed.
        h.write_config(config, db, lines_yaml=LINES.format(oats_target=505) + NEW_LINE)
        with open(config, encoding="utf-8") as f:
            text = f.read().replace("  address: 127.0.0.1\n  port: 7311",
                                    "  address: 127.0.0.2\n  port: 7311")
        with open(config, "w", encoding="utf-8") as f:
            f.write(text)
        start_log = len(d.lines)
        start_msg = len(listener.messages)
        d.proc.send_signal(signal.SIGHUP)
        h.check(d.wait_for(r"reload done: 3 configured lines", start=start_log) is not None,
                "good config: `reload done` logged")
        h.check(d.wait_for(r"reload: line oats-1: target_g 503 -> 505; re-baselined",
                           start=start_log) is not None,
                "oats-1 re-baselined because target_g changed")
        h.check(d.wait_for(r"reload: line honey-2", start=start_log, timeout=0.5) is None,
                "honey-2 (unchanged) is not touched")
        h.check(d.wait_for(r"reload: line oats-3 added", start=start_log) is not None,
                "the new line is logged as added")
        h.check(d.wait_for(r"reload: listen changed; needs restart", start=start_log) is not None,
                "the listen change is logged as needing a restart")
        reloading = listener.wait("RELOADING=1", start=start_msg)
        h.check(reloading is not None and listener.wait("READY=1", start=reloading) is not None,
                "RELOADING=1 then READY=1")
        con = sqlite3.connect(db, timeout=5)
        target = con.execute("SELECT target_g FROM lines WHERE line = 'oats-1'").fetchone()
        added = con.execute("SELECT COUNT(*) FROM lines WHERE line = 'oats-3'").fetchone()[0]
        con.close()
        h.check(target is not None and target[0] == 505, "lines table: oats-1 target_g 505")
        h.check(added == 1, "lines table: oats-3 registered")

        start_log = len(d.lines)
        sock.sendall(records(rng, t0 + 212_500, 30, 505))
        h.check(h.wait_samples(db, 910) == 910, "packs after the reload stored")
        h.check(d.wait_for(r"ALERT .*oats-1.*settl|ALERT .*settl.*oats-1",
                           start=start_log) is not None,
                "oats-1 raises settling again after its re-baseline")
        h.check(d.count(r"CLEAR .*honey-2.*settl|CLEAR .*settl.*honey-2") == settled and
                d.wait_for(r"ALERT .*honey-2.*settl|ALERT .*settl.*honey-2",
                           start=start_log, timeout=0.3) is None,
                "honey-2 keeps its state: no new settling (raised before: %d)" % raised_honey)
        sock.close()

        # 5. SIGTERM: STOPPING=1 and exit 0.
        start_msg = len(listener.messages)
        code = d.terminate()
        h.check(code == 0, "SIGTERM: exit 0 (got %s)" % code)
        h.check(listener.wait("STOPPING=1", start=start_msg, seconds=2) is not None,
                "STOPPING=1 sent at shutdown")
    except h.Failure:
        d.dump_log()
        raise
    finally:
        d.kill()


if __name__ == "__main__":
    h.run_main(body)
