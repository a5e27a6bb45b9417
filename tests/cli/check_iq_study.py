#!/usr/bin/python3
"""Two-dimensional constellations as settings keys: `quantcap design`,
`quantcap sweep` and `quantcap require` with alphabet qam:/psk:/apsk:/hex:,
iq-quantizer, amplitude-cells, phase-cells, phase-noise-deg and
phase-noise-law rate exactly what `quantcap iq` rates for the same
settings (the bad-input paths are cases in tests/bad_inputs/cases.tsv).

Usage: check_iq_study.py PATH/TO/quantcap
References, named beside each check: `quantcap iq` (the same receiver
through its own command); scipy.stats.norm (Debian python3-scipy) for the
cell probabilities of the I/Q pair without phase noise, products of
one-dimensional Gaussian CDF differences; the target of `require` met by
the design at the value it reports."""
import csv
import json
import math
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.stats import norm

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

QC = sys.argv[1]
tally = Tally()
check = tally.check

TOL_SAME = 1e-12     # the same channel and rates computed through two commands (bits)
TOL_SCIPY = 1e-12    # MI from scipy's Gaussian CDF products against the exact product cells
TOL_TARGET = 1e-5    # a figure at the required value against the target (Brent stops
                     # at a bracket of 1e-6 dB; the figures move < 0.05 per dB here)


def run(*args):
    p = subprocess.run([QC, *args], capture_output=True, text=True)
    check(p.returncode == 0, f"{' '.join(args)}: exit {p.returncode} ({p.stderr.strip()})")
    return p


def js(*args):
    try:
        return json.loads(run(*args, "--json").stdout)
    except ValueError:
        check(False, f"{' '.join(args)}: output is JSON")
        return {}


def close(a, b, tol, what):
    ok = a is not None and b is not None and abs(a - b) <= tol
    check(ok, f"{what}: {a!r} against {b!r} (tolerance {tol:g})")


# the same settings as `design` keys and as `iq` flags
CASES = [
    # (design keys, iq flags)
    # qam:M alone is the square QAM of two PAMs (docs/alphabets.md);
    # iq-quantizer makes it a 2-D constellation
    (["--alphabet", "qam:16", "--snr-db", "12", "--bits", "2", "--quantizer", "uniform",
      "--iq-quantizer", "product"],
     ["--alphabet", "qam:16", "--snr-db", "12", "--bits", "2", "--uniform"]),
    (["--alphabet", "qam:16", "--snr-db", "12", "--bits", "2", "--iq-quantizer", "product"],
     ["--alphabet", "qam:16", "--snr-db", "12", "--bits", "2"]),
    (["--alphabet", "apsk:1/8,2/8/22.5", "--snr-db", "14", "--iq-quantizer", "polar",
      "--bits", "2", "--phase-noise-deg", "5", "--quantizer", "uniform",
      "--objective", "gmi"],
     ["--alphabet", "apsk:1/8,2/8/22.5", "--snr-db", "14", "--iq-quantizer", "polar",
      "--amplitude-cells", "2", "--phase-cells", "8", "--phase-noise-deg", "5", "--uniform",
      "--objective", "gmi"]),
    (["--alphabet", "psk:8", "--snr-db", "10", "--iq-quantizer", "polar",
      "--amplitude-cells", "1", "--phase-cells", "8", "--phase-noise-deg", "4",
      "--phase-noise-law", "tikhonov", "--quantizer", "uniform"],
     ["--alphabet", "psk:8", "--snr-db", "10", "--iq-quantizer", "polar",
      "--amplitude-cells", "1", "--phase-cells", "8", "--phase-noise-deg", "4",
      "--phase-noise-law", "tikhonov", "--uniform"]),
    (["--alphabet", "hex:7", "--snr-db", "10", "--cells", "3", "--phase-noise-deg", "3",
      "--quantizer", "uniform"],
     ["--alphabet", "hex:7", "--snr-db", "10", "--cells", "3", "--phase-noise-deg", "3",
      "--uniform"]),
]

