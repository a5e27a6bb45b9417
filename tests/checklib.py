"""checklib.py — what the Python check scripts share: the tally (count
each check, print and keep each failure and, when asked, each pass, and
compare a quantcap value with a reference value within a tolerance), and
the small helpers that run the program and read what it wrote.

    from checklib import Tally
    tally = Tally()
    tally.check(rc == 0, "design exits 0")
    tally.near("I(X;Y)", got, want, 1e-9)
    sys.exit(1 if tally.failures else 0)
"""

import csv
import html
import json
import os
import re
import subprocess


class Tally:
    def __init__(self, verbose=False):
        self.count = 0
        self.failures = []
        self.verbose = verbose

    def check(self, cond, what):
        """Count one check; print and keep `what` when `cond` is false."""
        self.count += 1
        if not cond:
            self.failures.append(what)
            print("FAIL:", what)
        elif self.verbose:
            print("ok  ", what)
        return cond

    def near(self, what, got, want, tol):
        """Count one check of |got - want| <= tol, printing both values."""
        ok = abs(got - want) <= tol
        print(f"{'ok  ' if ok else 'FAIL'} {what}: quantcap {got:.12g} scipy {want:.12g}"
              f" (|diff| {abs(got - want):.2e}, tol {tol:g})")
        self.count += 1
        if not ok:
            self.failures.append(what)
        return ok


def qc_runner(qc, timeout=600):
    """run(*args, input_text=None) -> (exit code, stdout, stderr) of `qc`."""
    def run(*args, input_text=None):
        p = subprocess.run([qc, *args], capture_output=True, text=True, input=input_text,
                           timeout=timeout)
        return p.returncode, p.stdout, p.stderr
    return run


def json_runner(run, tally, command="design"):
    """f(*args): `command ARGS --json` parsed, counting one check that it
    exits 0 with JSON ({} when it does not)."""
    def run_json(*args):
        rc, out, err = run(command, *args, "--json")
        tally.check(rc == 0, f"{command} {' '.join(args)}: exit {rc} ({err.strip()})")
        try:
            return json.loads(out)
        except ValueError:
            tally.check(False, f"{command} {' '.join(args)}: output is JSON")
            return {}
    return run_json


def file_writer(folder):
    """write(name, text) -> the path of folder/name holding text."""
    def write(name, text):
        path = os.path.join(folder, name)
        with open(path, "w") as f:
            f.write(text)
        return path
    return write


def sweep_rows(run, folder, name, text, *args):
    """Write scenario `text` to folder/name.ini and sweep it into folder/out
    (one job): (exit code, stdout, stderr, out folder, rows of results.csv,
    [] when it failed)."""
    ini = os.path.join(folder, name + ".ini")
    with open(ini, "w") as f:
        f.write(text)
    out = os.path.join(folder, "out")
    rc, so, se = run("sweep", ini, "--output-dir", out, "--jobs", "1", *args)
    rows = []
    if rc == 0:
        with open(os.path.join(out, "results.csv")) as f:
            rows = list(csv.DictReader(f))
    return rc, so, se, out, rows


def read_bytes(path):
    with open(path, "rb") as f:
        return f.read()


def svg_text(path):
    """The text items of a PLplot SVG, one string per <text> element."""
    with open(path, encoding="utf-8") as f:
        doc = f.read()
    items = re.findall(r"<text[^>]*>(.*?)</text>", doc, re.S)
    return [html.unescape(re.sub(r"<[^>]+>", "", t)) for t in items]
