"""heftd's live floor page in a real browser: a test heftd with the HTTP server
on, a two-line feed, then headless Chromium (Debian's `chromium`) loads / and
the test checks the DOM (one tile per line, the live chart drawn by the page's
script) and a screenshot that must not be blank (varied pixel values). Also
checks /healthz, /metrics (Prometheus text 0.0.4) and /api/lines. The config has
an operator token, so unacknowledged alarms get Acknowledge buttons.

Skips (exit 0, 'skipped: chromium not installed') when /usr/bin/chromium is
absent. Run: python3 test_live_page.py --build-dir B --source-dir S
"""

import json
import os
import re
import shutil
import struct
import subprocess
import sys
import tempfile
import time
import urllib.request
import zlib

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402

CHROMIUM = "/usr/bin/chromium"
LINES = ("oats-1", "honey-2")


def png_pixels(path):
    """Decodes an 8-bit RGB/RGBA PNG (what Chromium writes) into rows of bytes."""
    data = open(path, "rb").read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        raise h.Failure("not a PNG: " + path)
    pos, idat, width, height, channels = 8, b"", 0, 0, 0
    while pos < len(data):
        length, kind = struct.unpack(">I4s", data[pos:pos + 8])
        chunk = data[pos + 8:pos + 8 + length]
        if kind == b"IHDR":
            width, height, depth, colour = struct.unpack(">IIBB", chunk[:10])
            if depth != 8 or colour not in (2, 6):
                raise h.Failure("unexpected PNG format depth %d colour %d" % (depth, colour))
            channels = 3 if colour == 2 else 4
        elif kind == b"IDAT":
            idat += chunk
        pos += 12 + length
    raw = zlib.decompress(idat)
    stride = width * channels
    rows, prev, i = [], bytearray(stride), 0
    for _ in range(height):
        kind, line = raw[i], bytearray(raw[i + 1:i + 1 + stride])
        i += 1 + stride
        for x in range(stride):
            a = line[x - channels] if x >= channels else 0
            b = prev[x]
            c = prev[x - channels] if x >= channels else 0
            if kind == 1:
                line[x] = (line[x] + a) & 255
            elif kind == 2:
                line[x] = (line[x] + b) & 255
            elif kind == 3:
                line[x] = (line[x] + (a + b) // 2) & 255
            elif kind == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                pred = a if pa <= pb and pa <= pc else (b if pb <= pc else c)
                line[x] = (line[x] + pred) & 255
        rows.append(bytes(line))
        prev = line
    return width, height, channels, rows


def chromium(args, tmp, timeout=90):
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
           "--no-first-run", "--disable-background-networking", "--disable-component-update",
           "--disable-sync", "--user-data-dir=" + os.path.join(tmp, "chromium-profile"), *args]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=timeout)


