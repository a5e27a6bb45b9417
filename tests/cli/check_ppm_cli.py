#!/usr/bin/python3
"""Command line of pulse-position modulation: `quantcap design --alphabet
ppm:M` as text and JSON, `--compare`, `require`, the physical receiver's
slot powers, and a thinned run of scenarios/pulse-position.ini (the
bad-input paths are cases in tests/bad_inputs/cases.tsv).

Usage: check_ppm_cli.py PATH/TO/quantcap
References: the noiseless photon-counting PPM channel is an M-ary erasure
channel of capacity (1 - e^{-n_s}) log2 M (from memory; derived in
tests/capacity/test_ppm.c), so the photons a rate per slot r needs are
n = -ln(1 - r M / log2 M) and those at which the photon efficiency is X
the root of (1 - e^{-n}) log2(M) / n = X (scipy.optimize.brentq); the
hard receiver's rate is recomputed here
from its reported firing probabilities by enumerating the 2^M firing
patterns (numpy); photon energy h*c/lambda (CODATA 2018 exact h, c)."""
import csv
import itertools
import json
import math
import os
import sys
import tempfile

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally, qc_runner, json_runner  # noqa: E402

QC = sys.argv[1]
ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..")
tally = Tally()
check = tally.check

TOL = 1e-9          # bits: the design's certified tolerance
TOL_ENUM = 1e-12    # bits: closed form against enumeration
TOL_CODATA = 1e-6   # relative: photon energy from two CODATA sets
TOL_ROOT = 1e-6     # relative: require's root (1e-7 in log10 of the value, and
                    # the rate's 1e-9 bit tolerance moved through the slope)


run = qc_runner(QC)


design_json = json_runner(run, tally)


# noiseless: the erasure-channel closed form, through the whole CLI
for m, ns in [(16, 1.0), (256, 3.0), (4096, 0.5)]:
    j = design_json("--model", "poisson", "--signal", str(ns), "--alphabet", f"ppm:{m}",
                    "--bits", "2")
    want = (1 - math.exp(-ns)) * math.log2(m)
    check(j["rate_bits"] <= want + TOL and j["upper_bound_bits"] >= want - TOL,
          f"noiseless ppm:{m} ns={ns}: [{j['rate_bits']}, {j['upper_bound_bits']}] holds {want}")
    tally.near(f"noiseless ppm:{m}: hard rate", j["hard_rate_bits"], want, 1e-12 * math.log2(m))
    tally.near(f"noiseless ppm:{m}: bits per photon", j["bits_per_photon"], j["rate_bits"] / ns,
               1e-15)

# background: the report's PPM fields and their relations
j = design_json("--model", "poisson", "--signal", "5", "--background", "0.2", "--alphabet",
                "ppm:8", "--bits", "1")
for key in ("ppm_slots", "rate_per_slot_bits", "ppm_evaluations", "hard_rate_bits",
            "hard_threshold", "hard_fire_on", "hard_fire_off", "hard_erasure", "hard_error",
            "hard_bits_per_photon", "hard_rate_per_slot_bits"):
    check(key in j, f"JSON has {key}")
check(j["ppm_slots"] == 8, "ppm_slots = 8")
tally.near("rate per slot", j["rate_per_slot_bits"], j["rate_bits"] / 8, 1e-15)
check(j["hard_rate_bits"] <= j["upper_bound_bits"] + TOL, "1 bit: hard <= soft")
check(j["rate_bits"] <= j["unquantized_bits"] + TOL, "soft <= unquantized")
check(j["input_distribution"] == [7 / 8, 1 / 8], "slot law (1 - 1/M, 1/M)")
for key in ("pre_fec_ber", "ngmi", "gmi_bits", "spectral_efficiency", "snr_penalty_db"):
    check(j[key] is None, f"{key} is null for PPM")
check(j["snr_penalty_note"] == "not defined for pulse-position modulation", "penalty note")
# the hard rate from its firing probabilities, by enumeration of 2^M patterns
a, b, m = j["hard_fire_on"], j["hard_fire_off"], 8
w = np.zeros(m + 1)
for fire in itertools.product([0, 1], repeat=m):
    p = np.prod([(a if f else 1 - a) if i == 0 else (b if f else 1 - b)
                 for i, f in enumerate(fire)])
    w[fire.index(1) if sum(fire) == 1 else m] += p
s = w[:m].sum()
rate = sum(x * math.log2(m * x / s) for x in w[:m] if x > 0)
tally.near("hard rate against enumeration", j["hard_rate_bits"], rate, TOL_ENUM)
tally.near("erasure against enumeration", j["hard_erasure"], w[m], TOL_ENUM)

# a design of another alphabet has no PPM fields
j = design_json("--model", "poisson", "--signal", "5", "--alphabet", "upam:2", "--bits", "1")
check("ppm_slots" not in j and "hard_rate_bits" not in j, "upam:2: no PPM fields")

# text: every rate line with its unit and how it is certified
rc, out, _ = run("design", "--model", "poisson", "--signal", "5", "--background", "0.2",
                 "--alphabet", "ppm:64", "--bits", "2")
