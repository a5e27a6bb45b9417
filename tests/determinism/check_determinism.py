#!/usr/bin/python3
"""Determinism of the command line: the same inputs give byte-identical
outputs, run after run, whether written to stdout or through --output, and
a sweep gives the same files on 1, 2 or 4 threads and when resumed from
its checkpoint. The one expected
difference is the order of the lines of a sweep's checkpoint.jsonl (points
are appended as they finish): its header must match and its lines must be
the same set. docs/determinism.md explains why nothing else varies.

Usage: check_determinism.py PATH/TO/quantcap
Last line: "determinism: N passed, N failed"."""
import filecmp
import os
import shutil
import subprocess
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
QC = os.path.abspath(sys.argv[1]) if len(sys.argv) > 1 else None
RUNS = 3

sys.path.insert(0, os.path.dirname(HERE))
from checklib import Tally  # noqa: E402

tally = Tally(verbose=True)
check = tally.check


def run(args, cwd=None, env=None):
    p = subprocess.run([QC, *args], capture_output=True, cwd=cwd,
                       env=None if env is None else {**os.environ, **env})
    if p.returncode != 0:
        check(False, f"quantcap {' '.join(args)}: exit {p.returncode}: {p.stderr.decode()[:300]}")
        return None
    return p.stdout


DESIGNS = [
    ["design", "--model", "gauss", "--snr-db", "8", "--alphabet", "pam:4", "--bits", "3",
     "--compare", "--json"],
    ["design", "--model", "apd", "--signal", "40", "--apd-gain", "15", "--apd-k", "0.02",
     "--sigma-th", "50", "--alphabet", "upam:4", "--bits", "3", "--json"],
    ["design", "--model", "preamp", "--modes", "2", "--levels", "0,5,20", "--bits", "2",
     "--objective", "capacity", "--json"],
    ["design", "--model", "poisson", "--signal", "30", "--background", "0.5",
     "--alphabet", "upam:4", "--bits", "3", "--objective", "capacity", "--json"],
    ["design", "--model", "table", "--table", os.path.join(ROOT, "data", "table_demo.txt"),
     "--bits", "2", "--quantizer", "lloyd-max", "--json"],
    ["capacity", os.path.join(ROOT, "data", "examples", "bsc-0.11.txt"), "--json"],
    # a channel with memory: a seeded simulation in parallel batches
    ["design", "--model", "gauss", "--sigma", "0.3", "--alphabet", "pam:4", "--bits", "3",
     "--quantizer", "uniform", "--response", "bessel:4:0.4", "--symbols", "20000",
     "--seed", "5", "--json"],
]
MEMORY = DESIGNS[-1]


def check_memory_threads():
    """The simulated rates of a channel with memory are the same bytes on
    1, 2 and 4 OpenMP threads (independent batches, seeded by index)."""
    outs = [run(MEMORY, env={"OMP_NUM_THREADS": str(n)}) for n in (1, 2, 4)]
    if any(o is None for o in outs):
        return
    check(outs[1] == outs[0] and outs[2] == outs[0],
          "channel with memory: the same bytes on 1, 2 and 4 threads")
    other = run(MEMORY[:-2] + ["6", "--json"])
    check(other is not None and other != outs[0], "channel with memory: another seed differs")


def check_designs(tmp):
    for args in DESIGNS:
        label = " ".join(a if len(a) < 40 else os.path.basename(a) for a in args[:3])
        outs = [run(args) for _ in range(RUNS)]
        if any(o is None for o in outs):
            continue
        check(all(o == outs[0] for o in outs), f"{label}: {RUNS} runs byte-identical on stdout")
        path = os.path.join(tmp, "out.json")
        if run(args + ["--output", path]) is not None:
            with open(path, "rb") as f:
                check(f.read() == outs[0], f"{label}: --output file equals stdout")
            os.unlink(path)


def check_sweep(tmp):
    scenario = os.path.join(HERE, "sweep.ini")
    dirs = {}
    for jobs in (1, 2, 4):
        d = os.path.join(tmp, f"jobs{jobs}")
        if run(["sweep", scenario, "--output-dir", d, "--jobs", str(jobs), "--quiet"]) is None:
            return
        dirs[jobs] = d
    names = sorted(os.listdir(dirs[1]))
    check("results.csv" in names and "results.json" in names, f"sweep wrote {names}")
    for jobs in (2, 4):
        check(sorted(os.listdir(dirs[jobs])) == names, f"sweep on {jobs} threads: same files")
        for name in names:
            a, b = os.path.join(dirs[1], name), os.path.join(dirs[jobs], name)
            if name == "checkpoint.jsonl":
                with open(a) as fa, open(b) as fb:
                    la, lb = fa.read().splitlines(), fb.read().splitlines()
                check(la[:1] == lb[:1] and sorted(la) == sorted(lb),
                      f"sweep on {jobs} threads: {name} has the same header and lines")
            else:
                check(filecmp.cmp(a, b, shallow=False),
                      f"sweep on {jobs} threads: {name} byte-identical to 1 thread")

    # A sweep stopped after a few points and resumed: its records come
    # back from the checkpoint text (17 significant digits round-trip).
    d = os.path.join(tmp, "resumed")
    shutil.copytree(dirs[2], d)
    cp = os.path.join(d, "checkpoint.jsonl")
    with open(cp) as f:
        lines = f.read().splitlines(True)
    with open(cp, "w") as f:
        f.writelines(lines[:6])  # header + 5 finished points
    for name in os.listdir(d):
        if name != "checkpoint.jsonl":
            os.unlink(os.path.join(d, name))
    if run(["sweep", scenario, "--output-dir", d, "--jobs", "2", "--resume", "--quiet"]) is not None:
        for name in names:
            if name != "checkpoint.jsonl":
                check(filecmp.cmp(os.path.join(dirs[1], name), os.path.join(d, name),
                                  shallow=False),
                      f"sweep resumed after 5 points: {name} byte-identical")


def main():
    if not QC:
        sys.exit(__doc__)
    tmp = tempfile.mkdtemp(prefix="qc-determinism-")
    try:
        check_designs(tmp)
        check_memory_threads()
        check_sweep(tmp)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    print(f"determinism: {tally.count - len(tally.failures)} passed, {len(tally.failures)} failed")
    return 1 if tally.failures else 0


if __name__ == "__main__":
    sys.exit(main())
