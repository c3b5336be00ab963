"""Process test for `heft limits`: figures against check-values.md §1.2/§1.4, the
rules-file search, the US table's unconfirmed rows, and error exits.

Run by CTest as: python3 test_comply_limits.py --build-dir B --source-dir S (exit 0 = pass).
"""

import json
import os
import shutil
import subprocess
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import heftproc  # noqa: E402

CAUTION = ("These figures are the packer's own control; they do not replace checks by the "
           "legal metrology authority, and the regulation texts in force locally prevail over "
           "the tables shipped here.")


def run(heft, args, cwd=None, env=None):
    return subprocess.run([heft, "limits"] + args, capture_output=True, text=True, cwd=cwd,
                          env=env, timeout=60)


def main():
    a = heftproc.parse_args()
    heft = os.path.abspath(heftproc.tool(a.build_dir, "heft"))
    rules = os.path.join(a.source_dir, "config", "rules")
    c = heftproc.Checks()

    # TNE / T1 / T2 for 454 g: 3 % = 13.62 → 13.7 g (check-values.md §1.2 row 454).
    r = run(heft, ["--nominal", "454", "--format", "json",
                   "--rules", os.path.join(rules, "eu-average-quantity.yaml")])
    c.check(r.returncode == 0, f"454 g json exits 0 ({r.stderr.strip()})")
    j = json.loads(r.stdout) if r.returncode == 0 else {}
    c.check(j.get("nominal") == 454 and j.get("tne") == 13.7, "454 g: tne 13.7")
    c.check(j.get("t1_limit") == 440.3 and j.get("t2_limit") == 426.6, "454 g: T1 440.3, T2 426.6")
    c.check(j.get("caution") == CAUTION, "json carries the caution")

    # Plans for a lot of 300: 30/1/3 + 30/4/5 with k(30) ≈ 0.503 (check-values.md §1.3/§1.4).
    r = run(heft, ["--nominal", "500", "--lot-size", "300", "--format", "json",
                   "--rules", os.path.join(rules, "eu-average-quantity.yaml")])
    j = json.loads(r.stdout) if r.returncode == 0 else {}
    double = [p for p in j.get("plans", []) if p["set"] == "eu-nondestructive-double"]
    c.check(len(double) == 1, "lot 300: one double plan")
    if double:
        st = double[0]["stages"]
        c.check([(s["size"], s["accept"], s["reject"]) for s in st] == [(30, 1, 3), (30, 4, 5)],
                "lot 300: stages 30 (1/3), 30 (4/5)")
        c.check(abs(double[0]["mean_test"]["k"] - 0.503) < 5e-4, "lot 300: k within 5e-4 of 0.503")

    # Default table found from the executable with no --rules, from any directory.
    tmp = heftproc.workdir("heft-limits-")
    try:
        env = dict(os.environ)
        env.pop("HEFT_RULES_DIR", None)
        r = run(heft, ["--nominal", "500"], cwd=tmp, env=env)
        c.check(r.returncode == 0 and "T1 limit              485.0 g" in r.stdout,
                "default table found relative to the executable")
        c.check(CAUTION in r.stdout, "table output carries the caution")
        # $HEFT_RULES_DIR wins: an edited copy with a different TNE.
        own = os.path.join(tmp, "rules")
        os.mkdir(own)
        with open(os.path.join(rules, "eu-average-quantity.yaml")) as f:
            text = f.read().replace("grams: 15, source", "grams: 16, source")
        with open(os.path.join(own, "eu-average-quantity.yaml"), "w") as f:
            f.write(text)
        env["HEFT_RULES_DIR"] = own
        # 750 g is in the fixed 500–1000 g band (500 g itself is the top of 300–500 g).
        r = run(heft, ["--nominal", "750", "--format", "json"], cwd=tmp, env=env)
        c.check(r.returncode == 0 and json.loads(r.stdout)["tne"] == 16, "HEFT_RULES_DIR is used")
        # A broken table: exit 2 with file:line:column.
        with open(os.path.join(own, "broken.yaml"), "w") as f:
            f.write(text.replace("tag: S}", "tag: Z}", 1))
        r = run(heft, ["--nominal", "500", "--rules", "broken"], cwd=tmp, env=env)
        c.check(r.returncode == 2 and "broken.yaml:" in r.stderr and "must be one of" in r.stderr,
                "broken table: exit 2 with position")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)

    # US table: MAV rows unconfirmed → no tolerance without opt-in.
    r = run(heft, ["--nominal", "340", "--rules", "us-hb133", "--format", "json"],
            env=dict(os.environ, HEFT_RULES_DIR=rules))
    j = json.loads(r.stdout) if r.returncode == 0 else {}
    c.check(r.returncode == 0 and j.get("mav") is None and j.get("t1_limit") is None,
            "us-hb133: no MAV without opt-in")
    r = run(heft, ["--nominal", "340", "--rules", "us-hb133", "--format", "json",
                   "--allow-unconfirmed"], env=dict(os.environ, HEFT_RULES_DIR=rules))
    j = json.loads(r.stdout) if r.returncode == 0 else {}
    c.check(j.get("mav") == 16.2 and any("unconfirmed" in n for n in j.get("notes", [])),
            "us-hb133: opt-in shows the MAV, flagged")

    # Errors: exit 2 with a reason.
    for args, what in [([], "missing --nominal"), (["--nominal", "x"], "non-numeric nominal"),
                       (["--nominal", "3"], "nominal below the table"),
                       (["--nominal", "500", "--format", "xml"], "bad format"),
                       (["--nominal", "500", "--lot-size", "0"], "bad lot size"),
                       (["--nominal", "500", "--rules", "/no/such.yaml"], "missing rules file")]:
        r = run(heft, args)
        c.check(r.returncode == 2 and r.stderr.strip() != "", f"{what}: exit 2 with a message")
    c.finish()


if __name__ == "__main__":
    main()
