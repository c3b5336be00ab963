"""Process test for `heft events`: output formats, filters and error exits.

Builds a schema-version-1 database with Python's sqlite3 (as an older heft
would have left it), so it also checks that the read-only path reads an older
schema without migrating it. Standard library only; exit 0 = pass.
"""

import argparse
import csv
import io
import json
import os
import re
import shutil
import sqlite3
import subprocess
import sys
import tempfile

# Schema version 1 as in lib/io/sqlite_store.cpp (kMigrations[0]).
SCHEMA_V1 = """
CREATE TABLE lines (line TEXT PRIMARY KEY, product TEXT NOT NULL DEFAULT '', nominal_g REAL,
  target_g REAL, heads INTEGER NOT NULL DEFAULT 0, updated_ms INTEGER NOT NULL);
CREATE TABLE events (id INTEGER PRIMARY KEY,
  transition TEXT NOT NULL CHECK (transition IN ('raised', 'cleared')), kind TEXT NOT NULL,
  severity TEXT NOT NULL, line TEXT NOT NULL, record_index INTEGER NOT NULL,
  at_ms INTEGER NOT NULL, onset_index INTEGER, onset_ms INTEGER, end_index INTEGER,
  size_g REAL, size_sigma REAL, level_g REAL, period_packs REAL, head INTEGER,
  detector TEXT NOT NULL DEFAULT '', message TEXT NOT NULL DEFAULT '',
  source TEXT NOT NULL DEFAULT '', recorded_ms INTEGER NOT NULL);
CREATE TABLE samples (line TEXT NOT NULL, source TEXT NOT NULL, record_index INTEGER NOT NULL,
  time_ms INTEGER NOT NULL, grams REAL NOT NULL, head INTEGER,
  status INTEGER NOT NULL CHECK (status BETWEEN 0 AND 2));
CREATE INDEX samples_line_time ON samples(line, time_ms);
PRAGMA user_version = 1;
"""

T0 = 1772431200000  # 2026-03-02T06:00:00Z

# Millbrook Oat Co. (invented): oats-1 500 g bags, honey-2 340 g jars.
EVENTS = [
    # transition, kind, severity, line, record_index, at_ms, onset, size_g, head, message
    ("raised", "shift", "warning", "oats-1", 1234, T0 + 877500, 1180, 2.5, 7,
     "Line oats-1: fill weight up 2.5 g on head 7."),
    ("raised", "stuck", "alarm", "honey-2", 20, T0 + 900000, None, None, None,
     'Line honey-2: same weight 20 times, "check the load cell",\nnow.'),
    ("cleared", "shift", "info", "oats-1", 2400, T0 + 1460000, 1180, -0.125, 7,
     "Line oats-1: head 7 back on target."),
]


class Failure(Exception):
    pass


def check(condition, what):
    print(("ok    " if condition else "FAIL  ") + what, flush=True)
    if not condition:
        raise Failure(what)


