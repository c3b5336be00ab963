"""Alarm state survives a heftd restart (SIGTERM, start again on the same
database), loopback only.

Run 1: oats-1 settles, then a burst of gross packs raises oats-1:outlier;
nobody acknowledges it; SIGTERM. Run 2 on the same database: `heft alarms`
still shows it active_unack; the gross packs go on. Whether the restarted
monitor raises the outlier finding again (no detector checkpoint: it must
attach to the carried alarm) or keeps the burst open from its checkpoint,
the command hook (it records every transition it is given) gets no second
message for that alarm and it stays active_unack. A new alarm on
honey-2 continues the sequence numbers above the highest of run 1, and
`heft ack` of the carried alarm is applied by the new run.
"""

import json
import os
import random
import shutil
import sqlite3
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402

HOOK = """#!/usr/bin/env python3
import sys
data = sys.stdin.read()
with open(sys.argv[1], "a") as f:
    f.write(data.replace("\\n", " ") + "\\n")
"""

T0_MS = 1772431200000  # 2026-03-02T06:00:00Z


def iso(ms):
    return time.strftime("%Y-%m-%dT%H:%M:%S", time.gmtime(ms // 1000)) + ".%03dZ" % (ms % 1000)


def packs(line, nominal, target, heads, start_ms, normal, gross, seed):
    """`normal` in-control packs (sigma 1.5 g, one every 500 ms), then `gross`
    mis-fills at 10 % of nominal (below gross_low_ratio 0.5: outliers)."""
    rng = random.Random(seed)
    out = []
    for i in range(normal + gross):
        grams = target + rng.gauss(0.0, 1.5) if i < normal else nominal * 0.1
        head = i % heads if heads else 0
        out.append("%s,%s,%d,%.1f\n" % (iso(start_ms + 500 * i), line, head, grams))
    return "".join(out).encode()


def query(db, sql, *params):
    con = sqlite3.connect("file:%s?mode=ro" % db, uri=True, timeout=5)
    try:
        return con.execute(sql, params).fetchall()
    finally:
        con.close()


def hook_calls(path):
    if not os.path.exists(path):
        return []
    with open(path) as f:
        return [json.loads(line) for line in f if line.strip()]


def wait_hook(path, predicate, timeout=20):
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        hits = [c for c in hook_calls(path) if predicate(c)]
        if hits:
            return hits
        time.sleep(0.1)
    return []


def heft(args, *argv):
    return subprocess.run([os.path.join(args.build_dir, "tools", "heft"), *argv],
                          capture_output=True, text=True, timeout=30)


def body(args):
    tmp = tempfile.mkdtemp(prefix="heftd-restart-")
    db = os.path.join(tmp, "heft.db")
    config = os.path.join(tmp, "heftd.yaml")
    hook = os.path.join(tmp, "hook.py")
    hook_out = os.path.join(tmp, "hook.jsonl")
    with open(hook, "w") as f:
        f.write(HOOK)
    os.chmod(hook, 0o755)
    h.write_config(config, db)
    with open(config) as f:
        text = f.read()
    # No silence between the runs' feeds: the alarm must stay active, not suppressed.
    text = text.replace("defaults:\n  baseline_packs: 200\n",
                        "defaults:\n  baseline_packs: 200\n  silence_s: 86400\n")
    with open(config, "w") as f:
        f.write(text + """alerting:
  channels:
    - {name: recorder, type: command, argv: [%s, %s], timeout_ms: 5000}
""" % (hook, hook_out))
    header = b"time,line,head,weight\n"
    outlier = "oats-1:outlier"
    daemon = None
    try:
        # Run 1.
        daemon = h.Daemon(args.build_dir, config, db)
        daemon.wait_listening()
        s = daemon.connect()
        s.sendall(header + packs("oats-1", 500, 503, 12, T0_MS, 400, 3, 1))
        raised = wait_hook(hook_out, lambda c: c["alarm"] == outlier and
                           c["state"] == "active_unack")
        h.check(len(raised) == 1, "run 1: %s raised and delivered once" % outlier)
        s.close()
        code = daemon.terminate(15)
        h.check(code == 0, "run 1: SIGTERM, exit 0 (got %s)" % code)
        state = query(db, "SELECT state FROM alarm_state WHERE alarm_id = ?", outlier)
        h.check(state == [("active_unack",)], "run 1 left %s active_unack: %s" % (outlier, state))
        last_seq = query(db, "SELECT max(CAST(json_extract(json, '$.seq') AS INTEGER)) FROM "
                             "alarm_transitions")[0][0]
        calls_run1 = len(hook_calls(hook_out))

        # Run 2 on the same database.
        daemon = h.Daemon(args.build_dir, config, db)
        daemon.wait_listening()
        h.check(daemon.wait_for(r"alarms: 1 carried over from the last run, sequence continues "
                                r"at %d" % (last_seq + 1), 5) is not None,
                "run 2 logs the carried alarm and continues at %d" % (last_seq + 1))
        listed = heft(args, "alarms", "--db", db)
        row = [line for line in listed.stdout.splitlines() if line.startswith(outlier + " ")]
        h.check(listed.returncode == 0 and row and row[0].split()[1] == "active_unack",
                "heft alarms after the restart: %s" % (row[0] if row else listed.stdout))

        s = daemon.connect()
        start2 = T0_MS + 600_000
        # The gross packs go on (fewer than the 50 clean packs that end a burst),
        # and honey-2 starts, settles and has a burst of its own.
        s.sendall(header + packs("oats-1", 500, 503, 12, start2, 0, 3, 2) +
                  packs("oats-1", 500, 503, 12, start2 + 1500, 20, 0, 4) +
                  packs("honey-2", 340, 342, 0, start2 + 250, 400, 3, 3))
        fresh = wait_hook(hook_out, lambda c: c["alarm"] == "honey-2:outlier" and
                          c["state"] == "active_unack")
        h.check(len(fresh) == 1, "run 2: a new alarm honey-2:outlier is raised")
        h.check(fresh and fresh[0]["seq"] > last_seq,
                "its sequence number %s is above run 1's highest %d"
                % (fresh[0]["seq"] if fresh else None, last_seq))
        time.sleep(1.5)  # room for a wrong delivery to show up
        # Without a detector checkpoint the restarted monitor raises the outlier
        # finding again (attached); with one, the burst simply stays open.
        found = query(db, "SELECT count(*) FROM events WHERE line = 'oats-1' AND kind = "
                          "'outlier' AND transition = 'raised'")[0][0]
        print("oats-1 outlier findings raised over both runs: %d (%s)"
              % (found, "raised again and attached" if found >= 2 else "carried by the "
                 "detector checkpoint"))
        h.check(found >= 1, "the outlier finding of oats-1 is stored")
        again = [c for c in hook_calls(hook_out)[calls_run1:] if c["alarm"] == outlier]
        h.check(not again, "no second message for %s after the restart: %s"
                % (outlier, [(c["prev_state"], c["state"], c["why"]) for c in again]))
        listed = heft(args, "alarms", "--db", db)
        row = [line for line in listed.stdout.splitlines() if line.startswith(outlier + " ")]
        h.check(row and row[0].split()[1] == "active_unack",
                "still one alarm, active_unack: %s" % (row[0] if row else listed.stdout))

        ack = heft(args, "ack", outlier, "--by", "maria", "--db", db)
        h.check(ack.returncode == 0 and "active_unack -> active_ack" in ack.stdout,
                "heft ack of the carried alarm is applied by run 2: %s"
                % (ack.stdout + ack.stderr).strip())
        s.close()
        code = daemon.terminate(15)
        h.check(code == 0, "run 2: SIGTERM, exit 0 (got %s)" % code)
    except BaseException:
        if daemon is not None:
            daemon.dump_log()
        raise
    finally:
        if daemon is not None:
            daemon.kill()
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    h.run_main(body)
