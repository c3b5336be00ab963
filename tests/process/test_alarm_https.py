"""heftd alarm delivery to https:// webhooks, loopback only.

Certificates are made at test time with the openssl CLI (tls_certs.py): a
test CA, a server certificate for localhost / 127.0.0.1 signed by it, one
signed by a CA heftd is not told to trust, and one for another host name.
Python's http.server behind ssl serves them.

- "secure" (https://localhost, ca_file = the test CA): the server answers
  HTTP 500 to the first 3 attempts, then 204. Every routed transition must
  arrive with its event id (after dropping duplicates), none lost, and the
  client must have sent SNI "localhost".
- "by-ip" (https://127.0.0.1): the address is matched against the IP SAN.
- "untrusted" (server certificate from another CA), "wrong-name" (certificate
  for elsewhere.invalid) and "no-ca" (no ca_file: the system store, which does
  not hold the test CA): nothing is delivered, the log names the certificate
  problem, and every row stays pending in the outbox, also after heftd stops.
"""

import http.server
import json
import os
import shutil
import ssl
import sys
import tempfile
import threading
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402
import tls_certs  # noqa: E402
from alarm_outbox import query, routed, wait_delivered  # noqa: E402


class Server:
    """An HTTPS server on a free loopback port with its own handler state."""

    def __init__(self, cert, fail_first=0):
        self.received = []  # (path, Idempotency-Key, body JSON)
        self.refused = 0
        self.fail_left = fail_first
        self.sni = []
        self.lock = threading.Lock()
        outer = self

        class Handler(http.server.BaseHTTPRequestHandler):
            def do_POST(self):
                body = self.rfile.read(int(self.headers.get("Content-Length", "0")))
                with outer.lock:
                    fail = outer.fail_left > 0
                    if fail:
                        outer.fail_left -= 1
                        outer.refused += 1
                    else:
                        outer.received.append((self.path, self.headers.get("Idempotency-Key"),
                                               json.loads(body)))
                self.send_response(500 if fail else 204)
                self.send_header("Content-Length", "0")
                self.end_headers()

            def log_message(self, *args):
                pass

        def on_sni(sock, name, ctx):
            with outer.lock:
                outer.sni.append(name)

        context = ssl.SSLContext(ssl.PROTOCOL_TLS_SERVER)
        context.load_cert_chain(cert[0], cert[1])
        context.sni_callback = on_sni
        self.httpd = http.server.ThreadingHTTPServer(("127.0.0.1", 0), Handler)
        self.httpd.socket = context.wrap_socket(self.httpd.socket, server_side=True)
        self.port = self.httpd.server_port
        threading.Thread(target=self.httpd.serve_forever, daemon=True).start()

    def stop(self):
        self.httpd.shutdown()


