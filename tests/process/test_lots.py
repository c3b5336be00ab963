"""Process test for net-content compliance (issue 5): the two demos and `heft lots`.

1. target-lowered (oats-1, 500 g): `heft feed` turns the fill target down from
   pack 600; `heft replay --config config/demo.yaml --lots-out` must raise a
   `compliance` alarm on the mean and then the T1-risk alarm
   (t1-share-over-limit), and the lot must fail the mean and T1-share rules.
   The lot figures are recomputed here from the feed with the statistics module.
2. high-giveaway (oats-1 filling about 509 g): the closed hourly lot's
   safe-target advice must show the saving, and its figures must agree with
   the normal-model formula of safe_target.h recomputed here
   (statistics.NormalDist; EU table: TNE 15 g for 500 g, 76/211/EEC Annex I,
   check-values.md §1.1).
3. heftd with the demo config receives the high-giveaway feed over TCP; SIGTERM
   checkpoints the open 07:00 lot instead of closing it (only the full 06:00 lot
   is stored). heftd started again with oats-1's cost_per_kg changed cannot
   continue that lot under the new lot settings, so it stores it as partial
   with the figures it had. `heft lots --db` then lists the full lot and the
   partial one with the caution line, in table, csv and json. (Continuing a lot
   across a restart is tested in test_restart.py.)

Run: python3 test_lots.py --build-dir B --source-dir S  (exit 0 = pass)
"""

import csv
import io
import json
import math
import os
import shutil
import sqlite3
import statistics
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftd_harness as h  # noqa: E402

CAUTION = ("These figures are the packer's own control; they do not replace checks by the "
           "legal metrology authority, and the regulation texts in force locally prevail over "
           "the tables shipped here.")


def heft(args, *argv):
    return subprocess.run([os.path.join(args.build_dir, "tools", "heft"), *argv],
                          capture_output=True, text=True)


def make_feed(args, tmp, scenario):
    path = os.path.join(tmp, scenario + ".csv")
    r = heft(args, "feed", "--scenario", scenario, "--out", path)
    h.check(r.returncode == 0, "heft feed --scenario %s (%s)" % (scenario, r.stderr.strip()))
    return path


def replay(args, tmp, feed, config):
    events = os.path.join(tmp, "events.jsonl")
    lots = os.path.join(tmp, "lots.jsonl")
    r = heft(args, "replay", feed, "--config", config, "--events-out", events,
             "--lots-out", lots)
    h.check(r.returncode == 0, "heft replay --lots-out exits 0 (%s)" % r.stderr.strip()[-300:])
    with open(events, encoding="utf-8") as f:
        ev = [json.loads(line) for line in f if line.strip()]
    with open(lots, encoding="utf-8") as f:
        raw = [line for line in f if line.strip()]
    return ev, [json.loads(line) for line in raw], raw


def weights(feed, line):
    with open(feed, encoding="utf-8") as f:
        rows = list(csv.reader(f))
    return [float(r[3]) for r in rows[1:] if r[1] == line]


def demo_target_lowered(args, tmp, config):
    feed = make_feed(args, tmp, "target-lowered")
    events, lots, raw = replay(args, tmp, feed, config)
    comp = [e for e in events if e["kind"] == "compliance"]
    for e in comp:
        print("  %s %s at pack %d: %s (%s)" % (e["event"], e["severity"], e["at"], e["detector"],
                                              e["message"]))
    mean_alarm = [e for e in comp if e["event"] == "raised" and e["severity"] == "alarm"
                  and e["detector"] == "mean-below-nominal"]
    t1_alarm = [e for e in comp if e["event"] == "raised" and e["severity"] == "alarm"
                and e["detector"] == "t1-share-over-limit"]
    h.check(len(mean_alarm) == 1, "one compliance alarm on the lot mean")
    h.check(len(t1_alarm) == 1, "one T1-risk alarm (t1-share-over-limit)")
    h.check(600 < mean_alarm[0]["at"] < t1_alarm[0]["at"] < 3600,
            "the mean alarm (pack %d) comes after the target starts falling (600) and before "
            "the T1-risk alarm (pack %d)" % (mean_alarm[0]["at"], t1_alarm[0]["at"]))
    h.check("COMPLIANCE ALARM" in t1_alarm[0]["message"] and "T1" in t1_alarm[0]["message"],
            "the operator message names the T1 risk")
    h.check(len(lots) == 1 and lots[0]["partial"], "one lot, closed as partial at the end")
    lot = lots[0]
    h.check(list(lot.keys())[:6] == ["line", "seq", "lot_id", "boundary", "partial", "opened"],
            "lot JSON keys in the stable order")
    w = weights(feed, "oats-1")
    # Recomputed from the feed: mean, sample SD, packs below T1 = 485 g and below nominal.
    gross = [x for x in w if not (250.0 <= x <= 750.0)]
    inlot = [x for x in w if 250.0 <= x <= 750.0]
    h.check(lot["count"] == len(inlot) and lot["gross"] == len(gross),
            "lot counts %d packs, %d gross (feed: %d, %d)" %
            (lot["count"], lot["gross"], len(inlot), len(gross)))
    h.check(abs(lot["mean_g"] - statistics.fmean(inlot)) < 1e-3,
            "lot mean %.4f g = feed mean %.4f g" % (lot["mean_g"], statistics.fmean(inlot)))
    h.check(abs(lot["s_g"] - statistics.stdev(inlot)) < 1e-3,
            "lot s %.4f g = feed stdev %.4f g" % (lot["s_g"], statistics.stdev(inlot)))
    h.check(lot["t1_count"] == sum(1 for x in inlot if x < 485.0),
            "T1 count %d = packs below 485 g in the feed" % lot["t1_count"])
    h.check(lot["below_nominal"] == sum(1 for x in inlot if x < 500.0), "packs below nominal")
    verdicts = {v["rule"]: v["state"] for v in lot["verdicts"]}
    h.check(verdicts.get("mean") == "fail" and verdicts.get("t1_share") == "fail",
            "the lot fails the mean and T1-share rules (%s)" % verdicts)
    h.check(lot["safe_target"]["raise_needed"] and "raise the fill" in
            lot["safe_target"]["advice"], "the advice says to raise the fill")
    # Byte-for-byte repeatable.
    _, _, raw2 = replay(args, tmp, feed, config)
    h.check(raw == raw2, "two replays give the same lot lines")


