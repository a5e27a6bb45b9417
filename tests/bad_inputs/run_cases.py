#!/usr/bin/python3
"""Bad-input catalogue runner: reads cases.tsv (beside this script) and runs
each case against the quantcap command line in a fresh scratch folder that
holds a copy of files/. A case passes when the command exits with the
expected status, prints exactly one line on stderr that starts with
"quantcap: error: " and contains the expected message, prints nothing on
stdout, and leaves the folder as it found it (no output file, complete or
partial, and no temporary file).

Usage: run_cases.py PATH/TO/quantcap [CASE-ID ...]
Exit status 0 when every case passes, 1 otherwise; the last line is
"bad inputs: N passed, N failed"."""
import os
import shlex
import shutil
import subprocess
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
FILES = os.path.join(HERE, "files")
TIMEOUT_S = 120  # per case; the slowest cases finish in well under a second
QC_DMC_MAX_DIM = 1 << 24  # src/quantcap.h


def load_cases(path):
    cases = []
    with open(path, encoding="utf-8") as f:
        for lineno, line in enumerate(f, 1):
            line = line.rstrip("\n")
            if not line.strip() or line.startswith("#"):
                continue
            cols = line.split("\t")
            if len(cols) not in (4, 5):
                sys.exit(f"{path}:{lineno}: expected 4 or 5 tab-separated columns, got {len(cols)}")
            setup = cols[4].split(",") if len(cols) == 5 and cols[4] else []
            cases.append({"id": cols[0], "exit": int(cols[1]), "message": cols[2],
                          "args": shlex.split(cols[3]), "setup": setup,
                          "where": f"{os.path.basename(path)}:{lineno}"})
    return cases


def prepare(folder, setup):
    for name in os.listdir(FILES):
        shutil.copy(os.path.join(FILES, name), folder)
    for step in setup:
        if step == "wide":  # one row of QC_DMC_MAX_DIM + 1 zeros
            with open(os.path.join(folder, "wide.txt"), "w") as f:
                f.write("0 " * QC_DMC_MAX_DIM + "0\n")
        elif step == "loop":
            os.symlink("loop2.txt", os.path.join(folder, "loop.txt"))
            os.symlink("loop.txt", os.path.join(folder, "loop2.txt"))
        elif step != "no-output":
            sys.exit(f"unknown setup step '{step}'")


def listing(folder):
    out = set()
    for root, dirs, files in os.walk(folder):
        for name in dirs + files:
            out.add(os.path.relpath(os.path.join(root, name), folder))
    return out


def run_case(qc, case):
    problems = []
    if "no-output" not in case["setup"] and not any(a in ("--output", "--output-dir") for a in case["args"]):
        problems.append("case asks for no output file (add --output or setup no-output)")
    folder = tempfile.mkdtemp(prefix="qc-bad-")
    try:
        prepare(folder, case["setup"])
        before = listing(folder)
        try:
            p = subprocess.run([qc, *case["args"]], cwd=folder, capture_output=True,
                               text=True, errors="replace", timeout=TIMEOUT_S,
                               stdin=subprocess.DEVNULL)
        except subprocess.TimeoutExpired:
            return [f"no answer within {TIMEOUT_S} s"]
        err_lines = p.stderr.splitlines()
        if p.returncode != case["exit"]:
            problems.append(f"exit {p.returncode}, expected {case['exit']}")
        if len(err_lines) != 1:
            problems.append(f"stderr has {len(err_lines)} lines, expected 1")
        if not p.stderr.startswith("quantcap: error: "):
            problems.append("stderr does not start with 'quantcap: error: '")
        if case["message"] not in p.stderr:
            problems.append(f"message lacks '{case['message']}'")
        if p.stdout:
            problems.append(f"stdout not empty ({p.stdout[:80]!r})")
        after = listing(folder)
        if after != before:
            problems.append(f"files left behind: {sorted(after ^ before)}")
        if problems:
            problems.append(f"stderr was: {p.stderr.strip()[:400]!r}")
    finally:
        shutil.rmtree(folder, ignore_errors=True)
    return problems


def main():
    if len(sys.argv) < 2:
        sys.exit(__doc__)
    qc = os.path.abspath(sys.argv[1])
    only = set(sys.argv[2:])
    cases = load_cases(os.path.join(HERE, "cases.tsv"))
    ids = [c["id"] for c in cases]
    dup = {i for i in ids if ids.count(i) > 1}
    if dup:
        sys.exit(f"duplicate case ids: {sorted(dup)}")
    passed = failed = 0
    for case in cases:
        if only and case["id"] not in only:
            continue
        problems = run_case(qc, case)
        if problems:
            failed += 1
            print(f"FAIL {case['id']} ({case['where']}): quantcap {shlex.join(case['args'])}")
            for what in problems:
                print(f"     {what}")
        else:
            passed += 1
            print(f"ok   {case['id']}")
    print(f"bad inputs: {passed} passed, {failed} failed")
    return 1 if failed or passed == 0 else 0


if __name__ == "__main__":
    sys.exit(main())
