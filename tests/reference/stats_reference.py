#!/usr/bin/python3
"""Reference values for heft's statistics engine, from numpy and scipy (Debian python3-numpy,
python3-scipy; use /usr/bin/python3).

Generates data sets with fixed seeds (invented Millbrook Oat Co. weights: 500 g oat bags,
340 g honey jars, and a 1,000,000 g bulk case to stress precision) and writes, for each,
the data and what numpy/scipy say about them:
  mean, sd (ddof=1), min, max                      numpy
  percentiles, H&F type 7 and type 6               numpy.quantile(method='linear'|'weibull')
  skewness, excess kurtosis (bias-corrected)       scipy.stats.skew/kurtosis(bias=False)
  mr_sigma = mean |x[i] - x[i-1]| / (2/sqrt(pi))   numpy
  raw histogram bin counts                         numpy.histogram_bin_edges
  runs about the median (points on it dropped)     counts by hand here; exact p-values with
                                                   Python integers (Swed & Eisenhart 1943
                                                   formula), normal ones with scipy.stats.norm
  one-way ANOVA F and p                            scipy.stats.f_oneway

usage:
  stats_reference.py [--out FILE]   write the reference (default: stats_reference.json here)
  stats_reference.py --check FILE   recompute and compare with FILE; exit 1 on a difference
The Catch2 test tests/unit/stats_reference_test.cpp reads the written file, so the unit tests
need no Python; tests/process/test_stats_reference.py runs --check and compares `heft stats`.
"""
import argparse
import json
import math
import os
import sys
from fractions import Fraction

import numpy as np
from scipy import stats

PROBS = [0.0, 0.01, 0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95, 0.99, 1.0]
D2_SPAN2 = 2.0 / math.sqrt(math.pi)


def datasets():
    out = {}
    rng = np.random.default_rng(20260302)
    out["oats_7"] = 500.0 + rng.normal(3.0, 1.8, 7)
    out["oats_10"] = 500.0 + rng.uniform(-2.0, 6.0, 10)
    out["oats_500"] = 500.0 + rng.normal(3.0, 1.8, 500)
    out["bulk_1e6_400"] = 1_000_000.0 + rng.normal(0.0, 0.5, 400)
    out["honey_skewed_300"] = 340.0 + rng.lognormal(0.5, 0.6, 300)
    out["oats_two_modes_400"] = np.concatenate(
        [rng.normal(497.0, 1.0, 200), rng.normal(505.0, 1.0, 200)])[rng.permutation(400)]
    out["oats_ties_61"] = np.round((503.0 + rng.normal(0.0, 1.0, 61)) * 2.0) / 2.0
    out["oats_drift_150"] = 500.0 + np.linspace(0.0, 4.0, 150) + rng.normal(0.0, 0.6, 150)
    return out


def exact_runs_pvalues(n1, n2, r):
    total = math.comb(n1 + n2, n1)

    def prob(k):
        if k % 2 == 0:
            h = k // 2
            return Fraction(2 * math.comb(n1 - 1, h - 1) * math.comb(n2 - 1, h - 1), total)
        h = (k - 1) // 2
        a = math.comb(n1 - 1, h) * math.comb(n2 - 1, h - 1) if h >= 1 else 0
        b = math.comb(n1 - 1, h - 1) * math.comb(n2 - 1, h) if h >= 1 else 0
        return Fraction(a + b, total)

    ks = range(2, n1 + n2 + 1)
    fewer = sum((prob(k) for k in ks if k <= r), Fraction(0))
    more = sum((prob(k) for k in ks if k >= r), Fraction(0))
    return float(fewer), float(more)


