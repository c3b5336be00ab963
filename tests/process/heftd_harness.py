"""Helpers for the heftd process tests: start the real daemon, follow its log,
talk to it over loopback TCP, stop it with a signal.

Not a test itself (the file name does not start with test_), imported by
tests/process/test_daemon_*.py. Standard library only.
"""

import argparse
import os
import re
import signal
import socket
import sqlite3
import subprocess
import sys
import threading
import time

LISTENING = re.compile(r"listening on (\d+\.\d+\.\d+\.\d+):(\d+)")


def parse_args():
    parser = argparse.ArgumentParser()
    parser.add_argument("--build-dir", required=True)
    parser.add_argument("--source-dir", required=True)
    return parser.parse_args()


class Failure(Exception):
    pass


def check(condition, what):
    """Prints what is checked; raises Failure when it does not hold."""
    print(("ok    " if condition else "FAIL  ") + what, flush=True)
    if not condition:
        raise Failure(what)


def write_config(path, db_path, extra_listen="", lines_yaml=None):
    """A minimal heftd config in the schema of config_loader.cpp.

    baseline_packs 200 so the findings start early in short feeds."""
    if lines_yaml is None:
        lines_yaml = """\
  - id: oats-1
    product: Rolled oats 500 g
    nominal_g: 500
    target_g: 503
    heads: 12
  - id: honey-2
    product: Clover honey 340 g jar
    nominal_g: 340
    target_g: 342
    heads: 0
"""
    text = f"""\
# Written by a heftd process test (Millbrook Oat Co., invented plant).
listen:
  address: 127.0.0.1
  port: 7311  # the tests override it with --port 0
{extra_listen}storage:
  database: {db_path}
  raw_samples: true
  flush_interval_ms: 100
  batch_max_rows: 5000
log:
  level: info
defaults:
  baseline_packs: 200
lines:
{lines_yaml}"""
    with open(path, "w", encoding="utf-8") as f:
        f.write(text)


class Daemon:
    """The heftd process with its stderr collected line by line by a thread
    (so the pipe never fills and blocks the daemon)."""

    def __init__(self, build_dir, config, db, extra_args=()):
        self.binary = os.path.join(build_dir, "daemon", "heftd")
        self.args = [self.binary, "--config", config, "--db", db, "--port", "0", *extra_args]
        self.lines = []
        self.cond = threading.Condition()
        self.proc = subprocess.Popen(self.args, stdout=subprocess.DEVNULL,
                                     stderr=subprocess.PIPE)
        self.reader = threading.Thread(target=self._read, daemon=True)
        self.reader.start()
        self.port = None

    def _read(self):
        for raw in self.proc.stderr:
            line = raw.decode("utf-8", "replace").rstrip("\n")
            with self.cond:
                self.lines.append(line)
                self.cond.notify_all()
        with self.cond:
            self.cond.notify_all()

    def wait_for(self, pattern, timeout=10.0, start=0):
        """First log line (from index `start`) matching regex `pattern`; its match."""
        regex = re.compile(pattern)
        deadline = time.monotonic() + timeout
        with self.cond:
            while True:
                for line in self.lines[start:]:
                    m = regex.search(line)
                    if m:
                        return m
                remaining = deadline - time.monotonic()
                if remaining <= 0 or (self.proc.poll() is not None and not self.reader.is_alive()):
                    return None
                self.cond.wait(min(remaining, 0.2))

    def wait_listening(self, timeout=10.0):
        m = self.wait_for(LISTENING.pattern, timeout)
        if m is None:
            self.dump_log()
            raise Failure("heftd did not log 'listening on' (exit %s)" % self.proc.poll())
        self.port = int(m.group(2))
        return m.group(1), self.port

    def connect(self):
        return socket.create_connection(("127.0.0.1", self.port), timeout=10)

    def log_text(self):
        with self.cond:
            return "\n".join(self.lines)

    def count(self, pattern):
        regex = re.compile(pattern)
        with self.cond:
            return sum(1 for line in self.lines if regex.search(line))

    def terminate(self, timeout=10.0):
        """SIGTERM; returns the exit code or None if it did not exit in time."""
        self.proc.send_signal(signal.SIGTERM)
        try:
            code = self.proc.wait(timeout)
        except subprocess.TimeoutExpired:
            return None
        self.reader.join(5)
        return code

    def kill(self):
        if self.proc.poll() is None:
            self.proc.kill()
            self.proc.wait()

    def dump_log(self, last=60):
        with self.cond:
            lines = self.lines[-last:]
        print("---- heftd log (last %d lines) ----" % len(lines))
        for line in lines:
            print("  " + line)
        print("----", flush=True)


def free_port():
    """A loopback TCP port free at the time of asking."""
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def send_feed(daemon, path):
    """Sends a whole feed file to the daemon over one connection, then closes it."""
    with open(path, "rb") as f:
        feed = f.read()
    s = daemon.connect()
    s.sendall(feed)
    s.close()


def count_samples(db):
    """Samples in the database, read-only (WAL lets us read while heftd writes)."""
    try:
        con = sqlite3.connect("file:%s?mode=ro" % db, uri=True, timeout=2)
        try:
            # Schema 6 keeps the rows in sample_rows; its view `samples` would
            # join every row to its names just to count them.
            lean = con.execute("SELECT count(*) FROM sqlite_master WHERE name = 'sample_rows'"
                               ).fetchone()[0]
            table = "sample_rows" if lean else "samples"
            return con.execute("SELECT COUNT(*) FROM " + table).fetchone()[0]
        finally:
            con.close()
    except sqlite3.Error:
        return -1


def wait_samples(db, want, timeout=20.0):
    deadline = time.monotonic() + timeout
    got = count_samples(db)
    while got != want and time.monotonic() < deadline:
        time.sleep(0.05)
        got = count_samples(db)
    return got


def run_main(body):
    """Runs body(args) and turns its outcome into the exit status."""
    args = parse_args()
    try:
        body(args)
    except Failure as e:
        print("FAILED: %s" % e, flush=True)
        sys.exit(1)
    print("PASSED", flush=True)
    sys.exit(0)