def demo_high_giveaway(args, tmp, config):
    feed = make_feed(args, tmp, "high-giveaway")
    events, lots, _ = replay(args, tmp, feed, config)
    h.check(not any(e["kind"] == "compliance" for e in events),
            "no compliance event while filling well above nominal")
    h.check(len(lots) == 2 and not lots[0]["partial"] and lots[1]["partial"],
            "two hourly lots: 06:00 complete, 07:00 partial (end of feed)")
    lot = lots[0]
    t = lot["safe_target"]
    print("  lot %s: %d packs, mean %.3f g, s %.3f g, giveaway %.1f kg (%.2f at 2.40/kg)" %
          (lot["lot_id"], lot["count"], lot["mean_g"], lot["s_g"], lot["giveaway_g"] / 1000,
           lot["giveaway_money"]))
    print("  advice: %s" % t["advice"])
    h.check(lot["lot_id"] == "oats-1 2026-03-02T06:00Z", "lot id names the hour")
    h.check(abs(lot["giveaway_g"] - (lot["mean_g"] - 500.0) * lot["count"]) < 0.5,
            "giveaway = (mean - nominal) x count")
    h.check(abs(lot["giveaway_money"] - lot["giveaway_g"] / 1000 * 2.40) < 0.01,
            "giveaway money at the demo's 2.40 per kg")
    # safe_target.h, EU rules, defaults: mean rule Qn + z(0.99) s / sqrt(lot packs);
    # T1 share T1 + z(1 - 0.5 x 2.5 %) s; T2 T2 + z(1 - 1e-4) s. The lot packs for an
    # hourly lot are the packs the hour holds (here the lot's own count: it ran to 07:00).
    z = statistics.NormalDist().inv_cdf
    s = t["sigma_g"]
    h.check(abs(s - lot["s_g"]) < 1e-9, "advice uses the lot's overall SD")
    for_mean = 500.0 + z(0.99) * s / math.sqrt(lot["count"])
    for_t1 = 485.0 + z(1 - 0.0125) * s
    for_t2 = 470.0 + z(1 - 1e-4) * s
    want = max(for_mean, for_t1, for_t2)
    h.check(abs(t["target_g"] - want) < 2e-3 and t["binding_rule"] == "mean",
            "safe target %.4f g = max(%.4f, %.4f, %.4f) g set by the mean rule" %
            (t["target_g"], for_mean, for_t1, for_t2))
    saving = lot["mean_g"] - t["target_g"]
    h.check(abs(t["saving_per_pack_g"] - saving) < 1e-3 and saving > 8.0,
            "saving %.3f g per pack (mean - target)" % saving)
    h.check(abs(t["saving_per_hour_g"] - saving * t["packs_per_hour"]) < 1.0,
            "saving per hour = per pack x %.1f packs/h" % t["packs_per_hour"])
    h.check("giving away" in t["advice"] and "kg per year" in t["advice"] and
            "per kg" in t["advice"] and "never adjusts the filler" in t["advice"],
            "the advice text shows the saving in kg and money and says it is advice only")
    return feed