def runs_figures(x):
    med = float(np.median(x))
    signs = [1 if v > med else -1 for v in x if v != med]
    n1 = signs.count(1)
    n2 = signs.count(-1)
    runs = 1 + sum(1 for a, b in zip(signs, signs[1:]) if a != b)
    longest, cur = 1, 1
    for a, b in zip(signs, signs[1:]):
        cur = cur + 1 if a == b else 1
        longest = max(longest, cur)
    n = n1 + n2
    e = 2.0 * n1 * n2 / n + 1.0
    var = 2.0 * n1 * n2 * (2.0 * n1 * n2 - n1 - n2) / (n * n * (n - 1.0))
    z = (runs - e) / math.sqrt(var)
    fewer, more = exact_runs_pvalues(n1, n2, runs)
    return {
        "centre": med, "above": n1, "below": n2, "on_centre": len(x) - n, "runs": runs,
        "longest_run": longest, "expected_runs": e, "variance": var, "z": z,
        "p_fewer_exact": fewer, "p_more_exact": more,
        "p_fewer_normal": float(stats.norm.cdf(z)), "p_more_normal": float(stats.norm.sf(z)),
    }


def describe(x):
    x = np.asarray(x, dtype=float)
    return {
        "count": int(x.size),
        "mean": float(np.mean(x)),
        "sd": float(np.std(x, ddof=1)),
        "min": float(np.min(x)),
        "max": float(np.max(x)),
        "probs": PROBS,
        "type7": [float(v) for v in np.quantile(x, PROBS, method="linear")],
        "type6": [float(v) for v in np.quantile(x, PROBS, method="weibull")],
        "skewness": float(stats.skew(x, bias=False)),
        "kurtosis": float(stats.kurtosis(x, bias=False)),
        "mr_sigma": float(np.mean(np.abs(np.diff(x))) / D2_SPAN2),
        "raw_bins": {rule: int(len(np.histogram_bin_edges(x, bins=rule)) - 1)
                     for rule in ("sqrt", "sturges", "scott", "fd")},
        "runs": runs_figures(x),
    }


def anova_sets():
    rng = np.random.default_rng(87)
    out = {}
    # 12-head filler: head 7 runs 0.6 g heavy, head 3 0.4 g light; unequal counts.
    groups = []
    for head in range(12):
        offset = {7: 0.6, 3: -0.4}.get(head, 0.0)
        groups.append(503.0 + offset + rng.normal(0.0, 1.8, 40 + 3 * head))
    out["oats_12_heads"] = groups
    # Heads that do not differ, at 1e6 g (precision of the sums of squares).
    out["bulk_4_heads_1e6"] = [1_000_000.0 + rng.normal(0.0, 0.5, 25 + i) for i in range(4)]
    return out


def build():
    ref = {"generator": "tests/reference/stats_reference.py",
           "numpy": np.__version__, "scipy": __import__("scipy").__version__,
           "datasets": {}, "anova": {}}
    for name, x in datasets().items():
        entry = {"data": [float(v) for v in x]}
        entry.update(describe(x))
        ref["datasets"][name] = entry
    for name, groups in anova_sets().items():
        res = stats.f_oneway(*groups)
        ref["anova"][name] = {
            "groups": [[float(v) for v in g] for g in groups],
            "f": float(res.statistic), "p_value": float(res.pvalue),
        }
    return ref


def close(a, b, rel=1e-12):
    if isinstance(a, dict):
        return a.keys() == b.keys() and all(close(a[k], b[k], rel) for k in a)
    if isinstance(a, list):
        return len(a) == len(b) and all(close(u, v, rel) for u, v in zip(a, b))
    if isinstance(a, float) or isinstance(b, float):
        return a == b or abs(a - b) <= rel * max(abs(a), abs(b))
    return a == b


def main():
    p = argparse.ArgumentParser()
    p.add_argument("--out", default=os.path.join(os.path.dirname(os.path.abspath(__file__)),
                                                 "stats_reference.json"))
    p.add_argument("--check")
    args = p.parse_args()
    ref = build()
    if args.check:
        with open(args.check) as f:
            stored = json.load(f)
        for key in ("numpy", "scipy", "generator"):
            stored.pop(key, None)
            ref.pop(key, None)
        if not close(stored, ref):
            print(f"{args.check} differs from a fresh computation: regenerate it", file=sys.stderr)
            return 1
        print(f"{args.check} agrees with numpy {np.__version__} / scipy")
        return 0
    with open(args.out, "w") as f:
        json.dump(ref, f, indent=1)
        f.write("\n")
    print(f"wrote {args.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
