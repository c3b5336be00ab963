"""heft summary / export / lines / report against a database that heftd is
writing at the same time, then the same commands on the finished database:
known answers (pack counts, mean from the exported CSV recomputed with
numpy), error messages, and the HTML report parsed as well-formed XML and
checked with html.parser.

Run: python3 test_history_commands.py --build-dir B --source-dir S (exit 0 = pass)
"""

import csv
import io
import json
import os
import shutil
import sqlite3
import subprocess
import sys
import tempfile
import threading
import time
import xml.etree.ElementTree as ET
from html.parser import HTMLParser

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402

try:
    import numpy as np  # Debian python3-numpy
except ImportError:  # CTest may find a python3 without numpy; Debian's has it
    if sys.executable != "/usr/bin/python3" and os.path.exists("/usr/bin/python3"):
        os.execv("/usr/bin/python3", ["/usr/bin/python3"] + sys.argv)
    raise


def heft(args, build_dir, **kw):
    return subprocess.run([os.path.join(build_dir, "tools", "heft"), *args],
                          capture_output=True, text=True, timeout=60, **kw)


class TagBalance(HTMLParser):
    """Counts open/close tags (void elements excepted) to see they balance."""
    VOID = {"meta", "br", "link", "img", "input", "hr"}

    def __init__(self):
        super().__init__()
        self.stack = []
        self.errors = []
        self.svgs = 0

    def handle_starttag(self, tag, attrs):
        if tag == "svg":
            self.svgs += 1
        if tag not in self.VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        pass

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append("unexpected </%s> (open: %s)" % (tag, self.stack[-3:]))
            return
        self.stack.pop()


