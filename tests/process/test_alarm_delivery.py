"""heftd alarm delivery end to end, loopback only: a real Mosquitto broker
(stopped mid-stream and restarted), an HTTP webhook server that fails its
first attempts, a command hook that records its input, syslog to a local unix
datagram socket, the daemon log, and `heft ack` while heftd runs.

Every transition routed to a channel must arrive there; after dropping
duplicates by event_id none is missing and none is extra (at-least-once).
Standard library plus the Debian `mosquitto` and `mosquitto-clients` tools.
"""

import http.server
import json
import os
import shutil
import signal
import socket
import sqlite3
import subprocess
import sys
import tempfile
import threading
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402

HOOK = """#!/usr/bin/env python3
import json, os, sys
data = sys.stdin.read()
env = {k: v for k, v in os.environ.items() if k.startswith("HEFT_")}
with open(sys.argv[1], "a") as f:
    f.write(json.dumps({"env": env, "stdin": json.loads(data)}) + "\\n")
"""


class Broker:
    def __init__(self, tmp, port):
        self.conf = os.path.join(tmp, "mosquitto.conf")
        os.makedirs(os.path.join(tmp, "mq"), exist_ok=True)
        # Started as root, mosquitto drops to its own user: let it save its state here.
        os.chmod(tmp, 0o755)
        os.chmod(os.path.join(tmp, "mq"), 0o777)
        with open(self.conf, "w") as f:
            f.write("listener %d 127.0.0.1\nallow_anonymous true\npersistence true\n"
                    "persistence_location %s/\n" % (port, os.path.join(tmp, "mq")))
        self.port = port
        self.proc = None

    def start(self):
        self.proc = subprocess.Popen(["mosquitto", "-c", self.conf], stdout=subprocess.DEVNULL,
                                     stderr=subprocess.DEVNULL)
        deadline = time.monotonic() + 10
        while time.monotonic() < deadline:
            try:
                socket.create_connection(("127.0.0.1", self.port), timeout=1).close()
                return
            except OSError:
                time.sleep(0.05)
        raise h.Failure("mosquitto did not listen on %d" % self.port)

    def stop(self):
        if self.proc and self.proc.poll() is None:
            self.proc.send_signal(signal.SIGTERM)
            self.proc.wait(10)


class Subscriber:
    """mosquitto_sub with a persistent session (QoS 1, clean session off):
    it reconnects after a broker restart and gets what was queued for it."""

    def __init__(self, port, topic):
        self.messages = []
        self.lock = threading.Lock()
        self.proc = subprocess.Popen(
            ["mosquitto_sub", "-h", "127.0.0.1", "-p", str(port), "-q", "1", "-c", "-i",
             "heft-test-sub", "-t", topic, "-F", "%t\t%r\t%p"],
            stdout=subprocess.PIPE, stderr=subprocess.DEVNULL)
        threading.Thread(target=self._read, daemon=True).start()

    def _read(self):
        for raw in self.proc.stdout:
            parts = raw.decode("utf-8", "replace").rstrip("\n").split("\t", 2)
            if len(parts) == 3:
                with self.lock:
                    self.messages.append((parts[0], parts[1], parts[2]))

    def snapshot(self):
        with self.lock:
            return list(self.messages)

    def stop(self):
        self.proc.terminate()
        self.proc.wait(5)


class Webhook(http.server.BaseHTTPRequestHandler):
    received = []
    failures_left = 2
    refused = 0
    lock = threading.Lock()

    def do_POST(self):
        body = self.rfile.read(int(self.headers.get("Content-Length", "0")))
        with Webhook.lock:
            fail = Webhook.failures_left > 0
            if fail:
                Webhook.failures_left -= 1
                Webhook.refused += 1
            else:
                Webhook.received.append((self.headers.get("Idempotency-Key"), json.loads(body)))
        self.send_response(503 if fail else 204)
        self.send_header("Content-Length", "0")
        self.end_headers()

    def log_message(self, *args):
        pass


def outbox(db, sql):
    con = sqlite3.connect("file:%s?mode=ro" % db, uri=True, timeout=5)
    try:
        return con.execute(sql).fetchall()
    finally:
        con.close()


def wait_delivered(db, channel, timeout, at_least=1):
    """True once the channel has at least `at_least` rows and none pending."""
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        rows = outbox(db, "SELECT count(*), sum(status = 'pending') FROM alarm_outbox WHERE "
                          "channel = '%s'" % channel)
        if rows[0][0] >= at_least and not rows[0][1]:
            return True
        time.sleep(0.2)
    return False


