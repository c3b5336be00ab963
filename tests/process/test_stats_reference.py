"""Process test: `heft stats --format json` against numpy and scipy on generated feeds.

Design: the Catch2 suite compares the engine with a stored reference file
(tests/reference/stats_reference.json) so it needs no Python; this test (1) re-runs
tests/reference/stats_reference.py --check so the stored file stays what numpy/scipy say,
and (2) runs the real tool on freshly generated native feeds (fixed seeds; invented
Millbrook Oat Co. lines) and compares every figure with numpy/scipy computed here — the
parser, windows and JSON included. Tolerance 1e-9 relative (exact where the arithmetic is
the same, e.g. quantiles).
"""
import json
import math
import os
import subprocess
import sys

try:
    import numpy as np
    from scipy import stats
except ImportError:  # CTest may find a python3 without numpy; Debian's has it
    if sys.executable != "/usr/bin/python3" and os.path.exists("/usr/bin/python3"):
        os.execv("/usr/bin/python3", ["/usr/bin/python3"] + sys.argv)
    raise

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftproc  # noqa: E402

D2 = 2.0 / math.sqrt(math.pi)
T0 = 1772431200000  # 2026-03-02T06:00:00Z


def close(got, want, rel=1e-9, floor=0.0):
    if got is None or want is None:
        return got is None and want is None
    return got == want or abs(got - want) <= max(rel * max(abs(got), abs(want)), floor)


def make_feed(path):
    """Three lines; returns {line: [(time_ms, grams, head)]} as heft should read them."""
    rng = np.random.default_rng(4242)
    packs = {"oats-1": [], "honey-2": [], "bulk-9": []}
    rows = ["time,line,head,weight,status"]
    for i in range(2400):
        t = T0 + i * 500
        head = i % 12
        w = float(503.0 + (0.6 if head == 7 else 0.0) + rng.normal(0.0, 1.8))
        rows.append(f"{t},oats-1,{head},{w!r},ok")
        packs["oats-1"].append((t, w, head))
        if i % 3 == 0:
            h = float(340.0 + rng.lognormal(0.5, 0.6))
            rows.append(f"{t},honey-2,,{h!r},")
            packs["honey-2"].append((t, h, None))
        if i % 5 == 0:
            b = float(1_000_000.0 + rng.normal(0.0, 0.5))
            status = "reject" if i % 50 == 0 else "ok"
            rows.append(f"{t},bulk-9,{i % 4},{b!r},{status}")
            packs["bulk-9"].append((t, b, i % 4))
    rows.insert(200, "this is not a record")
    rows.insert(300, f"{T0},oats-1,3,499.0,error")  # weighing error: left out
    with open(path, "w") as f:
        f.write("\n".join(rows) + "\n")
    return packs


def run_stats(heft, feed, *extra):
    proc = subprocess.run([heft, "stats", feed, "--format", "json", *extra],
                          capture_output=True, text=True)
    if proc.returncode != 0:
        print(proc.stderr)
        return None, proc
    return json.loads(proc.stdout), proc


def expected(values, method):
    x = np.asarray(values, dtype=float)
    q1, med, q3 = np.quantile(x, [0.25, 0.5, 0.75], method=method)
    return {
        "count": int(x.size), "mean": float(x.mean()), "sd": float(x.std(ddof=1)),
        "min": float(x.min()), "max": float(x.max()), "q1": float(q1), "median": float(med),
        "q3": float(q3), "mr_sigma": float(np.mean(np.abs(np.diff(x))) / D2),
        "skewness": float(stats.skew(x, bias=False)),
        "kurtosis": float(stats.kurtosis(x, bias=False)),
    }


def runs_expected(values):
    med = float(np.median(values))
    signs = [1 if v > med else -1 for v in values if v != med]
    runs = 1 + sum(1 for a, b in zip(signs, signs[1:]) if a != b)
    n1, n2 = signs.count(1), signs.count(-1)
    n = n1 + n2
    e = 2.0 * n1 * n2 / n + 1.0
    var = 2.0 * n1 * n2 * (2.0 * n1 * n2 - n1 - n2) / (n * n * (n - 1.0))
    return {"runs": runs, "above": n1, "below": n2, "expected_runs": e, "variance": var,
            "z": (runs - e) / math.sqrt(var)}


def compare_group(c, group, values, method, what):
    exp = expected(values, method)
    for key in ("count", "min", "max", "q1", "median", "q3"):
        c.check(group[key] == exp[key], f"{what}: {key} {group[key]} == numpy {exp[key]}")
    for key in ("mean", "sd", "mr_sigma"):
        c.check(close(group[key], exp[key]), f"{what}: {key} {group[key]} ~ numpy {exp[key]}")
    for key in ("skewness", "kurtosis"):  # scipy bias=False; 1e-9 of max(1, |value|)
        c.check(close(group[key], exp[key], floor=1e-9), f"{what}: {key} ~ scipy {exp[key]}")