def body(args):
    tmp = tempfile.mkdtemp(prefix="heft-live-")
    try:
        db = os.path.join(tmp, "live.db")
        config = os.path.join(tmp, "heftd.yaml")
        # With an operator token: the page shows Acknowledge buttons (test_http_ack.py
        # checks that a page without a token has none).
        h.write_config(config, db, extra_listen="http:\n  address: 127.0.0.1\n  port: 0\n"
                       "  token: millbrook-floor-7f3a9c21d4\n")
        feed = os.path.join(tmp, "feed.csv")
        r = subprocess.run([os.path.join(args.build_dir, "tools", "heft"), "feed", "--scenario",
                            "drift@oats-1,hunting@honey-2", "--seed", "9", "--packs", "1500",
                            # recent times: heftd's first tick prunes samples older than
                            # raw_retention_days (30) by the wall clock
                            "--start", str(int(time.time() * 1000) - 2 * 3600 * 1000),
                            "--out", feed], capture_output=True, timeout=60)
        h.check(r.returncode == 0, "feed generated")
        daemon = h.Daemon(args.build_dir, config, db)
        try:
            daemon.wait_listening()
            m = daemon.wait_for(r"http: serving on (127\.0\.0\.1):(\d+)", 5)
            h.check(m is not None, "heftd serves HTTP on 127.0.0.1")
            base = "http://127.0.0.1:%s" % m.group(2)
            with daemon.connect() as s:
                s.sendall(open(feed, "rb").read())
            h.check(h.wait_samples(db, 3000) == 3000, "3000 packs stored")

            with urllib.request.urlopen(base + "/healthz", timeout=5) as resp:
                h.check(resp.status == 200 and resp.read() == b"ok\n", "/healthz says ok")
            with urllib.request.urlopen(base + "/metrics", timeout=5) as resp:
                ctype = resp.headers["Content-Type"]
                metrics = resp.read().decode()
            h.check(ctype.startswith("text/plain; version=0.0.4"), "/metrics content type " + ctype)
            h.check('heft_line_packs_total{line="oats-1"} 1500' in metrics,
                    "/metrics counts oats-1 packs")
            h.check(re.search(r'^heft_line_sigma_grams\{line="honey-2"\} [0-9.e+-]+$', metrics,
                              re.M) is not None, "/metrics has sigma per line")
            h.check(metrics.endswith("\n") and metrics.count("# TYPE heft_line_level_grams") == 1,
                    "/metrics families appear once, text ends in a newline")
            with urllib.request.urlopen(base + "/api/lines", timeout=5) as resp:
                lines = json.loads(resp.read())["lines"]
            h.check(sorted(l["line"] for l in lines) == sorted(LINES), "/api/lines lists both lines")

            with urllib.request.urlopen(base + "/api/alarms", timeout=5) as resp:
                unack = [a["id"] for a in json.loads(resp.read())["alarms"]
                         if a["state"] == "active_unack"]
            h.check(len(unack) > 0, "/api/alarms has alarms to acknowledge: %s" % unack)

            if not os.path.exists(CHROMIUM):
                return "skipped"
            r = chromium(["--virtual-time-budget=8000", "--dump-dom", base + "/"], tmp)
            dom = r.stdout
            tiles = re.findall(r'<article class="tile [a-z]+( chosen)?" data-line="([^"]+)"', dom)
            h.check(sorted(t[1] for t in tiles) == sorted(LINES),
                    "DOM has one tile per line: %s" % [t[1] for t in tiles])
            h.check(dom.count('class="point"') >= 100,
                    "the page's script drew the live run chart (%d points)"
                    % dom.count('class="point"'))
            h.check(re.search(r'class="level">\d{3}\.\d<', dom) is not None,
                    "tiles show the level in grams")
            buttons = re.findall(r'<button class="ack" type="button" data-alarm="([^"]+)">'
                                 r'Acknowledge</button>', dom)
            with urllib.request.urlopen(base + "/api/alarms", timeout=5) as resp:
                unack += [a["id"] for a in json.loads(resp.read())["alarms"]
                          if a["state"] == "active_unack"]  # silence may start meanwhile
            h.check(len(buttons) > 0 and len(set(buttons)) == len(buttons) and
                    set(buttons) <= set(unack),
                    "Acknowledge buttons, only on unacknowledged alarms: %s" % buttons)
            png = os.environ.get("HEFT_LIVE_PNG") or os.path.join(tmp, "live.png")
            r = chromium(["--virtual-time-budget=8000", "--screenshot=" + png,
                          "--window-size=1280,800", base + "/"], tmp)
            h.check(os.path.exists(png), "screenshot written")
            width, height, channels, rows = png_pixels(png)
            h.check((width, height) == (1280, 800), "screenshot is 1280x800")
            colours = {}
            for row in rows[::4]:
                for x in range(0, width * channels, channels * 4):
                    key = row[x:x + 3]
                    colours[key] = colours.get(key, 0) + 1
            total = sum(colours.values())
            top = max(colours.values()) / total
            h.check(len(colours) > 20 and top < 0.9,
                    "screenshot is not blank: %d colours, commonest %.0f %%"
                    % (len(colours), top * 100))
        finally:
            code = daemon.terminate()
            if code is None:
                daemon.kill()
        h.check(code == 0, "heftd stopped cleanly with the HTTP server on")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


def main():
    args = h.parse_args()
    try:
        outcome = body(args)
    except h.Failure as e:
        print("FAILED: %s" % e, flush=True)
        print("0 passed, 1 failed, 0 skipped")
        sys.exit(1)
    if outcome == "skipped":
        print("skipped: chromium not installed")
        print("0 passed, 0 failed, 1 skipped")
    else:
        print("1 passed, 0 failed, 0 skipped")
    sys.exit(0)


if __name__ == "__main__":
    main()
