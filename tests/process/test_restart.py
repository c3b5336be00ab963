"""Restart without amnesia: heftd stopped with SIGTERM in the middle of a feed and
started again on the same database continues every line where it was.

Run: python3 test_restart.py --build-dir B --source-dir S  (exit 0 = pass)

The feed (made here, seeded): one 12-head line oats-1 at 503 g (sigma 1.6 g,
2 packs/s) from 06:40 to 07:08, with a +2.5 sigma step from record 1200 to
2600. heftd takes records 0..1799 over one connection (the shift is open and
the 06:00 hourly lot holds 1800 packs), is stopped with SIGTERM, started again
on the same database, and takes records 1800..3399 over a new connection.

Checks:
- the first stop saved a checkpoint and closed no lot (no partial lot row);
- the shift is raised once in the events table and its clear comes after the
  restart; no second `settling` and no second `shift raised`;
- the 06:00 lot is one row with every pack of its hour (1800 before the stop and
  600 after), figures equal to `heft replay --lots-out` of the whole feed (to the 4
  decimals its JSON has);
- every event equals replay's for the whole feed, in order, on transition, kind,
  record index, onset and end. The daemon numbers records per connection, so
  after the restart its record indexes start at 0 again: indexes of the second
  connection are compared after adding the 1800 records of the first (onsets
  that point back into the first connection are not shifted; the test says
  which when there are any).
"""

import json
import math
import os
import random
import shutil
import sqlite3
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402

BREAK = 1800
TOTAL = 3400
START_MS = 1772433600000  # 2026-03-02T06:40:00Z

LINES_YAML = """\
  - id: oats-1
    product: Rolled oats 500 g
    nominal_g: 500
    target_g: 503
    heads: 12
"""


def iso(ms):
    import datetime
    t = datetime.datetime.fromtimestamp(ms / 1000, tz=datetime.timezone.utc)
    return t.strftime("%Y-%m-%dT%H:%M:%S.") + "%03dZ" % (ms % 1000)


def make_feed():
    rng = random.Random(20260302)
    rows = ["time,line,head,weight"]
    ar = 0.0
    for i in range(TOTAL):
        ar = 0.2 * ar + math.sqrt(1 - 0.04) * rng.gauss(0, 1)
        x = 503.0 + 1.6 * ar
        if 1200 <= i < 2600:
            x += 2.5 * 1.6
        rows.append("%s,oats-1,%d,%.1f" % (iso(START_MS + 500 * i), i % 12, x))
    return [r.encode() + b"\n" for r in rows]


def heft(args, *argv):
    return subprocess.run([os.path.join(args.build_dir, "tools", "heft"), *argv],
                          capture_output=True, text=True)


def send(daemon, db, records, stored_before):
    sock = daemon.connect()
    sock.sendall(b"".join(records))
    sock.close()
    want = stored_before + sum(1 for r in records if not r.startswith(b"time,"))
    h.check(h.wait_samples(db, want, timeout=60) == want, "heftd stored %d samples" % want)


def events(db):
    con = sqlite3.connect(db)
    rows = con.execute("SELECT id, transition, kind, record_index, onset_index, end_index, "
                       "source FROM events ORDER BY id").fetchall()
    con.close()
    return rows


def body(args):
    tmp = tempfile.mkdtemp(prefix="heftd-restart-")
    try:
        run(args, tmp)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


