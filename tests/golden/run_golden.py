#!/usr/bin/python3
"""Golden-output check: a fixed list of quantcap runs whose outputs must stay
byte for byte what was recorded (a restructuring of the code must not change
a single number or line). The list is the README's short tour (each command's
stdout, as text and with --json where the command has it) and the three demo
studies (scenarios/*.ini swept with --jobs 2 --no-plots; their results.csv and
results.json). See tests/golden/README.md.

Usage: run_golden.py QUANTCAP [--record | --record-variant TAG] [--expected DIR]

  check (default)  run everything and compare with DIR (default
                   tests/golden/expected); a file passes when it equals the
                   recorded one or a variant of it (below), or, for a
                   file known to round differently on another kind of
                   machine (BY_VALUE) run on a kind other than the one
                   that recorded DIR, equals it number by number within
                   that rounding. On a difference
                   print a unified diff of the first differing file, name
                   the others, exit 1. Exit 77 (skipped) when DIR does not
                   exist.
  --record         run everything and write the outputs into DIR (replacing
                   what is there) with the kind of machine that ran them
                   (RECORDED_ON); variants of files whose recorded bytes
                   change are removed, as they were recorded against the
                   former output.
  --record-variant TAG
                   run everything and keep, in DIR/../variants/TAG, the
                   files that differ from DIR: the same outputs as rounded
                   on another kind of machine (replacing that variant).

Commands run from the source tree (relative paths in the outputs stay the same
wherever the tree is), with LC_ALL=C, stdout captured (not a terminal). Every
command must exit 0. Their stderr is not compared (it holds timings)."""
import argparse
import difflib
import json
import os
import platform
import re
import shutil
import subprocess
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
SOURCE = os.path.dirname(os.path.dirname(HERE))
EXPECTED = os.path.join(HERE, "expected")
VARIANTS = "variants"   # beside the expected folder: VARIANTS/TAG/<file>
SKIP = 77               # meson's "skipped" exit status
TIMEOUT_S = 900         # per command; the slowest (a study) takes seconds
DIFF_LINES = 60         # lines of the unified diff printed
JOBS = "2"

# Files seen to round differently on another kind of machine, which the
# check, run on a machine of a kind other than the one that recorded the
# outputs (RECORDED_ON), also accepts when every number is within the
# rounding of such a machine of the recorded one (and all else the same),
# in case no variant was recorded there for the current outputs. The capacity design: its
# Blahut–Arimoto run on 21 candidates stops a few iterations earlier or
# later with the last digits of its thresholds and law (an Intel Xeon with
# AVX-512 took 19 more iterations; tiny masses of ~6e-12 moved by 2e-16).
BY_VALUE = {"design-capacity.json"}
BY_VALUE_REL = 1e-9         # × max(1, |recorded|): numbers
BY_VALUE_ITERATIONS = 0.05  # × recorded: iteration counts
RECORDED_ON = "recorded-on.txt"  # in the expected folder: machine_kind() there

# The README's `capacity M.txt --costs 0,1,4 --budget 1` needs a 3-input
# matrix; this one is invented (a noisy ternary channel), written as M.txt
# into the scratch folder the command runs in.
M_TXT = "0.9 0.1 0\n0.1 0.8 0.1\n0 0.1 0.9\n"

