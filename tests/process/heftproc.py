"""Shared helpers for heft's process tests (run by CTest as python3 SCRIPT --build-dir B --source-dir S)."""
import argparse
import os
import sys
import tempfile


def parse_args():
    p = argparse.ArgumentParser()
    p.add_argument("--build-dir", required=True)
    p.add_argument("--source-dir", required=True)
    return p.parse_args()


def tool(build_dir, name):
    """Path of a built executable: heft (tools/) or heftd (daemon/)."""
    sub = "daemon" if name == "heftd" else "tools"
    path = os.path.join(build_dir, sub, name)
    if not os.access(path, os.X_OK):
        sys.exit(f"missing executable {path}: build first")
    return path


def workdir(prefix):
    return tempfile.mkdtemp(prefix=prefix)


class Checks:
    """Counts checks and prints a closing 'N passed, N failed' line."""

    def __init__(self):
        self.passed = 0
        self.failed = 0

    def check(self, condition, what):
        if condition:
            self.passed += 1
            print(f"ok    {what}")
        else:
            self.failed += 1
            print(f"FAIL  {what}")
        return condition

    def finish(self):
        print(f"{self.passed} passed, {self.failed} failed")
        sys.exit(0 if self.failed == 0 and self.passed > 0 else 1)
