#!/usr/bin/python3
"""Command line of the converter quantizer: `quantcap design --quantizer
converter` (JSON keys enob, gain, offset, the converter object, thresholds
as the transition levels), measured transition files, `--compare`, SINAD
against ENOB, `require --solve-for enob`, and a sweep over ENOB, jitter and
gain (the bad-input paths are cases in tests/bad_inputs/cases.tsv).

Usage: check_converter_cli.py PATH/TO/quantcap
References: IEEE Std 1241 (SINAD = 6.02 ENOB + 1.76 dB for a full-scale
sine, with the exact constants 20 log10 2 and 10 log10 1.5); data
processing (added noise never raises the rate; Cover & Thomas, Elements of
Information Theory, thm. 2.8.1)."""
import csv
import json
import math
import os
import sys
import tempfile

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally, qc_runner, json_runner  # noqa: E402

QC = sys.argv[1]
tally = Tally()
check = tally.check
TOL_ORDER = 1e-12  # bits: slack of "never more"

BASE = ["--model", "gauss", "--snr-db", "18", "--alphabet", "pam:8", "--full-scale", "-1,1"]


run = qc_runner(QC)


design_json = json_runner(run, tally)


with tempfile.TemporaryDirectory() as work:
    # --- JSON of one converter ---------------------------------------------
    d = design_json(*BASE, "--bits", "4", "--enob", "3.5", "--converter-gain", "0.1",
                    "--converter-offset", "0.02")
    check(d.get("quantizer") == "converter", "quantizer is converter")
    check(d.get("enob") == 3.5 and d.get("gain") == 0.1 and d.get("offset") == 0.02,
          "enob, gain, offset as given")
    t = d.get("thresholds", [])
    check(len(t) == 15 and all(abs(t[k] - (-1 + 2 * (k + 1) / 16)) < 1e-15 for k in range(15)),
          "thresholds are the 15 transition levels of the full scale")
    c = d.get("converter", {})
    check(c.get("bits") == 4 and c.get("full_scale") == [-1, 1] and c.get("gain_rule") == "fixed",
          "converter object: bits, full scale, gain rule")
    # noise: (2^2/12)(4^-3.5 - 4^-4) at the converter input (IEEE Std 1241 with Delta^2/12 out)
    want = math.sqrt(4 / 12 * (4 ** -3.5 - 4 ** -4))
    tally.near("converter noise rms", c.get("noise_rms", 0), want, 1e-15)
    tally.near("SINAD of ENOB 3.5 (6.02 ENOB + 1.76)", c.get("sinad_db", 0), 6.02 * 3.5 + 1.76,
               0.01)

    # --- SINAD given instead of ENOB --------------------------------------------
    d = design_json(*BASE, "--bits", "6", "--sinad-db", "30")
    tally.near("ENOB of SINAD 30 dB", d.get("enob", 0),
               (30 - 10 * math.log10(1.5)) / (20 * math.log10(2)), 1e-12)

    # --- a measured file of the ideal levels is the ideal converter ------------
    path = os.path.join(work, "adc.txt")
    with open(path, "w") as f:
        f.write("# 3-bit converter, ideal\n")
        for k in range(1, 8):
            f.write(f"{-1 + 2 * k / 8!r}\n")
    a = design_json(*BASE, "--bits", "3")
    b = design_json(*BASE, "--bits", "3", "--transitions", path)
    check(a.get("rate_bits") == b.get("rate_bits") and b["converter"]["measured_transitions"],
          "ideal transition file: same rate as the ideal converter")

    # --- compare: the ideal strategies and the converter -----------------------
    rc, out, err = run("design", *BASE, "--bits", "5", "--enob", "4", "--compare", "--json")
    names = [e.get("quantizer") for e in json.loads(out)] if rc == 0 else []
    check(names == ["uniform", "lloyd-max", "optimal", "converter"],
          f"compare names every strategy and the converter ({names})")
    rates = {e["quantizer"]: e["rate_bits"] for e in json.loads(out)} if rc == 0 else {}
    check(rates and rates["converter"] <= rates["optimal"] + TOL_ORDER,
          "the converter does not beat the MI-optimal quantizer")

    # --- the ENOB a BER target needs ---------------------------------------------
    rc, out, err = run("require", "--target", "ber=2.4e-4", "--solve-for", "enob", "--range",
                       "3,6", "--model", "gauss", "--snr-db", "26", "--alphabet", "pam:8",
                       "--bits", "6", "--full-scale", "-1,1", "--converter-gain", "best",
                       "--json")
    r = json.loads(out) if rc == 0 else {}
    check(rc == 0 and 3 < r.get("required", 0) < 6, f"require solves for enob ({err.strip()})")

    # --- a sweep over ENOB, jitter and gain ----------------------------------
    ini = os.path.join(work, "adc.ini")
    with open(ini, "w") as f:
        f.write("[receiver]\nmodel = gauss\nsnr-db = 18\n[design]\nquantizer = converter\n"
                "full-scale = -1, 1\nalphabet = pam:8\nbits = 6\nsignal-freq = 10e9\n"
                "[sweep]\nconverter-gain = 0.1, 0.14\njitter-s = 0 to 2e-12 count 3\n"
                "enob = 3 to 6 step 1\n")
    out_dir = os.path.join(work, "sweep")
    rc, out, err = run("sweep", ini, "--output-dir", out_dir, "--quiet")
    check(rc == 0, f"sweep over converter keys ({err.strip()})")
    rows = list(csv.DictReader(open(os.path.join(out_dir, "results.csv")))) if rc == 0 else []
    check(len(rows) == 24 and all(r["status"] == "ok" for r in rows), "24 points, all ok")
    rate = {(r["converter_gain"], r["jitter_s"], r["enob"]): float(r["rate_bits"]) for r in rows}
    for g in ("0.1", "0.14"):
        for j in ("0", "1e-12", "2e-12"):
            seq = [rate.get((g, j, e)) for e in ("3", "4", "5", "6")]
            check(None not in seq and all(seq[i] <= seq[i + 1] + TOL_ORDER for i in range(3)),
                  f"gain {g} jitter {j}: rate does not fall as ENOB grows {seq}")
        for e in ("3", "4", "5", "6"):
            seq = [rate.get((g, j, e)) for j in ("0", "1e-12", "2e-12")]
            check(None not in seq and all(seq[i] + TOL_ORDER >= seq[i + 1] for i in range(2)),
                  f"gain {g} ENOB {e}: rate does not grow with jitter {seq}")