# README "A short tour", in order. (name, arguments, has --json, folder:
# "source" or "scratch"). One change, marked: the capacity design runs on
# 21 levels, not the README's 61, the grid for which a variant was recorded
# on another kind of machine (variants/; both take milliseconds now). One
# addition: `channel` without --csv (its text and JSON). The tour's closing
# `sweep scenarios/researcher.ini` is covered by STUDIES below.
TOUR = [
    ("help", ["--help"], False, "source"),
    ("models", ["models"], True, "source"),
    ("models-apd", ["models", "apd"], True, "source"),
    ("capacity-bsc", ["capacity", "data/examples/bsc-0.11.txt"], True, "source"),
    ("capacity-costs", ["capacity", "M.txt", "--costs", "0,1,4", "--budget", "1"], True,
     "scratch"),
    ("channel-csv", ["channel", "--model", "gauss", "--sigma", "0.5", "--levels", "-1,1",
                     "--thresholds", "-0.5,0,0.5", "--csv"], False, "source"),
    ("channel", ["channel", "--model", "gauss", "--sigma", "0.5", "--levels", "-1,1",
                 "--thresholds", "-0.5,0,0.5"], True, "source"),
    ("design-pam4", ["design", "--model", "gauss", "--snr-db", "10", "--alphabet", "pam:4",
                     "--bits", "3"], True, "source"),
    ("design-compare", ["design", "--model", "gauss", "--snr-db", "10", "--alphabet", "pam:4",
                        "--bits", "3", "--compare"], True, "source"),
    ("design-capacity", ["design", "--model", "gauss", "--snr-db", "5",
                         "--level-grid", "-3,3,21",  # README: -3,3,61
                         "--power-limit", "1", "--bits", "2", "--objective", "capacity"], True,
     "source"),
    ("design-qam-gmi", ["design", "--model", "gauss", "--snr-db", "12", "--alphabet", "qam:16",
                        "--bits", "4", "--objective", "gmi"], True, "source"),
    ("design-poisson", ["design", "--model", "poisson", "--alphabet", "upam:2",
                        "--received-dbm", "-70", "--slot-time", "1e-9", "--wavelength-nm", "1550",
                        "--efficiency", "0.8", "--dark-count-rate", "1e6", "--bits", "2"], True,
     "source"),
    ("design-gauss-sd", ["design", "--model", "gauss-sd", "--alphabet", "upam:4",
                         "--received-dbm", "-12", "--extinction-db", "10", "--responsivity", "0.8",
                         "--bandwidth", "20e9", "--thermal-density", "15", "--bits", "3"], True,
     "source"),
]

# The demo studies. Each runs in seconds once its main axis is thinned by
# --set (the full grids take minutes on two cores); the kept values include
# the operating points the scenarios' [plots] and [density] name.
STUDIES = [
    ("designer", ["snr-db=-5 to 35 step 5"]),                      # 41 -> 9 values
    ("researcher", ["signal=0.1, 0.316, 1, 3.16, 10, 20, 31.6, 100"]),  # 31 -> 8
    # -20 and -19 dBm: PAM-8 at 4 bits there has nearby local maxima that
    # a narrower threshold-move search misses (docs/methods.md, section 4)
    ("planner", ["received-dbm=-36, -30, -24, -20, -19, -18, -12"]),  # 27 -> 7 values
]
STUDY_FILES = ["results.csv", "results.json"]


def environment():
    env = dict(os.environ)
    env["LC_ALL"] = "C"
    env.pop("LANG", None)
    return env


def run(quantcap, args, cwd):
    """stdout of one command; raises RuntimeError naming it on failure."""
    cmd = [quantcap] + args
    try:
        p = subprocess.run(cmd, cwd=cwd, env=environment(), stdout=subprocess.PIPE,
                           stderr=subprocess.PIPE, stdin=subprocess.DEVNULL,
                           timeout=TIMEOUT_S)
    except subprocess.TimeoutExpired:
        raise RuntimeError(f"{' '.join(args)}: no answer after {TIMEOUT_S} s")
    if p.returncode != 0:
        err = p.stderr.decode("utf-8", "replace").strip()
        raise RuntimeError(f"quantcap {' '.join(args)}: exit {p.returncode}: {err}")
    return p.stdout


def command_list():
    """The runs as text lines; recorded beside the outputs, so that a
    changed list is named as such rather than as a changed output."""
    lines = []
    for name, args, has_json, where in TOUR:
        lines.append(f"{name}.txt: quantcap {' '.join(args)}  [in {where}]")
        if has_json:
            lines.append(f"{name}.json: quantcap {' '.join(args)} --json  [in {where}]")
    for study, sets in STUDIES:
        opts = " ".join(f"--set '{s}'" for s in sets)
        lines.append(f"{study}/: quantcap sweep scenarios/{study}.ini --jobs {JOBS} "
                     f"--no-plots {opts} --output-dir DIR  -> {', '.join(STUDY_FILES)}")
    return ("\n".join(lines) + "\n").encode()


