#!/usr/bin/python3
"""What an engineer would script instead of heft: pandas + numpy over a recorded feed.

  tools/pandas_baseline.py FEED.csv [--window 500] [--json]

Per line, on the native CSV feed (time,line,head,weight): a rolling count window's mean,
standard deviation, median and quartiles (pandas' rolling(); quartiles by linear
interpolation, Hyndman-Fan type 7, as heft's default); an EWMA of the weights
(lambda 0.2, pandas ewm(alpha=0.2, adjust=False)); and a two-sided tabular CUSUM
(k = 0.5 sigma, h = 5 sigma, reset after a signal; Montgomery's "Introduction to
Statistical Quality Control" form, from memory) with mean and sigma taken from the line's
first WINDOW packs. The CUSUM recursion has no vectorised form in pandas, so it is a
plain loop over numpy values, as one would write it.

Prints the records/s (wall time of read + compute) and, with --json, the last full
window's figures per line so tools/bench can check heft computes the same numbers
(tools/microbench/pipeline_bench.cpp, mode `rolling`). A benchmark baseline, not a test.
"""
import argparse
import json
import time

import numpy as np
import pandas as pd

LAMBDA = 0.2
K = 0.5
H = 5.0


def cusum_signals(x, mu, sigma):
    z = (x - mu) / sigma
    cp = cm = 0.0
    signals = 0
    for v in z:
        cp = max(0.0, cp + v - K)
        cm = max(0.0, cm - v - K)
        if cp > H or cm > H:
            signals += 1
            cp = cm = 0.0
    return signals


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("feed")
    ap.add_argument("--window", type=int, default=500)
    ap.add_argument("--json", action="store_true")
    args = ap.parse_args()
    w = args.window

    t0 = time.perf_counter()
    df = pd.read_csv(args.feed, dtype={"line": "category", "head": "float64",
                                       "weight": "float64"})
    out = {}
    for line, g in df.groupby("line", observed=True, sort=True):
        x = g["weight"]
        roll = x.rolling(w)
        mean = roll.mean()
        sd = roll.std()
        q1 = roll.quantile(0.25, interpolation="linear")
        med = roll.median()
        q3 = roll.quantile(0.75, interpolation="linear")
        ewma = x.ewm(alpha=LAMBDA, adjust=False).mean()
        values = x.to_numpy()
        signals = 0
        if len(values) > w:
            mu = values[:w].mean()
            sigma = values[:w].std(ddof=1)
            signals = cusum_signals(values[w:], mu, sigma)
        out[str(line)] = {
            "mean": float(mean.iloc[-1]) if len(x) >= w else 0.0,
            "sd": float(sd.iloc[-1]) if len(x) >= w else 0.0,
            "q1": float(q1.iloc[-1]) if len(x) >= w else 0.0,
            "median": float(med.iloc[-1]) if len(x) >= w else 0.0,
            "q3": float(q3.iloc[-1]) if len(x) >= w else 0.0,
            "ewma": float(ewma.iloc[-1]),
            "cusum_signals": int(signals),
        }
    secs = time.perf_counter() - t0
    records = len(df)
    if args.json:
        print(json.dumps({"records": records, "wall_s": secs, "lines": out}))
    else:
        print(f"pandas baseline: {records:,} records, {len(out)} lines in {secs:.2f} s "
              f"= {records / secs:,.0f} records/s (numpy {np.__version__}, pandas {pd.__version__})")


if __name__ == "__main__":
    main()
