"""`heft feed`: deterministic bytes, the native CSV contract, TCP streaming with
pacing, and clean exits (2) for usage errors, refused connections and a peer
that closes mid-stream.
"""
import os
import re
import socket
import subprocess
import threading
import time

from heftproc import Checks, parse_args, tool, workdir

args = parse_args()
heft = tool(args.build_dir, "heft")
tmp = workdir("heft-feed-")
checks = Checks()


def run(*argv, **kw):
    return subprocess.run([heft, "feed", *argv], capture_output=True, **kw)


# Same arguments, same bytes; another seed, other bytes.
a = run("--scenario", "drift,step,hunting", "--seed", "9").stdout
b = run("--scenario", "drift,step,hunting", "--seed", "9").stdout
c = run("--scenario", "drift,step,hunting", "--seed", "10").stdout
checks.check(len(a) > 100000 and a == b, "same arguments give the same bytes (%d)" % len(a))
checks.check(a != c, "another seed gives other bytes")

# Native CSV: header, then time,line,head,weight with ISO ms UTC times in order.
lines = a.decode().splitlines()
checks.check(lines[0] == "time,line,head,weight", "header line first")
record = re.compile(r"^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z,(oats-1|oats-2|honey-2),\d+,\d+\.\d$")
bad = [l for l in lines[1:] if not record.match(l)]
checks.check(len(lines) == 9001 and not bad, "9000 well-formed records (bad: %s)" % bad[:2])
times = [l.split(",")[0] for l in lines[1:]]
checks.check(times == sorted(times), "records are in time order")
per_line = {}
for l in lines[1:]:
    per_line[l.split(",")[1]] = per_line.get(l.split(",")[1], 0) + 1
checks.check(per_line == {"oats-1": 3000, "oats-2": 3000, "honey-2": 3000},
             "3000 packs per line: %s" % per_line)

# --out file equals stdout; --no-header drops exactly the header.
out_file = os.path.join(tmp, "f.csv")
r = run("--scenario", "drift,step,hunting", "--seed", "9", "--out", out_file)
checks.check(r.returncode == 0 and open(out_file, "rb").read() == a, "--out FILE = stdout bytes")
r = run("--scenario", "drift,step,hunting", "--seed", "9", "--no-header")
checks.check(r.stdout == a[len(b"time,line,head,weight\n"):], "--no-header drops only the header")

# --list names every scenario the brief promises.
r = run("--list", text=True)
names = ["in-control", "startup", "drift", "head-off", "hunting", "stop", "step"]
checks.check(r.returncode == 0 and all(n in r.stdout for n in names), "--list names the scenarios")

# Usage errors: exit 2 with a reason.
for argv, reason in [(["--scenario", "nope"], "unknown scenario"),
                     (["--scenario", "drift,step", "--line", "x"], "--line only works"),
                     (["--scenario", "drift@a,step@a"], "given to two scenarios"),
                     (["--scenario", "drift", "--packs", "-3"], "--packs"),
                     (["--scenario", "drift", "--speed", "fast"], "--speed"),
                     (["--scenario", "drift", "--start", "noon"], "--start"),
                     (["--scenario", "drift", "--tcp", "nohost"], "HOST:PORT"),
                     (["--scenario", "drift", "--out", "/nonexistent-dir/x.csv"], "cannot open")]:
    r = run(*argv, text=True)
    checks.check(r.returncode == 2 and reason in r.stderr,
                 "%s -> exit 2 with '%s' (%d: %s)" % (" ".join(argv), reason, r.returncode,
                                                      r.stderr.splitlines()[:1]))


def listener():
    s = socket.socket()
    s.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)
    s.bind(("127.0.0.1", 0))
    s.listen(1)
    return s


def receive_all(server, sink):
    conn, _ = server.accept()
    chunks = []
    while True:
        d = conn.recv(1 << 16)
        if not d:
            break
        chunks.append(d)
    conn.close()
    sink.append(b"".join(chunks))


# TCP, as fast as possible: the same bytes as the file, one summary line on stderr.
server = listener()
got = []
t = threading.Thread(target=receive_all, args=(server, got))
t.start()
port = server.getsockname()[1]
r = run("--scenario", "drift,step,hunting", "--seed", "9", "--tcp", "127.0.0.1:%d" % port,
        "--speed", "0", text=True, timeout=60)
t.join(30)
server.close()
checks.check(r.returncode == 0 and got and got[0] == a, "--tcp --speed 0 sends the same bytes")
checks.check(re.search(r"sent 9000 records to 127\.0\.0\.1:\d+ in [\d.]+ s", r.stderr) is not None,
             "summary line on stderr: %s" % r.stderr.strip())

# TCP paced: 61 oats-1 packs span 60 s of line time; at --speed 60 that is about 1 s.
server = listener()
got = []
t = threading.Thread(target=receive_all, args=(server, got))
t.start()
start = time.monotonic()
r = run("--scenario", "in-control", "--packs", "61", "--tcp",
        "127.0.0.1:%d" % server.getsockname()[1], "--speed", "60", text=True, timeout=60)
elapsed = time.monotonic() - start
t.join(30)
server.close()
checks.check(r.returncode == 0 and got and got[0].count(b"\n") == 62,
             "paced stream delivers all 61 records")
checks.check(0.9 <= elapsed <= 3.0, "paced at --speed 60: %.2f s for 60 s of line time" % elapsed)

# A peer that reads a little and then resets the connection: exit 2, clear reason.
server = listener()


def close_early():
    conn, _ = server.accept()
    conn.recv(100)
    conn.setsockopt(socket.SOL_SOCKET, socket.SO_LINGER, b"\x01\x00\x00\x00\x00\x00\x00\x00")
    conn.close()


t = threading.Thread(target=close_early)
t.start()
r = run("--scenario", "drift", "--packs", "1000000", "--tcp",
        "127.0.0.1:%d" % server.getsockname()[1], "--speed", "0", text=True, timeout=120)
t.join(30)
server.close()
checks.check(r.returncode == 2 and "closed by the peer" in r.stderr,
             "peer reset -> exit 2 (%d: %s)" % (r.returncode, r.stderr.strip()[:200]))

# Nobody listening: exit 2.
probe = listener()
dead_port = probe.getsockname()[1]
probe.close()
r = run("--scenario", "drift", "--tcp", "127.0.0.1:%d" % dead_port, text=True, timeout=30)
checks.check(r.returncode == 2 and "cannot connect" in r.stderr,
             "refused connection -> exit 2 (%s)" % r.stderr.strip())

checks.finish()
