#!/usr/bin/python3
"""End-to-end contract of `quantcap sweep`: every row equals a single
`quantcap design --json` run at the same point; --jobs 1 and --jobs 2 give
byte-identical tables; a sweep killed with SIGKILL and resumed loses no
point and repeats none; outputs have their documented keys; plot files are
valid SVG/PNG; scenario errors name the file and line.

Usage: check_sweep.py PATH/TO/quantcap
The scenarios below are invented for the test."""
import csv
import json
import os
import re
import signal
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally, qc_runner, file_writer, read_bytes  # noqa: E402

QC = sys.argv[1]
tally = Tally()
check = tally.check


run = qc_runner(QC)


tmp = tempfile.mkdtemp(prefix="qc-sweep-")


write = file_writer(tmp)


SMALL = """# invented test scenario
[scenario]
title = sweep test

[receiver]
model = gauss

[design]
objective = mi
quantizer = uniform

[alphabet pam2]
label = PAM-2
levels = -1,1

[alphabet pam4]
label = PAM-4
levels = -3,-1,1,3

[sweep]
snr-db = 0 to 15 step 5
bits = 1 to 3 step 1

[plots]
rate-vs-bits = 0, 10

[density]
alphabet = pam4
snr-db = 10
bits = 2
"""
small = write("small.ini", SMALL)
npoints = 2 * 4 * 3

# --- a sweep and its outputs ---------------------------------------------
out1 = os.path.join(tmp, "jobs1")
rc, out, err = run("sweep", small, "--output-dir", out1, "--jobs", "1")
check(rc == 0, f"sweep --jobs 1 exit {rc}: {err}")
check(f"sweep: {npoints} points (0 resumed, {npoints} computed, 0 failed)" in out,
      f"summary line ({out.splitlines()[:1]})")
check(err == "", f"nothing on stderr when it is not a terminal ({err!r})")

with open(os.path.join(out1, "results.csv")) as f:
    rows = list(csv.DictReader(f))
with open(os.path.join(out1, "results.csv")) as f:
    header = f.readline().strip().split(",")
# axis columns are the keys spelt as fields (snr-db -> snr_db); points count from 1
check(header[:6] == ["point", "alphabet", "snr_db", "bits", "status", "error"],
      f"CSV header starts with the inputs ({header[:6]})")
for key in ("rate_bits", "unquantized_bits", "loss_bits", "thresholds", "parameters.sigma"):
    check(key in header, f"CSV has column {key}")
check(len(rows) == npoints, f"CSV has one row per point ({len(rows)})")
for key in ("rate_limited_by", "unquantized_limited_by", "noiseless_limit", "snr_penalty_db",
            "snr_penalty_note"):
    check(key in header, f"CSV has column {key}")
check(all((r["snr_penalty_db"] == "") == (r["snr_penalty_note"] != "") for r in rows
          if r["status"] == "ok"),
      "CSV: an SNR penalty cell is empty exactly where its note says why")
check(all(float(r["loss_bits"]) >= 0.0 for r in rows if r["status"] == "ok"), "CSV: no negative loss")
check([int(r["point"]) for r in rows] == list(range(1, npoints + 1)), "CSV rows in grid order")

doc = json.load(open(os.path.join(out1, "results.json")))
for key in ("format", "version", "scenario", "points"):
    check(key in doc, f"results.json has key {key}")
for key in ("file", "title", "hash", "points", "alphabets", "axes"):
    check(key in doc["scenario"], f"results.json scenario has key {key}")
check(len(doc["points"]) == npoints, "results.json has every point")
for key in ("point", "alphabet", "settings", "status", "error", "result"):
    check(key in doc["points"][0], f"point record has key {key}")
check(doc["scenario"]["axes"][0] == {"key": "snr-db", "values": ["0", "5", "10", "15"]},
      "axis values as written")

# every row equals `quantcap design --json` with the point's settings
for p in doc["points"]:
    if p["point"] % 5:
        continue
    args = ["design", "--json"]
    for k, v in p["settings"].items():
        args += [f"--{k}", v]
    rc, out, err = run(*args)
    check(rc == 0, f"design at point {p['point']}: {err}")
    single = json.loads(out)
    check(single == p["result"], f"point {p['point']}: sweep result equals design --json")
    row = rows[p["point"] - 1]
    check(float(row["rate_bits"]) == single["rate_bits"],
          f"point {p['point']}: CSV rate_bits round-trips exactly")
    check(row["thresholds"] == " ".join(format(t, ".17g") for t in single["thresholds"]),
          f"point {p['point']}: CSV thresholds")