def main():
    args = heftproc.parse_args()
    heft = heftproc.tool(args.build_dir, "heft")
    c = heftproc.Checks()

    ref_script = os.path.join(args.source_dir, "tests", "reference", "stats_reference.py")
    ref_file = os.path.join(args.source_dir, "tests", "reference", "stats_reference.json")
    proc = subprocess.run([sys.executable, ref_script, "--check", ref_file],
                          capture_output=True, text=True)
    c.check(proc.returncode == 0, "stored stats_reference.json agrees with numpy/scipy now: "
            + (proc.stdout + proc.stderr).strip())

    work = heftproc.workdir("heft-stats-")
    feed = os.path.join(work, "millbrook.csv")
    packs = make_feed(feed)

    doc, proc = run_stats(heft, feed, "--by-head")
    if not c.check(doc is not None, "heft stats --format json --by-head runs"):
        c.finish()
    src = doc["source"]
    c.check(src["malformed"] == 1 and src["excluded_error"] == 1,
            f"bad record and weighing error counted: {src}")
    c.check("record #" in proc.stderr, "the bad record is reported with its index")
    groups = {(g["line"], g["head"]): g for g in doc["groups"]}
    for line, rows in packs.items():
        values = [w for _, w, _ in rows]
        g = groups.get((line, None))
        if not c.check(g is not None, f"{line}: line group present"):
            continue
        compare_group(c, g, values, "linear", f"{line} whole feed")
        r, exp = g["runs_test"], runs_expected(values)
        for key in ("runs", "above", "below"):
            c.check(r[key] == exp[key], f"{line}: runs test {key} {r[key]} == {exp[key]}")
        for key in ("expected_runs", "variance", "z"):
            c.check(close(r[key], exp[key]), f"{line}: runs test {key} ~ {exp[key]}")
        if not r["exact"]:
            c.check(close(r["p_fewer"], float(stats.norm.cdf(exp["z"]))),
                    f"{line}: runs p(fewer) ~ normal cdf")
        sq = np.sort(values)
        bins = len(np.histogram_bin_edges(sq, bins="sqrt")) - 1
        c.check(g["histogram"]["raw_bins"] == bins,
                f"{line}: sqrt raw bins {g['histogram']['raw_bins']} == numpy {bins}")
        box = g["box_plot"]
        iqr = g["q3"] - g["q1"]
        c.check(close(box["upper_fence"], g["q3"] + 1.5 * iqr), f"{line}: upper fence")
        outside = sum(1 for v in values if v < box["lower_fence"] or v > box["upper_fence"])
        c.check(box["outlier_count"] == outside, f"{line}: {outside} values outside the fences")
        heads = sorted({h for _, _, h in rows if h is not None})
        if heads:
            by = [[w for _, w, h in rows if h == k] for k in heads]
            f = stats.f_oneway(*by)
            a = g["head_anova"]
            c.check(close(a["f"], float(f.statistic)) and close(a["p_value"], float(f.pvalue)),
                    f"{line}: ANOVA F {a['f']} p {a['p_value']} ~ scipy {f.statistic} {f.pvalue}")
            for k, v in zip(heads, by):
                hg = groups.get((line, k))
                if c.check(hg is not None, f"{line} head {k}: group present"):
                    compare_group(c, hg, v, "linear", f"{line} head {k}")
        else:
            c.check(g["head_anova"] is None, f"{line}: no heads, no ANOVA")
    c.check(groups[("oats-1", None)]["head_anova"]["farthest"][0] == 7,
            "oats-1: head 7 (0.6 g heavy) is farthest from the line mean")

    doc6, _ = run_stats(heft, feed, "--quantile-type", "6", "--line", "honey-2")
    if c.check(doc6 is not None and len(doc6["groups"]) == 1, "--quantile-type 6 --line honey-2"):
        compare_group(c, doc6["groups"][0], [w for _, w, _ in packs["honey-2"]], "weibull",
                      "honey-2 type 6")

    docw, _ = run_stats(heft, feed, "--window", "300")
    if c.check(docw is not None, "--window 300"):
        for g in docw["groups"]:
            values = [w for _, w, _ in packs[g["line"]]][-300:]
            compare_group(c, g, values, "linear", f"{g['line']} last 300")

    docm, _ = run_stats(heft, feed, "--minutes", "2")
    if c.check(docm is not None, "--minutes 2"):
        for g in docm["groups"]:
            rows = packs[g["line"]]
            last = rows[-1][0]
            values = [w for t, w, _ in rows if t > last - 120000]
            compare_group(c, g, values, "linear", f"{g['line']} last 2 minutes")

    for bad, why in ((["--window", "1"], "window of 1"), (["--quantile-type", "8"], "type 8"),
                     (["--minutes", "2", "--window", "5"], "both windows")):
        p = subprocess.run([heft, "stats", feed, *bad], capture_output=True, text=True)
        c.check(p.returncode == 2 and "heft stats:" in p.stderr, f"usage error ({why}) exits 2")
    p = subprocess.run([heft, "stats", os.path.join(work, "missing.csv")],
                       capture_output=True, text=True)
    c.check(p.returncode == 2 and "cannot open" in p.stderr, "missing feed exits 2")
    p = subprocess.run([heft, "stats", feed, "--line", "jam-3"], capture_output=True, text=True)
    c.check(p.returncode == 2 and "jam-3" in p.stderr, "unknown line exits 2")
    c.finish()


if __name__ == "__main__":
    main()