# 1. `design` with the 2-D keys against `quantcap iq` (source: quantcap iq)
for dk, iqf in CASES:
    d = js("design", "--model", "gauss", *dk)
    q = js("iq", *iqf)
    r = (q.get("receivers") or [{}])[0]
    name = " ".join(dk)
    close(d.get("mi_bits"), r.get("mi_bits"), TOL_SAME, f"design {name}: MI against iq")
    if r.get("gmi_bits") is not None:
        close(d.get("gmi_bits"), r.get("gmi_bits"), TOL_SAME, f"design {name}: GMI against iq")
        close(d.get("ngmi"), r.get("ngmi"), TOL_SAME, f"design {name}: NGMI against iq")
    check(d.get("output_cells") == r.get("cells"), f"design {name}: cells {d.get('output_cells')}"
          f" against iq {r.get('cells')}")
    if r.get("design") == "designed":
        check(d.get("iq_evaluations") == r.get("evaluations"),
              f"design {name}: the same Nelder-Mead search as iq")
    if q.get("unquantized_mi_bits") is not None and d.get("objective") == "mi":
        close(d.get("unquantized_bits"), q.get("unquantized_mi_bits"), TOL_SAME,
              f"design {name}: unquantized MI against iq")
    check(d.get("cell_probabilities") == ("exact" if "--phase-noise-deg" not in dk
                                          and "polar" not in dk else "quadrature"),
          f"design {name}: says how its cell probabilities were computed")

# 2. the I/Q pair without phase noise: MI from scipy.stats.norm CDF products
# (source: scipy.stats.norm; the cells of a rectangle are independent per axis)
d = js("design", "--model", "gauss", "--alphabet", "qam:16", "--snr-db", "12", "--bits", "2",
       "--quantizer", "uniform", "--iq-quantizer", "product")
pts = np.array(d.get("constellation_points", [[0, 0]]))
sigma = d.get("parameters", {}).get("sigma", 1.0)
ti = np.concatenate(([-np.inf], d.get("thresholds", []), [np.inf]))
tq = np.concatenate(([-np.inf], d.get("thresholds_q", []), [np.inf]))
px = norm.cdf((ti[None, 1:] - pts[:, :1]) / sigma) - norm.cdf((ti[None, :-1] - pts[:, :1]) / sigma)
py = norm.cdf((tq[None, 1:] - pts[:, 1:]) / sigma) - norm.cdf((tq[None, :-1] - pts[:, 1:]) / sigma)
P = (px[:, :, None] * py[:, None, :]).reshape(len(pts), -1)
law = np.full(len(pts), 1.0 / len(pts))
out = law @ P
with np.errstate(divide="ignore", invalid="ignore"):
    terms = np.where(P > 0, P * np.log2(P / out[None, :]), 0.0)
close(d.get("mi_bits"), float(law @ terms.sum(axis=1)), TOL_SCIPY,
      "qam:16 I/Q pair, 2 bits, 12 dB: MI against scipy.stats.norm CDF products")

# 3. a sweep of 2-D studies: every point equals `quantcap iq` with its settings
SCENARIO = """[scenario]
title = two-dimensional check
[receiver]
model = gauss
snr-db = 12
[design]
objective = gmi
quantizer = uniform
bits = 2
[alphabet qam16]
alphabet = qam:16
[alphabet apsk16]
alphabet = apsk:1/8,2/8/22.5
[sweep]
iq-quantizer = product, polar
phase-noise-deg = 0, 5
[plots]
x = phase-noise-deg
"""
with tempfile.TemporaryDirectory() as tmp:
    ini = os.path.join(tmp, "iq.ini")
    with open(ini, "w") as f:
        f.write(SCENARIO)
    outdir = os.path.join(tmp, "out")
    run("sweep", ini, "--output-dir", outdir, "--jobs", "2", "--quiet", "--no-plots")
    try:
        with open(os.path.join(outdir, "results.csv")) as f:
            rows = list(csv.DictReader(f))
        with open(os.path.join(outdir, "results.json")) as f:
            points = json.load(f)["points"]
    except (OSError, ValueError, KeyError):
        rows, points = [], []
    check(len(rows) == 8 and len(points) == 8, f"sweep: 8 points written (got {len(rows)})")
    for row, p in zip(rows, points):
        res = p.get("result") or {}
        alpha = {"qam16": "qam:16", "apsk16": "apsk:1/8,2/8/22.5"}[row["alphabet"]]
        flags = ["--alphabet", alpha, "--snr-db", "12", "--uniform", "--objective", "gmi",
                 "--phase-noise-deg", row["phase_noise_deg"], "--iq-quantizer",
                 row["iq_quantizer"]]
        flags += (["--bits", "2"] if row["iq_quantizer"] == "product"
                  else ["--amplitude-cells", "2", "--phase-cells", "8"])
        r = (js("iq", *flags).get("receivers") or [{}])[0]
        what = f"sweep point {row['point']} ({row['alphabet']}, {row['iq_quantizer']}, " \
               f"phase noise {row['phase_noise_deg']} deg)"
        check(row["status"] == "ok", f"{what}: status {row['status']} ({row['error']})")
        close(res.get("rate_bits"), r.get("gmi_bits"), TOL_SAME, f"{what}: rate = iq's GMI")
        close(res.get("mi_bits"), r.get("mi_bits"), TOL_SAME, f"{what}: MI = iq's")
        close(float(row["ngmi"]), r.get("ngmi"), TOL_SAME, f"{what}: NGMI column = iq's")
        check(row["pre_fec_ber"] != "", f"{what}: a pre-FEC BER through the labels")

