"""`heft replay` is deterministic and keeps its command-line contract.

Generates a feed with the simulator, replays it twice (file and stdin) and
compares bytes; checks the JSON-lines contract fields and the exit codes for
usage and file errors.
"""
import json
import os
import subprocess

from heftproc import Checks, parse_args, tool, workdir

args = parse_args()
heft = tool(args.build_dir, "heft")
tmp = workdir("heft-replay-")
checks = Checks()

feed = os.path.join(tmp, "feed.csv")
subprocess.run([heft, "feed", "--scenario", "step,hunting,stop", "--seed", "42", "--out", feed],
               check=True)

outs = []
for i in range(2):
    out = os.path.join(tmp, f"events{i}.jsonl")
    r = subprocess.run([heft, "replay", feed, "--nominal", "500", "--events-out", out],
                       capture_output=True, text=True)
    checks.check(r.returncode == 0, f"replay run {i} exits 0 ({r.stderr.strip()})")
    outs.append(open(out, "rb").read())
with open(feed, "rb") as f:
    r = subprocess.run([heft, "replay", "-", "--nominal", "500", "--events-out", "-"],
                       stdin=f, capture_output=True)
outs.append(r.stdout)

checks.check(len(outs[0]) > 0, "replay wrote events")
checks.check(outs[0] == outs[1], "two replays give byte-identical output")
checks.check(outs[0] == outs[2], "replay from stdin to stdout gives the same bytes")

kinds = {"shift", "drift", "oscillation", "settling", "spread", "stuck", "silence", "outlier",
         "compliance"}
records = sum(1 for line in open(feed) if line.strip()) - 1  # minus the header
events = [json.loads(line) for line in outs[0].decode().splitlines()]
good = True
for e in events:
    keys = list(e.keys())[:8]
    good &= keys == ["event", "kind", "line", "at", "onset", "end", "severity", "message"]
    good &= e["event"] in ("raised", "cleared") and e["kind"] in kinds
    good &= isinstance(e["at"], int) and 0 <= e["at"] < records
    good &= e["onset"] is None or (isinstance(e["onset"], int) and 0 <= e["onset"] <= e["at"])
    good &= e["end"] is None or isinstance(e["end"], int)
    good &= isinstance(e["message"], str) and len(e["message"]) > 0
checks.check(good, f"all {len(events)} events follow the contract (keys, kinds, indexes)")
lines = {e["line"] for e in events if e["kind"] == "settling"}
checks.check(len(lines) == 3, f"each of the three lines settles ({sorted(lines)})")
checks.check(any(e["kind"] == "silence" for e in events), "the stopped line raises silence")

r = subprocess.run([heft, "replay", os.path.join(tmp, "absent.csv"), "--events-out", "-"],
                   capture_output=True, text=True)
checks.check(r.returncode == 2 and "absent.csv" in r.stderr, "missing feed: exit 2 naming the file")
r = subprocess.run([heft, "replay", feed], capture_output=True, text=True)
checks.check(r.returncode == 2, "missing --events-out: exit 2")
r = subprocess.run([heft, "replay", feed, "--events-out", "-", "--nominal", "heavy"],
                   capture_output=True, text=True)
checks.check(r.returncode == 2 and "--nominal" in r.stderr, "bad --nominal: exit 2 with reason")

# A malformed record still takes its index.
bad = os.path.join(tmp, "bad.csv")
with open(bad, "w") as f:
    f.write("time,line,head,weight\n")
    f.write("2026-03-02T06:00:00.000Z,oats-1,0,503.1\n")
    f.write("2026-03-02T06:00:00.500Z,oats-1,1,not-a-weight\n")
    f.write("2026-03-02T06:00:01.000Z,oats-1,2,502.9\n")
r = subprocess.run([heft, "replay", bad, "--events-out", "-"], capture_output=True, text=True)
checks.check(r.returncode == 0 and "record #1" in r.stderr,
             f"malformed record reported at its index ({r.stderr.strip().splitlines()[0]})")
checks.check("3 records, 2 accepted, 1 malformed" in r.stderr, "counts in the summary line")
checks.finish()