for needle in ("64 slots per symbol", "certified: upper bound", "bit/slot",
               "erased otherwise", "bit/photon", "per slot: empty, pulsed"):
    check(needle in out, f"text output mentions '{needle}'")
check("nan" not in out, "text output has no nan")
rc, out, _ = run("design", "--model", "poisson", "--signal", "5", "--background", "0.2",
                 "--alphabet", "ppm:64", "--bits", "2", "--compare")
check(rc == 0 and "64-slot PPM symbol channel" in out, "--compare names the PPM rate")

# physical receiver: received-dbm is the average over the symbol
rc, out, err = run("design", "--json", "--model", "poisson", "--alphabet", "ppm:64",
                   "--bits", "2", "--received-dbm", "-70", "--slot-time", "1e-9",
                   "--wavelength-nm", "1550")
check(rc == 0, f"physical PPM: exit 0 ({err.strip()})")
if rc == 0:
    j = json.loads(out)
    h, c = 6.62607015e-34, 299792458.0
    photons = 1e-10 * 64 * 1e-9 / (h * c / 1550e-9)   # per symbol at -70 dBm
    # TOL_CODATA: the library takes h from GSL's constants (an older CODATA
    # set, 2e-7 relative from the 2018 exact value)
    tally.near("physical: photons per symbol", j["photons_per_symbol"], photons,
               TOL_CODATA * photons)
    tally.near("physical: pulse photons", j["parameters"]["signal"], photons,
               TOL_CODATA * photons)

# require: the rate target, with the unquantized reference per symbol
rc, out, err = run("require", "--json", "--target", "rate=6", "--solve-for", "signal",
                   "--range", "1,100", "--model", "poisson", "--background", "0.2",
                   "--alphabet", "ppm:256", "--bits", "1")
check(rc == 0, f"require on PPM: exit 0 ({err.strip()})")
if rc == 0:
    r = json.loads(out)
    text = json.dumps(r)
    check("required" in text, "require reports the required value")

# require: rate per slot and bits per photon on the noiseless channel,
# against the erasure closed form (docstring)
from scipy.optimize import brentq  # noqa: E402

for m, r in [(16, 0.15), (256, 0.02)]:
    rc, out, err = run("require", "--json", "--target", f"rate-per-slot={r}", "--solve-for",
                       "signal", "--range", "0.05,50", "--model", "poisson", "--alphabet",
                       f"ppm:{m}", "--bits", "2")
    check(rc == 0, f"require rate-per-slot on ppm:{m}: exit 0 ({err.strip()})")
    if rc == 0:
        want = -math.log(1 - r * m / math.log2(m))
        tally.near(f"require rate-per-slot={r} ppm:{m}: photons (erasure closed form)",
                   json.loads(out)["required"], want, TOL_ROOT * want)
for m, x in [(64, 3.0), (1024, 5.0)]:
    rc, out, err = run("require", "--json", "--target", f"bits-per-photon={x}", "--solve-for",
                       "signal", "--range", "0.05,50", "--model", "poisson", "--alphabet",
                       f"ppm:{m}", "--bits", "1")
    check(rc == 0, f"require bits-per-photon on ppm:{m}: exit 0 ({err.strip()})")
    if rc == 0:
        res = json.loads(out)
        want = brentq(lambda n: (1 - math.exp(-n)) * math.log2(m) / n - x, 1e-6, 100,
                      xtol=1e-14, rtol=1e-14)  # scipy.optimize.brentq on the closed form
        tally.near(f"require bits-per-photon={x} ppm:{m}: photons (scipy brentq)",
                   res["required"], want, TOL_ROOT * want)
        check(res["increasing"] is False, "bits per photon falls as the photons grow")
rc, out, err = run("require", "--target", "bits-per-photon=1", "--solve-for", "signal",
                   "--range", "0.05,50", "--model", "poisson", "--alphabet", "ppm:64",
                   "--bits", "1")
check(rc == 0 and "at most" in out, f"a falling figure is answered with 'at most' ({out})")

# the pulse-position study, thinned
with tempfile.TemporaryDirectory() as d:
    rc, out, err = run("sweep", os.path.join(ROOT, "scenarios", "pulse-position.ini"),
                       "--output-dir", d, "--no-plots", "--quiet", "--jobs", "1",
                       "--set", "sweep.signal=2,20", "--set", "sweep.bits=1,2")
    check(rc == 0, f"pulse-position study runs ({err.strip()})")
    if rc == 0:
        rows = list(csv.DictReader(open(os.path.join(d, "results.csv"))))
        check(len(rows) == 16, f"16 points (got {len(rows)})")
        check(all(r["status"] == "ok" for r in rows), "every point ok")
        check(all(float(r["rate_per_slot_bits"]) > 0 for r in rows), "rate per slot column")
        check(all(float(r["hard_rate_bits"]) <= float(r["unquantized_bits"]) + TOL
                  for r in rows), "hard <= unquantized everywhere")

print(f"{tally.count} checks, {len(tally.failures)} failures")
sys.exit(1 if tally.failures else 0)