# plots: valid files of the asked format (unless this build has no PLplot)
rc, out, err = run("sweep", small, "--output-dir", out1, "--resume")
have_plots = "plots skipped" not in out
check(have_plots or not [f for f in os.listdir(out1) if f.endswith(".svg")],
      "no plots from a build without PLplot")
# one figure of rate against SNR (a panel per alphabet), one of rate against
# bits (a panel per operating point), one density
plots = [f for f in os.listdir(out1) if f.endswith(".svg")] if have_plots else ["x"] * 3
check(len(plots) == 1 + 1 + 1, f"three SVG plots ({sorted(plots)})")
for name in plots if have_plots else []:
    data = read_bytes(os.path.join(out1, name))
    check(len(data) > 1000 and b"<svg" in data[:2000] and data.rstrip().endswith(b"</svg>"),
          f"{name} is an SVG document")
check(not [f for f in os.listdir(out1) if ".tmp." in f], "no temporary files left")

# --jobs 2: the same bytes
out2 = os.path.join(tmp, "jobs2")
rc, out, err = run("sweep", small, "--output-dir", out2, "--jobs", "2", "--no-plots")
check(rc == 0, f"sweep --jobs 2: {err}")
for name in ("results.csv", "results.json"):
    check(read_bytes(os.path.join(out1, name)) == read_bytes(os.path.join(out2, name)),
          f"{name}: --jobs 1 and --jobs 2 byte-identical")
check(not [f for f in os.listdir(out2) if f.endswith(".svg")], "--no-plots draws nothing")

# overrides: PNG plots, a narrower axis
out3 = os.path.join(tmp, "png")
rc, out, err = run("sweep", small, "--output-dir", out3, "--set", "plots.format=png",
                   "--set", "bits=1,2", "--set=alphabet.pam4.label=four levels")
check(rc == 0, f"sweep with --set: {err}")
rows3 = list(csv.DictReader(open(os.path.join(out3, "results.csv"))))
check(len(rows3) == 2 * 4 * 2, f"--set bits=1,2 narrows the grid ({len(rows3)})")
pngs = [f for f in os.listdir(out3) if f.endswith(".png")]
check(len(pngs) == (3 if have_plots else 0), f"three PNG plots ({sorted(pngs)})")
for name in pngs:
    data = read_bytes(os.path.join(out3, name))
    check(data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 1000, f"{name} is a PNG")

# resuming another scenario's checkpoint is refused
rc, out, err = run("sweep", small, "--output-dir", out3, "--resume", "--set", "bits=1,3")
check(rc == 2 and "belongs to another scenario" in err, f"resume guard: {rc} {err}")

# --- kill and resume ------------------------------------------------------
BIG = SMALL.replace("snr-db = 0 to 15 step 5\nbits = 1 to 3 step 1",
                    "snr-db = 0 to 30 step 1\nbits = 1 to 6 step 1") \
           .replace("rate-vs-bits = 0, 10", "rate-vs-bits = 0")
big = write("big.ini", BIG)
nbig = 2 * 31 * 6
full = os.path.join(tmp, "full")
rc, out, err = run("sweep", big, "--output-dir", full, "--jobs", "2", "--no-plots")
check(rc == 0, f"uninterrupted big sweep: {err}")