# a sweep over bits and ENOB: the points whose ENOB exceeds their bits are
# recorded as infeasible and the sweep goes on (exit 0)
with tempfile.TemporaryDirectory() as work:
    ini = os.path.join(work, "enob.ini")
    with open(ini, "w") as f:
        f.write("# invented converter figures\n[receiver]\nmodel = gauss\nsnr-db = 20\n"
                "[design]\nquantizer = converter\nfull-scale = -4,4\n[alphabet pam4]\n"
                "alphabet = pam:4\n[sweep]\nbits = 4, 6\nenob = 3 to 6 step 1\n")
    out_dir = os.path.join(work, "out")
    rc, out, err = run("sweep", ini, "--output-dir", out_dir, "--no-plots", "--jobs", "1")
    check(rc == 0, f"sweep over bits and ENOB: exit {rc} ({err.strip()})")
    rows = list(csv.DictReader(open(os.path.join(out_dir, "results.csv")))) if rc == 0 else []
    status = {(r["bits"], r["enob"]): r["status"] for r in rows}
    check(status.get(("4", "5")) == "infeasible" and status.get(("4", "6")) == "infeasible",
          f"ENOB above the bits: infeasible points ({status})")
    check(all(v == "ok" for k, v in status.items() if float(k[1]) <= float(k[0])),
          "every other point ok")

print(f"converter cli: {tally.count - len(tally.failures)} passed, {len(tally.failures)} failed")
sys.exit(1 if tally.failures else 0)