def daemon_and_lots_command(args, tmp, demo, feed):
    db = os.path.join(tmp, "heft.db")
    config = os.path.join(tmp, "heftd.yaml")
    shutil.copyfile(demo, config)
    with open(feed, "rb") as f:
        data = f.read()
    records = data.count(b"\n") - 1
    daemon = h.Daemon(args.build_dir, config, db)
    try:
        daemon.wait_listening()
        sock = daemon.connect()
        sock.sendall(data)
        sock.close()
        h.check(h.wait_samples(db, records, timeout=60) == records,
                "heftd stored all %d samples" % records)
        h.check(daemon.wait_for(r"LOT oats-1 2026-03-02T06:00Z: 3600 packs", 10) is not None,
                "heftd logs the closed 06:00 lot")
        code = daemon.terminate(10)
        h.check(code == 0, "SIGTERM: heftd exits 0 (got %s)" % code)
        h.check(daemon.wait_for(r"checkpoint saved: 1 lines continue at the next start", 1)
                is not None, "at shutdown the line's state is checkpointed")
        h.check(daemon.count(r"LOT oats-1 2026-03-02T07:00Z") == 0,
                "the open 07:00 lot is not closed at shutdown")
    except BaseException:
        daemon.dump_log()
        raise
    finally:
        daemon.kill()
    con = sqlite3.connect(db)
    rows = con.execute("SELECT lot_id, partial FROM lots ORDER BY id").fetchall()
    saved = con.execute("SELECT line FROM line_checkpoints").fetchall()
    con.close()
    h.check(rows == [("oats-1 2026-03-02T06:00Z", 0)], "only the full lot is stored (%s)" % rows)
    h.check(saved == [("oats-1",)], "oats-1's checkpoint is stored")

    # Restart with a different product cost: the lot cannot go on under new lot settings.
    with open(config, encoding="utf-8") as f:
        text = f.read()
    h.check(text.count("cost_per_kg: 2.40     #") == 1, "demo config names oats-1's cost once")
    with open(config, "w", encoding="utf-8") as f:
        f.write(text.replace("cost_per_kg: 2.40     #", "cost_per_kg: 2.55     #"))
    daemon = h.Daemon(args.build_dir, config, db)
    try:
        daemon.wait_listening()
        h.check(daemon.wait_for(r"LOT oats-1 2026-03-02T07:00Z \(partial\)", 5) is not None,
                "at the restart the saved 07:00 lot is closed as partial")
        h.check(daemon.wait_for(r"restart: line oats-1: monitor continues, open lot closed as "
                                r"partial", 1) is not None,
                "the log says why: the monitor continues, the lot settings changed")
        code = daemon.terminate(10)
        h.check(code == 0, "second SIGTERM: heftd exits 0 (got %s)" % code)
    except BaseException:
        daemon.dump_log()
        raise
    finally:
        daemon.kill()

    con = sqlite3.connect(db)
    h.check(con.execute("PRAGMA user_version").fetchone()[0] >= 5, "schema version >= 5")
    rows = con.execute("SELECT lot_id, partial, count FROM lots ORDER BY id").fetchall()
    nverdicts = con.execute("SELECT count(*) FROM lot_verdicts").fetchone()[0]
    con.close()
    h.check([(r[0], r[1]) for r in rows] == [("oats-1 2026-03-02T06:00Z", 0),
                                             ("oats-1 2026-03-02T07:00Z", 1)],
            "lots table: the full lot and the partial one (%s)" % rows)
    h.check(nverdicts == 6, "three verdicts per lot stored")

    r = heft(args, "lots", "--db", db)
    print(r.stdout)
    h.check(r.returncode == 0, "heft lots exits 0")
    h.check("oats-1 2026-03-02T06:00Z" in r.stdout and "(partial)" in r.stdout,
            "table lists both lots")
    h.check(" ".join(CAUTION.split()) in " ".join(r.stdout.split()),
            "table ends with the caution")
    r = heft(args, "lots", "--db", db, "--format", "json")
    lots = [json.loads(line) for line in r.stdout.splitlines() if line.strip()]
    h.check(len(lots) == 2 and lots[0]["safe_target"]["saving_per_pack_g"] > 8.0,
            "json: two lots, the advice shows the saving")
    r = heft(args, "lots", "--db", db, "--format", "csv", "--since", "2026-03-02T07:00:00Z")
    table = list(csv.DictReader(io.StringIO(r.stdout)))
    h.check(r.returncode == 0 and len(table) == 1 and table[0]["partial"] == "1",
            "csv with --since: only the partial 07:00 lot")
    r = heft(args, "lots", "--db", db, "--line", "honey-2")
    h.check(r.returncode == 0 and r.stdout.startswith("no lots"), "--line filters")
    r = heft(args, "lots", "--db", db, "--since", "yesterday")
    h.check(r.returncode == 2 and "--since 'yesterday' is not a time" in r.stderr,
            "a bad --since is a usage error")
    r = heft(args, "lots", "--db", os.path.join(tmp, "missing.db"))
    h.check(r.returncode == 2 and "no database" in r.stderr, "a missing database is an error")


def body(args):
    tmp = tempfile.mkdtemp(prefix="heft-lots-")
    demo = os.path.join(args.source_dir, "config", "demo.yaml")
    try:
        print("demo 1: target lowered until the T1-risk alarm fires")
        demo_target_lowered(args, tmp, demo)
        print("demo 2: high giveaway and the lowest safe target")
        feed = demo_high_giveaway(args, tmp, demo)
        print("heftd and heft lots")
        daemon_and_lots_command(args, tmp, demo, feed)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    h.run_main(body)