killed = os.path.join(tmp, "killed")
cp = os.path.join(killed, "checkpoint.jsonl")
interrupted = False
for attempt in range(3):
    proc = subprocess.Popen([QC, "sweep", big, "--output-dir", killed, "--jobs", "2", "--no-plots"],
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    want = 10 + 40 * attempt
    deadline = time.time() + 120
    while time.time() < deadline and proc.poll() is None:
        try:
            with open(cp, "rb") as f:
                if f.read().count(b"\n") > want:
                    break
        except FileNotFoundError:
            pass
        time.sleep(0.002)
    if proc.poll() is None:
        proc.send_signal(signal.SIGKILL)
        proc.wait()
        interrupted = True
        break
check(interrupted, "the sweep was killed before it finished")
lines_at_kill = read_bytes(cp).count(b"\n") - 1
check(0 < lines_at_kill < nbig, f"killed partway ({lines_at_kill} of {nbig} points)")
check(not os.path.exists(os.path.join(killed, "results.csv")), "no table from a killed sweep")

rc, out, err = run("sweep", big, "--output-dir", killed, "--jobs", "2", "--no-plots", "--resume")
check(rc == 0, f"resumed sweep: {err}")
check(f"({lines_at_kill} resumed, {nbig - lines_at_kill} computed, 0 failed)" in out,
      f"resume skips the finished points ({out.strip()})")
for name in ("results.csv", "results.json"):
    check(read_bytes(os.path.join(full, name)) == read_bytes(os.path.join(killed, name)),
          f"{name}: killed + resumed equals uninterrupted")
seen = {}
with open(cp) as f:
    head = json.loads(f.readline())
    check(head.get("format") == "quantcap-checkpoint" and head.get("points") == nbig,
          "checkpoint header")
    for line in f:
        p = json.loads(line)["point"]
        seen[p] = seen.get(p, 0) + 1
check(sorted(seen) == list(range(1, nbig + 1)), "checkpoint: no point missing (points count from 1)")
check(all(v == 1 for v in seen.values()), "checkpoint: no point doubled")

# --- points are numbered the same way in messages and in results.csv ------
path = write("numbering.ini", "[receiver]\nmodel = gauss\nsnr-db = 10\nalphabet = pam:2\n"
             "[design]\nobjective = capacity\n[sweep]\nmean-limit = 0.5, -5\nbits = 1\n")
numbered = os.path.join(tmp, "numbered")
rc, out, err = run("sweep", path, "--output-dir", numbered, "--no-plots")
m = re.search(r"first: point (\d+) ", err)
with open(os.path.join(numbered, "results.csv")) as f:
    failed = [r["point"] for r in csv.DictReader(f) if r["status"] != "ok"]
check(rc == 0 and m is not None and failed == [m.group(1)] == ["2"],
      f"the warning names the point as results.csv does ({err.strip()!r}, {failed})")

# --- an alphabet sweep axis and mass points in results.csv ---------------
path = write("alphabet_axis.ini", "[receiver]\nmodel = gauss\nsnr-db = 10\n"
             "[design]\nobjective = capacity\n[sweep]\nalphabet = pam:2, pam:4\nbits = 2\n")
axis_dir = os.path.join(tmp, "alphabet_axis")
rc, out, err = run("sweep", path, "--output-dir", axis_dir, "--no-plots")
with open(os.path.join(axis_dir, "results.csv")) as f:
    header = f.readline().strip().split(",")
with open(os.path.join(axis_dir, "results.csv")) as f:
    rows = list(csv.DictReader(f))
check(rc == 0 and header.count("alphabet") == 1 and header[:3] == ["point", "alphabet_name", "alphabet"],
      f"alphabet axis: one column per meaning ({header[:4]})")
check([r["alphabet"] for r in rows] == ["pam:2", "pam:4"], "alphabet axis: its values in the column")
# each mass point as level:probability, matching the levels and law columns
for r in rows:
    pairs = [tuple(float(v) for v in p.split(":")) for p in r.get("mass_points", "").split()]
    law = dict(zip(map(float, r["levels"].split()), map(float, r["input_distribution"].split())))
    check(pairs and all(abs(law.get(lv, -1.0) - pr) <= 1e-15 for lv, pr in pairs)
          and abs(sum(pr for _, pr in pairs) - 1.0) < 1e-5,
          f"mass_points are level:probability pairs of the law ({r.get('mass_points')!r})")

# --- scenario errors name the file and line --------------------------------
def expect_error(text, needle, what, *extra):
    path = write("bad.ini", text)
    rc, out, err = run("sweep", path, "--output-dir", os.path.join(tmp, "never"), *extra)
    check(rc == 2, f"{what}: exit {rc} ({err.strip()})")
    check(err.startswith("quantcap: error: ") and needle in err, f"{what}: '{needle}' in {err.strip()!r}")
    check(not os.path.exists(os.path.join(tmp, "never")), f"{what}: nothing written")


base = "[receiver]\nmodel = gauss\nlevels = -1,1\n"
expect_error(base + "[design]\nbits = 0\n", "bad.ini:5: 'bits': '0' is not a whole number from 1 to 16",
             "bits out of range")
expect_error(base + "[sweepp]\n", "bad.ini:4: unknown section [sweepp]", "unknown section")
expect_error(base + "sigmaa = 1\n", "did you mean 'sigma'?", "misspelt key")
expect_error(base + "bits = 2\n[sweep]\nsnr-db = 0, x\n", "bad.ini:6: 'snr-db': 'x' is not a decimal number",
             "bad number in an axis")
expect_error(base + "[sweep]\nbits = 1,2\n", "give 'sigma' or 'snr-db'", "missing noise",
             "--set", "snr-db=3", "--set", "sigma=1")
expect_error(base + "[sweep]\nbits = 1\n", "--set nosuch=1: unknown key", "bad override",
             "--set", "nosuch=1")
rc, out, err = run("sweep", os.path.join(tmp, "missing.ini"))
check(rc == 2 and "missing.ini: cannot open" in err, f"missing scenario file: {err.strip()}")
rc, out, err = run("sweep", "--help")
check(rc == 0 and "usage: quantcap sweep" in out, "sweep --help")

print(f"{tally.count - len(tally.failures)} passed, {len(tally.failures)} failed")
sys.exit(1 if tally.failures else 0)