def run(args, tmp):
    db = os.path.join(tmp, "heft.db")
    config = os.path.join(tmp, "heftd.yaml")
    h.write_config(config, db, lines_yaml=LINES_YAML)
    feed = make_feed()
    feed_file = os.path.join(tmp, "feed.csv")
    with open(feed_file, "wb") as f:
        f.write(b"".join(feed))
    header, records = feed[0], feed[1:]

    # Part 1, then SIGTERM.
    daemon = h.Daemon(args.build_dir, config, db)
    try:
        daemon.wait_listening()
        send(daemon, db, [header] + records[:BREAK], 0)
        code = daemon.terminate(10)
        h.check(code == 0, "SIGTERM: heftd exits 0 (got %s)" % code)
        h.check(daemon.wait_for(r"checkpoint saved: 1 lines continue", 1) is not None,
                "at shutdown the line's checkpoint is saved")
        h.check(daemon.count(r"LOT .*\(partial\)") == 0, "no lot is closed as partial")
    except BaseException:
        daemon.dump_log()
        raise
    finally:
        daemon.kill()
    first = events(db)
    con = sqlite3.connect(db)
    h.check(con.execute("PRAGMA user_version").fetchone()[0] >= 5,
            "schema version >= 5 (line checkpoints)")
    h.check(con.execute("SELECT count(*) FROM lots").fetchone()[0] == 0, "no lot row yet")
    saved = con.execute("SELECT line, version, length(blob) FROM line_checkpoints").fetchall()
    con.close()
    print("  checkpoints: %s" % saved)
    h.check(len(saved) == 1 and saved[0][0] == "oats-1" and saved[0][1] == 1,
            "one checkpoint row for oats-1, format 1")
    h.check(any(e[1] == "raised" and e[2] == "shift" for e in first) and
            not any(e[1] == "cleared" and e[2] == "shift" for e in first),
            "the shift is open at the stop")

    # Part 2 on the same database.
    daemon = h.Daemon(args.build_dir, config, db)
    try:
        daemon.wait_listening()
        h.check(daemon.wait_for(r"restart: line oats-1: monitor continues, open lot continues",
                                1) is not None, "the restart log says the line and lot continue")
        send(daemon, db, records[BREAK:], BREAK)
        h.check(daemon.wait_for(r"LOT oats-1 2026-03-02T06:00Z: 2400 packs", 10) is not None,
                "the 06:00 lot closes at 07:00 with all 2400 packs of the hour")
        code = daemon.terminate(10)
        h.check(code == 0, "second SIGTERM: heftd exits 0 (got %s)" % code)
    except BaseException:
        daemon.dump_log()
        raise
    finally:
        daemon.kill()

    stored = events(db)
    con = sqlite3.connect(db)
    lots = con.execute("SELECT lot_id, partial, count, mean_g, s_g, first_index, last_index "
                       "FROM lots ORDER BY id").fetchall()
    con.close()

    out_events = os.path.join(tmp, "replay.jsonl")
    out_lots = os.path.join(tmp, "lots.jsonl")
    r = heft(args, "replay", feed_file, "--config", config, "--events-out", out_events,
             "--lots-out", out_lots)
    h.check(r.returncode == 0, "heft replay exits 0 (%s)" % r.stderr.strip()[-300:])
    with open(out_events, encoding="utf-8") as f:
        replayed = [json.loads(line) for line in f if line.strip()]
    with open(out_lots, encoding="utf-8") as f:
        replay_lots = [json.loads(line) for line in f if line.strip()]

    # Events: the daemon's second connection numbers from 0 again.
    n_first = len(first)
    mapped, moved_back = [], []
    for i, (_, transition, kind, at, onset, end, source) in enumerate(stored):
        if i >= n_first:
            at += BREAK
            # Onsets and ends of the second connection are at or before `at`; one
            # larger than the record's own index points back into the first.
            if onset is not None:
                if onset + BREAK <= at:
                    onset += BREAK
                else:
                    moved_back.append((kind, transition, onset))
            if end is not None and end + BREAK <= at:
                end += BREAK
        mapped.append((transition, kind, at, onset, end))
    want = [(e["event"], e["kind"], e["at"], e["onset"], e["end"]) for e in replayed]
    for e in mapped:
        print("  daemon %s" % (e,))
    if moved_back:
        print("  onsets pointing into the first connection: %s" % moved_back)
    h.check(mapped == want, "daemon events across the restart (%d) equal the replay of the whole "
            "feed (%d), in order" % (len(mapped), len(want)))
    shift_raised = [e for e in mapped if e[0] == "raised" and e[1] == "shift"]
    h.check(len(shift_raised) == 1, "the shift is raised once")
    h.check(any(e[0] == "cleared" and e[1] == "shift" for e in mapped[n_first:]),
            "its clear comes after the restart")
    h.check(sum(1 for e in mapped if e[0] == "raised" and e[1] == "settling") == 1,
            "settling only once: the restart did not re-baseline")

    print("  lots: %s" % lots)
    h.check(len(lots) == 1 and lots[0][0] == "oats-1 2026-03-02T06:00Z" and lots[0][1] == 0,
            "one lot row: the 06:00 lot, not partial (the 07:00 lot is checkpointed again)")
    full = replay_lots[0]
    h.check(full["lot_id"] == "oats-1 2026-03-02T06:00Z" and not full["partial"],
            "replay's first lot is the same 06:00 lot")
    h.check(lots[0][2] == full["count"] == 2400, "lot count %d = replay's %d = 2400 packs" %
            (lots[0][2], full["count"]))
    # Replay's JSON rounds to 4 decimals (lot_json.cpp); the stored values are exact.
    h.check(abs(lots[0][3] - full["mean_g"]) <= 5.000001e-5 and
            abs(lots[0][4] - full["s_g"]) <= 5.000001e-5,
            "lot mean %.6f g and s %.6f g equal replay's %.4f and %.4f to its 4 decimals" %
            (lots[0][3], lots[0][4], full["mean_g"], full["s_g"]))


if __name__ == "__main__":
    h.run_main(body)