def produce(quantcap, scratch):
    """Every output, as {relative file name: bytes}, in a fixed order."""
    out = {"commands.txt": command_list()}
    with open(os.path.join(scratch, "M.txt"), "w") as f:
        f.write(M_TXT)
    for name, args, has_json, where in TOUR:
        cwd = SOURCE if where == "source" else scratch
        print(f"golden: {name}", flush=True)
        out[f"{name}.txt"] = run(quantcap, args, cwd)
        if has_json:
            out[f"{name}.json"] = run(quantcap, args + ["--json"], cwd)
    for study, sets in STUDIES:
        print(f"golden: sweep {study}", flush=True)
        folder = os.path.join(scratch, "sweep-" + study)
        args = ["sweep", f"scenarios/{study}.ini", "--jobs", JOBS, "--no-plots", "--quiet",
                "--output-dir", folder]
        for s in sets:
            args += ["--set", s]
        run(quantcap, args, SOURCE)
        for fname in STUDY_FILES:
            with open(os.path.join(folder, fname), "rb") as f:
                out[f"{study}/{fname}"] = f.read()
    return out


def read(path):
    """The bytes of path, or None when there is no such file."""
    if not os.path.isfile(path):
        return None
    with open(path, "rb") as f:
        return f.read()


def variants_dir(expected):
    return os.path.join(os.path.dirname(expected), VARIANTS)


def variants_of(expected, rel):
    """{tag: bytes} of the recorded variants of file rel."""
    root = variants_dir(expected)
    found = {}
    if os.path.isdir(root):
        for tag in sorted(os.listdir(root)):
            data = read(os.path.join(root, tag, rel))
            if data is not None:
                found[tag] = data
    return found


def write_files(folder, outputs):
    for rel, data in outputs.items():
        path = os.path.join(folder, rel)
        os.makedirs(os.path.dirname(path), exist_ok=True)
        with open(path, "wb") as f:
            f.write(data)


def machine_kind():
    """The processor's model name and the C library's version: what decides
    how the outputs round."""
    model = platform.processor() or platform.machine()
    try:
        with open("/proc/cpuinfo") as f:
            for line in f:
                if line.startswith("model name"):
                    model = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    libc, version = platform.libc_ver()
    return f"{model}; {libc or 'libc'} {version or '?'}"


def record(outputs, expected):
    stale = [rel for rel, data in outputs.items()
             if read(os.path.join(expected, rel)) not in (None, data)]
    if os.path.isdir(expected):
        shutil.rmtree(expected)
    write_files(expected, outputs)
    write_files(expected, {RECORDED_ON: (machine_kind() + "\n").encode()})
    print(f"golden: recorded {len(outputs)} files in {expected}")
    root = variants_dir(expected)
    for rel in stale:
        for tag in variants_of(expected, rel):
            os.remove(os.path.join(root, tag, rel))
            print(f"golden: removed the variant {tag}/{rel}, recorded against the former output")
    return 0


def record_variant(outputs, expected, tag):
    if not os.path.isdir(expected):
        print(f"golden: no recorded outputs in {expected} to record a variant of")
        return 1
    folder = os.path.join(variants_dir(expected), tag)
    if os.path.isdir(folder):
        shutil.rmtree(folder)
    differing = {rel: data for rel, data in outputs.items()
                 if read(os.path.join(expected, rel)) != data}
    if "commands.txt" in differing:
        print("golden: the list of commands changed; record the outputs first")
        return 1
    write_files(folder, differing)
    print(f"golden: recorded {len(differing)} files that differ from {expected} "
          f"in {folder}")
    return 0


def show_diff(rel, want, got):
    a = want.decode("utf-8", "replace").splitlines(keepends=True)
    b = got.decode("utf-8", "replace").splitlines(keepends=True)
    diff = list(difflib.unified_diff(a, b, "expected/" + rel, "now/" + rel))
    if not diff:  # same text once decoded: the bytes differ (line ends, encoding)
        diff = [f"{rel}: the bytes differ ({len(want)} recorded, {len(got)} now) "
                "but not the decoded lines\n"]
    for line in diff[:DIFF_LINES]:
        sys.stdout.write(line if line.endswith("\n") else line + "\n")
    if len(diff) > DIFF_LINES:
        print(f"... ({len(diff) - DIFF_LINES} more diff lines)")