def body(args):
    tmp = tempfile.mkdtemp(prefix="heftd-https-")
    servers = []
    daemon = None
    try:
        ca = tls_certs.make_ca(tmp, "plant-ca")
        rogue = tls_certs.make_ca(tmp, "rogue-ca")
        good = Server(tls_certs.make_server_cert(tmp, "hook", ca, "DNS:localhost,IP:127.0.0.1"),
                      fail_first=3)
        untrusted = Server(tls_certs.make_server_cert(tmp, "imposter", rogue,
                                                      "DNS:localhost,IP:127.0.0.1"))
        wrong_name = Server(tls_certs.make_server_cert(tmp, "elsewhere", ca,
                                                       "DNS:elsewhere.invalid"))
        servers = [good, untrusted, wrong_name]

        db = os.path.join(tmp, "heft.db")
        config = os.path.join(tmp, "heftd.yaml")
        h.write_config(config, db)
        with open(config, "a") as f:
            f.write("""alerting:
  realarm_deadband_s: 0
  chatter_count: 0        # a fast replayed feed is not an operator's minute
  flood_start_above: 1000
  outbox: {retry_min_ms: 100, retry_max_ms: 1000}
  channels:
    - {name: secure, type: webhook, url: "https://localhost:%d/heft", tls: {ca_file: %s}}
    - {name: by-ip, type: webhook, url: "https://127.0.0.1:%d/by-ip", tls: {ca_file: %s}}
    - {name: untrusted, type: webhook, url: "https://localhost:%d/heft", tls: {ca_file: %s}}
    - {name: wrong-name, type: webhook, url: "https://localhost:%d/heft", tls: {ca_file: %s}}
    - {name: no-ca, type: webhook, url: "https://localhost:%d/no-ca"}
""" % (good.port, ca[0], good.port, ca[0], untrusted.port, ca[0], wrong_name.port, ca[0],
                good.port))

        daemon = h.Daemon(args.build_dir, config, db)
        daemon.wait_listening()
        h.send_feed(daemon, os.path.join(args.source_dir, "demo_feeds", "mixed-plant.csv"))

        h.check(wait_delivered(db, "secure", 60), "secure: the outbox drains")
        h.check(wait_delivered(db, "by-ip", 30), "by-ip: the outbox drains")
        with good.lock:
            got = {k for p, k, b in good.received if p == "/heft"}
            keys_match = all(k == b["event_id"] for p, k, b in good.received)
            by_ip = {k for p, k, b in good.received if p == "/by-ip"}
            no_ca = [k for p, k, b in good.received if p == "/no-ca"]
            refused = good.refused
            sni = set(good.sni)
        want = routed(db, "secure")
        h.check(refused == 3, "the server answered HTTP 500 to the first 3 attempts")
        h.check(len(want) > 0 and got == want and keys_match,
                "secure: all %d routed transitions arrived, Idempotency-Key = event_id"
                % len(want))
        h.check(by_ip == routed(db, "by-ip"), "by-ip: all %d arrived (IP SAN matched)"
                % len(by_ip))
        # None: a handshake without SNI (by-ip: RFC 6066 sends no address as a name).
        h.check("localhost" in sni and sni <= {"localhost", None},
                "SNI sent for the host name: %s" % sorted(str(x) for x in sni))
        h.check(not no_ca, "no-ca: nothing delivered without a trusted CA")

        time.sleep(1.5)  # a few more retries of the refused channels
        for channel, problem in (("untrusted", "unable to get local issuer certificate"),
                                 ("wrong-name", "hostname mismatch"),
                                 ("no-ca", "unable to get local issuer certificate")):
            rows = query(db, "SELECT status, attempts, last_error FROM alarm_outbox WHERE "
                             "channel = ?", channel)
            h.check(len(rows) == len(want) and all(r[0] == "pending" for r in rows),
                    "%s: all %d rows still pending" % (channel, len(rows)))
            h.check(any(r[1] >= 2 for r in rows), "%s: retried (attempts %s)"
                    % (channel, max(r[1] for r in rows)))
            h.check(all(r[2] == "" or problem in r[2] for r in rows)
                    and any(problem in r[2] for r in rows),
                    "%s: last_error names the problem: %s" % (channel, rows[0][2]))
            m = daemon.wait_for(r"channel %s: delivery failed, will retry: .*TLS handshake: "
                                r"certificate verify failed: %s" % (channel, problem), 5)
            h.check(m is not None, "%s: the log says why (%s)" % (channel, problem))
        h.check(daemon.wait_for(r"no-ca: .*trusted: the system CA store", 1) is not None,
                "no-ca: the log says the system store was used")
        with untrusted.lock, wrong_name.lock:
            h.check(not untrusted.received and not wrong_name.received,
                    "the refused servers never got a request")

        code = daemon.terminate(15)
        h.check(code == 0, "SIGTERM: heftd exits 0 (got %s)" % code)
        for channel in ("untrusted", "wrong-name", "no-ca"):
            pending = query(db, "SELECT count(*) FROM alarm_outbox WHERE channel = ? AND "
                                "status = 'pending'", channel)[0][0]
            h.check(pending == len(want), "%s: %d rows kept in the outbox after the stop"
                    % (channel, pending))
    except BaseException:
        if daemon is not None:
            daemon.dump_log()
        raise
    finally:
        if daemon is not None:
            daemon.kill()
        for server in servers:
            server.stop()
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    h.run_main(body)