def body(args):
    build, source = args.build_dir, args.source_dir
    tmp = tempfile.mkdtemp(prefix="heft-history-")
    try:
        db = os.path.join(tmp, "plant.db")
        config = os.path.join(tmp, "heftd.yaml")
        h.write_config(config, db)
        feed = os.path.join(tmp, "feed.csv")
        r = heft(["feed", "--scenario", "drift@oats-1,hunting@honey-2", "--seed", "5",
                  "--packs", "2000", "--out", feed], build)
        h.check(r.returncode == 0, "heft feed wrote a two-line feed")
        total = sum(1 for _ in open(feed)) - 1

        daemon = h.Daemon(build, config, db)
        try:
            daemon.wait_listening()
            # Send the feed in slices while the queries run.
            lines = open(feed, "rb").read().splitlines(keepends=True)
            header, records = lines[0], lines[1:]
            done = threading.Event()

            def sender():
                with daemon.connect() as s:
                    s.sendall(header)
                    for i in range(0, len(records), 100):
                        s.sendall(b"".join(records[i:i + 100]))
                        time.sleep(0.1)
                done.set()

            t = threading.Thread(target=sender)
            t.start()
            seen = []
            failures = []
            while not done.is_set() or len(seen) < 3:
                r = heft(["summary", "--db", db, "--line", "oats-1", "--format", "json"], build)
                if r.returncode != 0:
                    failures.append(r.stderr)
                else:
                    seen.append(json.loads(r.stdout)["packs"])
                r2 = heft(["lines", "--db", db, "--format", "csv"], build)
                if r2.returncode != 0:
                    failures.append(r2.stderr)
                if done.is_set() and len(seen) >= 3:
                    break
            t.join()
            h.check(not failures, "queries while heftd writes all succeeded (%d runs) %s"
                    % (len(seen), failures[:1]))
            h.check(all(a <= b for a, b in zip(seen, seen[1:])),
                    "pack counts seen while writing never go down: %s" % seen[:8])
            h.check(any(0 < n < 2000 for n in seen),
                    "some queries ran mid-feed (saw partial counts %s)"
                    % sorted(set(int(n) for n in seen))[:6])
            got = h.wait_samples(db, total)
            h.check(got == total, "all %d packs stored (got %d)" % (total, got))
        finally:
            code = daemon.terminate()
            if code is None:
                daemon.kill()
        h.check(code == 0, "heftd stopped cleanly")

        # Known answers on the finished database.
        con = sqlite3.connect("file:%s?mode=ro" % db, uri=True)
        oats = [row[0] for row in con.execute(
            "SELECT grams FROM samples WHERE line='oats-1' AND status=0 ORDER BY time_ms, rowid")]
        con.close()
        r = heft(["summary", "--db", db, "--line", "oats-1", "--format", "json"], build)
        s = json.loads(r.stdout)
        h.check(s["packs"] == 2000, "summary: 2000 packs on oats-1 (%s)" % s["packs"])
        # numpy reference for the figures (rounded to 4 decimals in the output).
        h.check(abs(s["mean_g"] - np.mean(oats)) < 1e-4, "summary mean = numpy mean")
        h.check(abs(s["sd_g"] - np.std(oats, ddof=1)) < 1e-4, "summary sd = numpy std(ddof=1)")
        q1, med, q3 = np.quantile(oats, [0.25, 0.5, 0.75])
        h.check(abs(s["q1_g"] - q1) < 1e-4 and abs(s["median_g"] - med) < 1e-4
                and abs(s["q3_g"] - q3) < 1e-4, "summary quartiles = numpy type 7")
        h.check(s["tne_g"] == 15.0 and s["t1_g"] == 485.0, "500 g: TNE 15 g, T1 485 g")
        h.check(abs(s["giveaway_per_pack_g"] - (np.mean(oats) - 500.0)) < 1e-4,
                "giveaway per pack = mean - nominal")
        below_t1 = sum(1 for g in oats if g < 485.0)
        h.check(s["below_t1"] == below_t1, "packs below T1 = %d" % below_t1)

        # Time range: from inclusive, to exclusive.
        r = heft(["export", "--db", db, "--line", "oats-1", "--from", "2026-03-02T06:05:00Z",
                  "--to", "2026-03-02T06:10:00Z"], build)
        h.check(r.returncode == 0, "export with a range runs")
        rows = list(csv.reader(io.StringIO(r.stdout)))
        h.check(rows[0] == ["time", "line", "head", "weight", "status"], "export header is native")
        times = [x[0] for x in rows[1:]]
        h.check(len(times) > 0 and min(times) >= "2026-03-02T06:05:00"
                and max(times) < "2026-03-02T06:10:00", "export keeps to the range (%d rows)"
                % len(times))
        r = heft(["export", "--db", db, "--line", "oats-1"], build)
        exported = list(csv.reader(io.StringIO(r.stdout)))[1:]
        h.check(len(exported) == 2000, "full export has every pack")
        # The export is a feed again: replay reads it without errors.
        out_csv = os.path.join(tmp, "export.csv")
        with open(out_csv, "w") as f:
            f.write(r.stdout)
        rr = heft(["replay", out_csv, "--config", config, "--events-out", "-"], build)
        h.check(rr.returncode == 0 and " 0 malformed" in rr.stderr, "heft replay reads the export (exit %d) %s"
                % (rr.returncode, rr.stderr.strip()[-200:]))

        r = heft(["lines", "--db", db, "--format", "json"], build)
        lines = {x["line"]: x for x in json.loads(r.stdout)}
        h.check(set(lines) == {"oats-1", "honey-2"}, "lines: the two configured lines")
        h.check(lines["oats-1"]["packs"] == 2000 and lines["oats-1"]["nominal_g"] == 500,
                "lines: oats-1 packs and nominal")
        r = heft(["lines", "--db", db], build)
        h.check(r.stdout.splitlines()[0].split()[0] == "line", "lines: aligned table header")

        # Errors.
        r = heft(["summary", "--db", os.path.join(tmp, "none.db"), "--line", "x"], build)
        h.check(r.returncode == 2 and "no database" in r.stderr, "missing database: " + r.stderr.strip())
        r = heft(["summary", "--db", db, "--line", "oats-1", "--from", "yesterday"], build)
        h.check(r.returncode == 2 and "--from 'yesterday' is not a time" in r.stderr,
                "malformed time: " + r.stderr.strip())
        newer = os.path.join(tmp, "newer.db")
        shutil.copy(db, newer)
        con = sqlite3.connect(newer)
        con.execute("PRAGMA user_version = 99")
        con.commit()
        con.close()
        r = heft(["lines", "--db", newer], build)
        h.check(r.returncode == 2 and "newer than this heft" in r.stderr,
                "newer schema: " + r.stderr.strip())
        r = heft(["report", "--db", db, "--line", "oats-1", "--svg", "pie", "--out", "-"], build)
        h.check(r.returncode == 2 and "unknown chart" in r.stderr, "unknown chart refused")

        # The report: well-formed, self-contained, all charts.
        html_path = os.path.join(tmp, "report.html")
        r = heft(["report", "--db", db, "--line", "oats-1", "--out", html_path], build)
        h.check(r.returncode == 0, "report written: " + r.stderr.strip())
        text = open(html_path, encoding="utf-8").read()
        try:
            root = ET.fromstring(text.replace("<!DOCTYPE html>", "", 1))
            ok = True
        except ET.ParseError as e:
            ok = False
            print("  parse error:", e)
        h.check(ok, "report parses as well-formed XML (xml.etree)")
        parser = TagBalance()
        parser.feed(text)
        h.check(not parser.errors and not parser.stack, "html.parser: tags balance %s"
                % parser.errors[:2])
        h.check(parser.svgs >= 4, "report holds %d inline SVG charts" % parser.svgs)
        h.check("<script" not in text and "src=" not in text and "href=" not in text,
                "no script and no external references")
        h.check(len(text) < 400_000, "report size %d bytes" % len(text))
        svg_path = os.path.join(tmp, "hist.svg")
        r = heft(["report", "--db", db, "--line", "oats-1", "--svg", "histogram", "--out",
                  svg_path], build)
        svg = ET.parse(svg_path).getroot()
        ns = "{http://www.w3.org/2000/svg}"
        bars = [e for e in svg.iter(ns + "rect") if e.get("class") == "bar"]
        h.check(sum(int(b.get("data-count")) for b in bars) == len(oats),
                "histogram bars hold every ok pack (%d bars)" % len(bars))
        refs = {e.get("class"): float(e.get("data-value")) for e in svg.iter(ns + "line")
                if (e.get("class") or "").startswith("ref ")}
        h.check(refs == {"ref ref-nominal": 500.0, "ref ref-t1": 485.0, "ref ref-t2": 470.0},
                "histogram lines at nominal, T1 and T2: %s" % refs)
        # Empty range: still a valid report.
        r = heft(["report", "--db", db, "--line", "oats-1", "--from", "2030-01-01T00:00:00Z",
                  "--out", html_path], build)
        text = open(html_path, encoding="utf-8").read()
        ET.fromstring(text.replace("<!DOCTYPE html>", "", 1))
        h.check(r.returncode == 0 and "No packs in this range" in text,
                "empty range gives a valid report saying so")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    h.run_main(body)