def make_db(path):
    db = sqlite3.connect(path)
    db.executescript(SCHEMA_V1)
    db.execute("PRAGMA journal_mode = WAL")
    for (transition, kind, severity, line, index, at_ms, onset, size_g, head, message) in EVENTS:
        db.execute(
            "INSERT INTO events(transition, kind, severity, line, record_index, at_ms, "
            "onset_index, size_g, head, detector, message, source, recorded_ms) "
            "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, 'cusum', ?, 'tcp:127.0.0.1:41234', ?)",
            (transition, kind, severity, line, index, at_ms, onset, size_g, head, message,
             at_ms + 12))
    db.commit()
    db.close()


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--build-dir", required=True)
    parser.add_argument("--source-dir", required=True)
    args = parser.parse_args()
    heft = os.path.join(args.build_dir, "tools", "heft")
    # The schema version this heft writes, as declared in the store's header.
    with open(os.path.join(args.source_dir, "lib", "io", "sqlite_store.h")) as header:
        current_version = int(re.search(r"kSchemaVersion = (\d+);", header.read()).group(1))
    check(os.access(heft, os.X_OK), f"heft is built at {heft}")

    tmp = tempfile.mkdtemp(prefix="heft-events-test-")
    try:
        db = os.path.join(tmp, "heft.db")
        make_db(db)

        def run(*extra):
            return subprocess.run([heft, "events", *extra], capture_output=True, text=True,
                                  timeout=60)

        r = run("--db", db)
        check(r.returncode == 0, f"table exits 0 (stderr: {r.stderr.strip()})")
        rows = r.stdout.splitlines()
        check(len(rows) == 4, "table: a header and three rows (the message newline is flattened)")
        check(rows[0].startswith("time (UTC)"), "table: header first")
        check("2026-03-02 06:14:37.500" in rows[1] and "+2.500" in rows[1],
              "table: time in UTC and signed size")
        check(rows[1].index("oats-1") == rows[3].index("oats-1"), "table: columns aligned")

        r = run("--db", db, "--format", "csv")
        check(r.returncode == 0, "csv exits 0")
        records = list(csv.DictReader(io.StringIO(r.stdout)))
        check(len(records) == 3, "csv: three records")
        check(records[1]["message"] == EVENTS[1][9], "csv: quotes, comma and newline survive")
        check(records[0]["size_g"] == "2.500" and records[1]["size_g"] == "",
              "csv: size fixed 3 decimals, empty when unknown")
        check(records[2]["time"] == "2026-03-02T06:24:20.000Z", "csv: ISO-8601 time")

        r = run("--db", db, "--format", "json", "--line", "oats-1")
        check(r.returncode == 0, "json exits 0")
        objects = [json.loads(line) for line in r.stdout.splitlines()]
        check([o["at"] for o in objects] == [1234, 2400], "json --line oats-1: two events in order")
        check(list(objects[0].keys())[:8] ==
              ["event", "kind", "line", "at", "onset", "end", "severity", "message"],
              "json: fixed key order")
        check(objects[0]["source"] == "tcp:127.0.0.1:41234" and
              objects[0]["recorded"] == "2026-03-02T06:14:37.512Z",
              "json: source and recorded added")
        check(r.stdout.splitlines()[1].endswith(
            '"size_g":-0.125,"head":7,"detector":"cusum","source":"tcp:127.0.0.1:41234",'
            '"recorded":"2026-03-02T06:24:20.012Z"}'), "json: exact tail bytes")

        r = run("--db", db, "--format", "json", "--kind", "shift",
                "--since", "2026-03-02T06:15:00Z", "--until", str(T0 + 1460001))
        check([json.loads(line)["at"] for line in r.stdout.splitlines()] == [2400],
              "--kind with --since (ISO) and --until (epoch ms)")
        r = run("--db", db, "--format", "json", "--limit", "2")
        check(len(r.stdout.splitlines()) == 2, "--limit 2")
        r = run("--db", db, "--until", str(T0))
        check(r.returncode == 0 and r.stdout == "no events\n", "no match: 'no events', exit 0")

        version = sqlite3.connect(db).execute("PRAGMA user_version").fetchone()[0]
        check(version == 1, "read-only use left the version 1 schema alone")

        r = run("--help")
        check(r.returncode == 0 and r.stdout.startswith("usage: heft events"), "--help")

        def fails(args_, needle, what):
            r = run(*args_)
            lines = r.stderr.splitlines()
            check(r.returncode == 2 and len(lines) == 1 and needle in lines[0],
                  f"{what}: exit 2, one stderr line (got {r.returncode}: {r.stderr.strip()!r})")

        missing = os.path.join(tmp, "missing.db")
        fails(["--db", missing], f"no database at {missing}", "missing database")
        check(not os.path.exists(missing), "a missing database is not created")
        fails(["--db", db, "--kind", "wobble"], "valid: shift, drift", "bad --kind")
        fails(["--db", db, "--since", "yesterday"], "--since 'yesterday'", "bad --since")
        fails(["--db", db, "--until", "2026-13-01T00:00:00Z"], "--until", "bad --until")
        fails(["--db", db, "--limit", "ten"], "--limit 'ten'", "bad --limit")
        fails(["--db", db, "--format", "xml"], "valid: table, csv, json", "bad --format")
        fails([], "--db FILE is required", "no --db")
        text_file = os.path.join(tmp, "notes.db")
        with open(text_file, "w") as f:
            f.write("time,line,head,weight\n" + "x" * 2000 + "\n")
        fails(["--db", text_file], "not a heft database", "a text file")

        newer = os.path.join(tmp, "newer.db")
        shutil.copy(db, newer)
        conn = sqlite3.connect(newer)
        conn.execute("PRAGMA user_version = 99")
        conn.commit()
        conn.close()
        fails(["--db", newer],
              f"{newer}: database schema version 99 is newer than this heft ({current_version}); "
              "upgrade heft",
              "newer schema")
    except Failure:
        return 1
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    print("all checks passed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