# 4. require: the solved SNR, re-rated, meets the target (source: the target)
BASE = ["--model", "gauss", "--alphabet", "apsk:1/8,2/8/22.5", "--bits", "2",
        "--quantizer", "uniform", "--phase-noise-deg", "3"]
q = js("require", *BASE, "--target", "ngmi=0.75", "--solve-for", "snr-db", "--range", "5,25")
req = q.get("required")
check(req is not None and 5 < req < 25, f"require ngmi=0.75: a required SNR ({req})")
check(q.get("unquantized_required") is None and q.get("unquantized_note"),
      "require ngmi: says why a 2-D receiver has no unquantized reference")
if req is not None:
    d = js("design", *BASE, "--snr-db", repr(req))
    close(d.get("ngmi"), 0.75, TOL_TARGET, f"NGMI at the required {req:.6f} dB")
    d = js("design", *BASE, "--snr-db", repr(req - 0.1))
    check((d.get("ngmi") or 1) < 0.75, "0.1 dB below the required SNR the target is missed")

# the phase-noise tolerance of the polar quantizer at 16 dB
POLAR = ["--model", "gauss", "--alphabet", "psk:8", "--iq-quantizer", "polar",
         "--amplitude-cells", "1", "--phase-cells", "16", "--quantizer", "uniform",
         "--snr-db", "16"]
q = js("require", *POLAR, "--target", "rate=2.7", "--solve-for", "phase-noise-deg",
       "--range", "0.5,20")
req = q.get("required")
check(req is not None and 0.5 < req < 20, f"require rate=2.7: a phase-noise tolerance ({req})")
check(q.get("increasing") is False, "the rate falls as the phase error grows")
if req is not None:
    d = js("design", *POLAR, "--phase-noise-deg", repr(req))
    close(d.get("rate_bits"), 2.7, TOL_TARGET, f"rate at the tolerated {req:.6f} deg rms")

# rate target with objective mi and no phase noise: the unquantized reference
# is the Gauss-Hermite MI of `quantcap iq`
PROD = ["--model", "gauss", "--alphabet", "qam:16", "--bits", "2", "--quantizer", "uniform",
        "--iq-quantizer", "product"]
q = js("require", *PROD, "--target", "rate=3.5", "--solve-for", "snr-db", "--range", "5,25")
req, unq = q.get("required"), q.get("unquantized_required")
check(req is not None and unq is not None and unq < req,
      f"require rate=3.5: the I/Q pair needs more SNR than no quantizer ({req}, {unq})")
if req is not None and unq is not None:
    close(q.get("penalty_db"), req - unq, 1e-9, "penalty = required - unquantized")
    u = js("iq", "--alphabet", "qam:16", "--snr-db", repr(unq), "--bits", "2", "--uniform")
    close(u.get("unquantized_mi_bits"), 3.5, TOL_TARGET,
          f"unquantized MI at the unquantized required {unq:.6f} dB (quantcap iq)")

print(f"iq-study-cli: {tally.count} checks, {len(tally.failures)} failed")
sys.exit(1 if tally.failures else 0)