def same_by_value(want, got, key=""):
    """Whether the JSON values want and got agree within BY_VALUE_REL (the
    iteration counts within BY_VALUE_ITERATIONS), all else equal."""
    if isinstance(want, dict) and isinstance(got, dict):
        return want.keys() == got.keys() and all(
            same_by_value(want[k], got[k], k) for k in want)
    if isinstance(want, list) and isinstance(got, list):
        return len(want) == len(got) and all(
            same_by_value(a, b, key) for a, b in zip(want, got))
    if isinstance(want, bool) or isinstance(got, bool):
        return want == got
    if isinstance(want, int) and isinstance(got, int) and key.endswith("iterations"):
        return abs(want - got) <= BY_VALUE_ITERATIONS * abs(want)
    if isinstance(want, (int, float)) and isinstance(got, (int, float)):
        return abs(want - got) <= BY_VALUE_REL * max(1.0, abs(want))
    return want == got


def near_recorded(rel, want, got):
    """Whether got passes as want rounded on another kind of machine."""
    if rel not in BY_VALUE:
        return False
    try:
        return same_by_value(json.loads(want), json.loads(got))
    except ValueError:
        return False


def check(outputs, expected):
    differing, as_variant, by_value = [], [], []
    recorded_on = (read(os.path.join(expected, RECORDED_ON)) or b"").decode().strip()
    elsewhere = recorded_on != machine_kind()
    for rel, got in outputs.items():
        want = read(os.path.join(expected, rel))
        if want is None:
            differing.append((rel, None, got))
        elif want != got:
            tags = [tag for tag, data in variants_of(expected, rel).items() if data == got]
            if tags:
                as_variant.append(f"{rel} ({tags[0]})")
            elif elsewhere and near_recorded(rel, want, got):
                by_value.append(rel)
            else:
                differing.append((rel, want, got))
    if as_variant:
        print("golden: identical to a variant recorded on another kind of machine: " +
              ", ".join(as_variant))
    if by_value:
        print(f"golden: recorded on '{recorded_on or 'an unnamed machine'}', run on "
              f"'{machine_kind()}': not the recorded bytes, but every number within the "
              "rounding of another kind of machine (record a variant here to check them "
              "byte for byte): " + ", ".join(by_value))
    if not differing:
        print(f"golden: {len(outputs)} files identical to {expected}"
              f"{' or a variant' if as_variant else ''}"
              f"{' or within rounding' if by_value else ''}")
        return 0
    rel, want, got = differing[0]
    if want is None:
        print(f"golden: {rel} was not recorded; record again (see tests/golden/README.md)")
    else:
        if rel == "commands.txt":
            print("golden: the list of commands changed since the outputs were recorded;"
                  " record again (see tests/golden/README.md)")
        show_diff(rel, want, got)
    if len(differing) > 1:
        print("golden: also differing: " + ", ".join(d[0] for d in differing[1:]))
    print(f"golden: {len(differing)} of {len(outputs)} files differ")
    return 1


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("quantcap", help="the quantcap program to run")
    mode = ap.add_mutually_exclusive_group()
    mode.add_argument("--record", action="store_true", help="write the expected outputs")
    mode.add_argument("--record-variant", metavar="TAG",
                      help="keep the outputs that differ from the expected ones as variant TAG")
    ap.add_argument("--expected", default=EXPECTED, help="folder of the expected outputs")
    a = ap.parse_args()
    quantcap = os.path.abspath(a.quantcap)
    expected = os.path.abspath(a.expected)
    if a.record_variant is not None and not re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9._-]*",
                                                         a.record_variant):
        print(f"golden: variant tag '{a.record_variant}': expected a letter or digit, then "
              "letters, digits, '.', '_' or '-'")
        return 2
    if not a.record and a.record_variant is None and not os.path.isdir(expected):
        print(f"golden: skipped: no recorded outputs in {expected} "
              "(record them with --record: tests/golden/README.md)")
        return SKIP
    with tempfile.TemporaryDirectory(prefix="quantcap-golden-") as scratch:
        try:
            outputs = produce(quantcap, scratch)
        except RuntimeError as e:
            print(f"golden: {e}")
            return 1
    if a.record:
        return record(outputs, expected)
    if a.record_variant is not None:
        return record_variant(outputs, expected, a.record_variant)
    return check(outputs, expected)


if __name__ == "__main__":
    sys.exit(main())
