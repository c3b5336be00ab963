"""heftd alarm delivery to an MQTT broker over TLS, loopback only.

A real mosquitto broker with only a TLS listener (cafile/certfile/keyfile made
at test time with the openssl CLI, tls_certs.py) on a free port; mosquitto_sub
subscribes through TLS with --cafile (host name checked). heftd's "broker"
channel (tls: {ca_file: the test CA}, host localhost: name verified) must
deliver every routed transition; a second channel told to trust another CA
must deliver nothing and keep its rows pending.
Standard library plus the Debian mosquitto, mosquitto-clients and openssl tools.
"""

import json
import os
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import threading
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402
import tls_certs  # noqa: E402
from alarm_outbox import query, routed, wait_delivered  # noqa: E402


class Subscriber:
    def __init__(self, port, ca):
        self.messages = []
        self.lock = threading.Lock()
        self.proc = subprocess.Popen(
            ["mosquitto_sub", "-h", "localhost", "-p", str(port), "--cafile", ca, "-q", "1",
             "-t", "heft/#", "-t", "probe", "-F", "%t\t%p"],
            stdout=subprocess.PIPE, stderr=subprocess.DEVNULL)
        threading.Thread(target=self._read, daemon=True).start()

    def _read(self):
        for raw in self.proc.stdout:
            parts = raw.decode("utf-8", "replace").rstrip("\n").split("\t", 1)
            if len(parts) == 2:
                with self.lock:
                    self.messages.append((parts[0], parts[1]))

    def snapshot(self):
        with self.lock:
            return list(self.messages)

    def stop(self):
        self.proc.terminate()
        self.proc.wait(5)


def body(args):
    for tool in ("mosquitto", "mosquitto_sub", "mosquitto_pub", "openssl"):
        if shutil.which(tool) is None:
            raise h.Failure("%s is needed (tools/install-deps)" % tool)
    tmp = tempfile.mkdtemp(prefix="heftd-mqtt-tls-")
    broker = sub = daemon = None
    try:
        ca = tls_certs.make_ca(tmp, "plant-ca")
        rogue = tls_certs.make_ca(tmp, "rogue-ca")
        cert = tls_certs.make_server_cert(tmp, "broker", ca, "DNS:localhost,IP:127.0.0.1")
        # Started as root, mosquitto drops to its own user: let it read the files.
        os.chmod(tmp, 0o755)
        for name in os.listdir(tmp):
            os.chmod(os.path.join(tmp, name), 0o644)
        port = h.free_port()
        conf = os.path.join(tmp, "mosquitto.conf")
        with open(conf, "w") as f:
            f.write("listener %d 127.0.0.1\nallow_anonymous true\ncafile %s\ncertfile %s\n"
                    "keyfile %s\ntls_version tlsv1.2\n" % (port, ca[0], cert[0], cert[1]))
        broker = subprocess.Popen(["mosquitto", "-c", conf], stdout=subprocess.DEVNULL,
                                  stderr=subprocess.DEVNULL)
        deadline = time.monotonic() + 10
        while True:
            try:
                socket.create_connection(("127.0.0.1", port), timeout=1).close()
                break
            except OSError:
                if time.monotonic() > deadline:
                    raise h.Failure("mosquitto did not listen on %d" % port)
                time.sleep(0.05)

        sub = Subscriber(port, ca[0])
        # The subscription is in place once a probe published through TLS comes back.
        deadline = time.monotonic() + 10
        while not any(t == "probe" for t, p in sub.snapshot()):
            if time.monotonic() > deadline:
                raise h.Failure("mosquitto_sub --cafile got no probe through the TLS listener")
            subprocess.run(["mosquitto_pub", "-h", "localhost", "-p", str(port), "--cafile",
                            ca[0], "-t", "probe", "-m", "x"], timeout=10,
                           stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
            time.sleep(0.3)
        h.check(True, "mosquitto_sub and mosquitto_pub talk to the broker through TLS")

        db = os.path.join(tmp, "heft.db")
        config = os.path.join(tmp, "heftd.yaml")
        h.write_config(config, db)
        with open(config, "a") as f:
            f.write("""alerting:
  realarm_deadband_s: 0
  chatter_count: 0
  flood_start_above: 1000
  outbox: {retry_min_ms: 100, retry_max_ms: 1000}
  channels:
    - name: broker
      type: mqtt
      host: localhost
      port: %d
      client_id: heftd-tls-test
      timeout_ms: 3000
      tls: {ca_file: %s}
    - {name: distrusting, type: mqtt, host: localhost, port: %d, client_id: heftd-tls-other,
       timeout_ms: 3000, topic_prefix: other, tls: {ca_file: %s}}
""" % (port, ca[0], port, rogue[0]))

        daemon = h.Daemon(args.build_dir, config, db)
        daemon.wait_listening()
        h.send_feed(daemon, os.path.join(args.source_dir, "demo_feeds", "mixed-plant.csv"))
        h.check(wait_delivered(db, "broker", 60), "broker: the outbox drains over TLS")
        time.sleep(1.0)
        want = routed(db, "broker")
        events = [json.loads(p) for t, p in sub.snapshot() if t.endswith("/event")]
        got = {e["event_id"] for e in events}
        h.check(len(want) > 0 and got == want,
                "subscriber (--cafile) got all %d routed transitions (%d messages)"
                % (len(want), len(events)))
        h.check(any(t == "heft/status" and p == "online" for t, p in sub.snapshot()),
                "birth message 'online' on heft/status")

        rows = query(db, "SELECT status, attempts, last_error FROM alarm_outbox WHERE channel = "
                         "'distrusting'")
        h.check(len(rows) == len(want) and all(r[0] == "pending" for r in rows)
                and any(r[1] >= 1 for r in rows),
                "distrusting (other CA): nothing delivered, %d rows pending: %s"
                % (len(rows), rows[0][2] if rows else ""))
        h.check(not any(t.startswith("other/") for t, p in sub.snapshot()),
                "nothing arrived from the distrusting channel")

        code = daemon.terminate(15)
        h.check(code == 0, "SIGTERM: heftd exits 0 (got %s)" % code)
        time.sleep(0.5)
        last = [p for t, p in sub.snapshot() if t == "heft/status"]
        h.check(last and last[-1] == "offline", "heftd says 'offline' when it stops")
    except BaseException:
        if daemon is not None:
            daemon.dump_log()
        raise
    finally:
        if daemon is not None:
            daemon.kill()
        if sub is not None:
            sub.stop()
        if broker is not None and broker.poll() is None:
            broker.send_signal(signal.SIGTERM)
            broker.wait(10)
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    h.run_main(body)