def routed(db, channel):
    return {r[0] for r in outbox(db, "SELECT event_id FROM alarm_outbox WHERE channel = '%s'"
                                     % channel)}


def body(args):
    if shutil.which("mosquitto") is None or shutil.which("mosquitto_sub") is None:
        raise h.Failure("mosquitto and mosquitto_sub are needed (tools/install-deps)")
    tmp = tempfile.mkdtemp(prefix="heftd-alarms-")
    db = os.path.join(tmp, "heft.db")
    config = os.path.join(tmp, "heftd.yaml")
    hook = os.path.join(tmp, "hook.py")
    hook_out = os.path.join(tmp, "hook.jsonl")
    with open(hook, "w") as f:
        f.write(HOOK)
    os.chmod(hook, 0o755)
    sock_path = os.path.join(tmp, "log.sock")
    syslog = socket.socket(socket.AF_UNIX, socket.SOCK_DGRAM)
    syslog.bind(sock_path)
    syslog.settimeout(0.2)
    datagrams = []

    def read_syslog():
        while True:
            try:
                datagrams.append(syslog.recv(65536).decode())
            except socket.timeout:
                continue
            except OSError:
                return
    threading.Thread(target=read_syslog, daemon=True).start()

    http_server = http.server.ThreadingHTTPServer(("127.0.0.1", 0), Webhook)
    threading.Thread(target=http_server.serve_forever, daemon=True).start()
    mq_port = h.free_port()
    broker = Broker(tmp, mq_port)
    broker.start()
    sub = Subscriber(mq_port, "heft/#")

    h.write_config(config, db)
    with open(config, "a") as f:
        f.write("""alerting:
  messages: %s
  realarm_deadband_s: 0
  chatter_count: 0        # a fast replayed feed is not an operator's minute
  flood_start_above: 1000
  outbox: {retry_min_ms: 100, retry_max_ms: 1000}
  channels:
    - {name: daemon-log, type: log}
    - {name: hook, type: webhook, url: "http://127.0.0.1:%d/heft", timeout_ms: 2000}
    - {name: lamp, type: command, argv: [%s, %s], timeout_ms: 5000}
    - {name: syslog, type: syslog, socket: %s}
    - {name: broker, type: mqtt, port: %d, client_id: heftd-test, timeout_ms: 2000}
""" % (os.path.abspath(os.path.join(args.source_dir, "config", "messages.yaml")),
       http_server.server_port,
       hook, hook_out, sock_path, mq_port))

    feed = os.path.join(args.source_dir, "demo_feeds", "mixed-plant.csv")
    with open(feed, "rb") as f:
        data = f.read()
    lines = data.split(b"\n")
    half = b"\n".join(lines[:len(lines) // 2]) + b"\n"
    rest = b"\n".join(lines[len(lines) // 2:])

    daemon = h.Daemon(args.build_dir, config, db)
    try:
        daemon.wait_listening()
        s = daemon.connect()
        s.sendall(half)
        h.check(wait_delivered(db, "broker", 20), "first half: MQTT deliveries done")
        first = len({json.loads(p)["event_id"] for t, r, p in sub.snapshot()
                     if t.endswith("/event")})
        h.check(first > 0, "subscriber got %d alarm events before the broker stops" % first)

        broker.stop()  # mid-stream
        s.sendall(rest)
        s.close()
        time.sleep(2.0)  # deliveries fail and are retried meanwhile
        pending = outbox(db, "SELECT count(*) FROM alarm_outbox WHERE channel = 'broker' AND "
                             "status = 'pending'")[0][0]
        h.check(pending > 0, "with the broker down, %d MQTT deliveries wait in the outbox"
                % pending)
        broker.start()
        h.check(wait_delivered(db, "broker", 30), "after the restart the MQTT outbox drains")

        # Operator acknowledgement from the CLI while heftd runs.
        active = outbox(db, "SELECT alarm_id FROM alarm_state WHERE state = 'active_unack' "
                            "ORDER BY alarm_id")
        unack = outbox(db, "SELECT alarm_id FROM alarm_state WHERE state IN "
                           "('active_unack', 'cleared_unack') ORDER BY alarm_id")
        h.check(len(unack) > 0, "some alarm awaits acknowledgement (%d)" % len(unack))
        target = (active or unack)[0][0]
        ack = subprocess.run([os.path.join(args.build_dir, "tools", "heft"), "ack", target,
                              "--by", "maria", "--note", "checked the hopper", "--db", db],
                             capture_output=True, text=True, timeout=30)
        h.check(ack.returncode == 0 and "maria" not in ack.stderr and "->" in ack.stdout,
                "heft ack %s: exit %d, %s" % (target, ack.returncode,
                                              (ack.stdout + ack.stderr).strip()))
        again = subprocess.run([os.path.join(args.build_dir, "tools", "heft"), "ack", target,
                                "--db", db], capture_output=True, text=True, timeout=30)
        if target in [a[0] for a in active]:
            h.check(again.returncode == 1 and "nothing to acknowledge" in again.stderr,
                    "a second ack is refused by heftd: %s" % again.stderr.strip())
        acks = outbox(db, "SELECT who, note, to_state FROM alarm_transitions WHERE alarm_id = "
                          "'%s' AND why = 'acknowledged'" % target)
        h.check(acks and acks[0][0] == "maria" and acks[0][1] == "checked the hopper",
                "the acknowledgement is stored with who and why: %s" % acks)
        for channel in ("hook", "lamp", "syslog", "broker"):
            h.check(wait_delivered(db, channel, 30), "channel %s: outbox drained" % channel)

        # MQTT: every routed transition arrived on an event topic; none twice after dedup.
        time.sleep(1.0)
        msgs = sub.snapshot()
        events = [json.loads(p) for t, r, p in msgs if t.endswith("/event")]
        ids = [e["event_id"] for e in events]
        want = routed(db, "broker")
        h.check(set(ids) == want, "MQTT: the %d distinct event ids received = the %d routed"
                % (len(set(ids)), len(want)))
        print("MQTT: %d event messages, %d distinct (%d duplicates dropped)"
              % (len(ids), len(set(ids)), len(ids) - len(set(ids))))
        h.check(all(e["schema"] == 1 and e["state"] and e["message"] for e in events),
                "MQTT event payloads carry schema 1, state and message")
        state_topics = {t for t, r, p in msgs if t.endswith("/state")}
        h.check(any(t.startswith("heft/oats-1/") for t in state_topics),
                "retained per-line state topic published: %s" % sorted(state_topics))
        alarm_topic = [t for t, r, p in msgs if "/alarm/" in t]
        h.check(len(alarm_topic) > 0, "per-alarm state topics published (%d)" % len(alarm_topic))
        status = [p for t, r, p in msgs if t == "heft/status"]
        h.check("online" in status, "birth message 'online' on heft/status")

        # Webhook: failed twice, then everything, deduplicated by Idempotency-Key.
        with Webhook.lock:
            got = [k for k, b in Webhook.received]
            refused = Webhook.refused
            keys_match = all(k == b["event_id"] for k, b in Webhook.received)
        h.check(refused == 2, "the webhook server refused the first 2 attempts (503)")
        h.check(set(got) == routed(db, "hook") and keys_match,
                "webhook: every routed transition arrived (%d), Idempotency-Key = event_id"
                % len(set(got)))

        # Command hook: env vars and stdin JSON agree.
        with open(hook_out) as f:
            calls = [json.loads(line) for line in f]
        h.check({c["stdin"]["event_id"] for c in calls} == routed(db, "lamp"),
                "command hook ran once per routed transition (%d calls)" % len(calls))
        h.check(all(c["env"]["HEFT_EVENT_ID"] == c["stdin"]["event_id"] and
                    c["env"]["HEFT_STATE"] == c["stdin"]["state"] for c in calls),
                "command hook env vars match its JSON stdin")

        # Syslog: RFC 5424 lines, facility local0 (16), severity 4/5/6.
        h.check(len(datagrams) >= len(routed(db, "syslog")) and
                all(d.startswith(("<132>1 ", "<133>1 ", "<134>1 ")) for d in datagrams),
                "syslog: %d RFC 5424 datagrams with PRI 132..134" % len(datagrams))

        # The daemon log keeps ALERT/CLEAR and adds ALARM lines.
        h.check(daemon.count(r" ALERT ") > 0 and daemon.count(r" ALARM ") > 0,
                "daemon log has ALERT and ALARM lines")

        code = daemon.terminate(15)
        h.check(code == 0, "SIGTERM: heftd exits 0 (got %s)" % code)
        time.sleep(0.5)
        last_status = [p for t, r, p in sub.snapshot() if t == "heft/status"]
        h.check(last_status and last_status[-1] == "offline",
                "heftd says 'offline' on heft/status when it stops")
    except BaseException:
        daemon.dump_log()
        raise
    finally:
        daemon.kill()
        sub.stop()
        broker.stop()
        http_server.shutdown()
        syslog.close()
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    h.run_main(body)
