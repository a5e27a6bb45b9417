#!/usr/bin/python3
"""Probabilistic shaping through the command line: Maxwell-Boltzmann laws
on PAM and square QAM by nu, by entropy and best for the objective, the
shaping gain over the uniform law, the PAS net rate, shaping in `require`
and as a sweep axis (the bad-input paths are cases in
tests/bad_inputs/cases.tsv).

Usage: check_shaping_cli.py PATH/TO/quantcap
References: the Maxwell-Boltzmann law p(x) = exp(-nu x^2)/Z and its
entropy and power in closed form, evaluated with numpy (Debian
python3-numpy) and scipy.optimize.brentq for nu at an entropy;
Kschischang and Pasupathy, IEEE Trans. IT 39(3), 1993 (the family);
Forney and Wei, IEEE JSAC 7(6), 1989 (ultimate shaping gain
10 log10(pi e / 6) = 1.53 dB); Boecherer, Steiner, Schulte, IEEE Trans.
Commun. 63(12), 2015 (PAS net rate H(X) - (1 - Rc) m)."""
import csv
import json
import math
import os
import sys
import tempfile

import numpy as np
from scipy.optimize import brentq

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally, qc_runner, json_runner  # noqa: E402

QC = sys.argv[1]
tally = Tally()
check = tally.check

TOL_LAW = 1e-14      # a law computed in closed form, double rounding
TOL_ENTROPY = 1e-12  # entropy and power in closed form (bits, level units^2)
TOL_NU_REL = 1e-9    # nu from a target entropy (root finders on both sides)
TOL_RATE = 1e-12     # the same design reached two ways (bits)
TOL_REQUIRE = 1e-4   # a figure at the required SNR against its target
ULTIMATE_DB = 10 * math.log10(math.pi * math.e / 6)  # Forney and Wei 1989: 1.53 dB


run = qc_runner(QC)


design_json = json_runner(run, tally)


def pam(m):
    return np.arange(m) * 2.0 - (m - 1)


def mb(x, nu):
    w = np.exp(-nu * x * x)
    return w / w.sum()


def entropy_bits(p):
    p = p[p > 0]
    return float(-(p * np.log2(p)).sum())


# ---- the law by nu: closed form against numpy ---------------------------
x = pam(8)
nu = 0.05
r = design_json("--model", "gauss", "--snr-db", "12", "--alphabet", "pam:8", "--bits", "4",
                "--shaping", "mb:0.05")
p = mb(x, nu)
got = np.array(r["input_distribution"])
check(np.max(np.abs(got - p)) <= TOL_LAW, f"mb:0.05 law {got} against numpy {p}")
tally.near("H(X) of mb:0.05 on pam:8 (bits)", r["entropy_bits"], entropy_bits(p), TOL_ENTROPY)
scale = math.sqrt(np.mean(x * x) / float((p * x * x).sum()))
tally.near("level scale keeping the uniform power", r["shaping_scale"], scale, TOL_ENTROPY)
tally.near("average power of the shaped law = uniform power 21 (pam:8)", r["average_power"],
           float(np.mean(x * x)), 1e-12 * 21)
check(np.max(np.abs(np.array(r["levels"]) - scale * x)) <= 1e-12 * 7 * scale,
      "shaped levels are the given levels times the scale")
check(r["shaping"] == "mb:0.05", f"shaping echo {r['shaping']}")
check(r["entropy_bits"] >= r["rate_bits"], "the rate stays below H(X)")
# the operating SNR is that of the uniform law (12 dB)
tally.near("operating SNR of the shaped law (dB)", r["operating_snr_db"], 12.0, 1e-9)

# ---- the law by entropy, square QAM: per quadrature, doubled ------------
r = design_json("--model", "gauss", "--snr-db", "16", "--alphabet", "qam:64", "--bits", "4",
                "--objective", "gmi", "--shaping", "entropy:5")
x = pam(8)
nu_ref = brentq(lambda v: 2 * entropy_bits(mb(x, v)) - 5.0, 0.0, 10.0, xtol=1e-15, rtol=1e-14)
tally.near("nu of entropy:5 on qam:64 (relative)", r["shaping_nu"] / nu_ref, 1.0, TOL_NU_REL)
tally.near("H(X) of entropy:5 on qam:64 (bits per complex symbol)", r["entropy_bits"], 5.0,
           TOL_ENTROPY)
p = mb(x, nu_ref)
tally.near("E|x|^2 of the shaped QAM = uniform 2 * 21", r["average_power"], 42.0, 1e-11)
# NGMI of a shaped law: 1 - (H - GMI)/m (Cho, Schmalen, Winzer, ECOC 2017)
tally.near("NGMI = 1 - (H - GMI)/m", r["ngmi"], 1 - (r["entropy_bits"] - r["gmi_bits"]) / 6,
           1e-12)

# ---- nu = 0 is the uniform law ------------------------------------------
base = ["--model", "gauss", "--snr-db", "10", "--alphabet", "pam:4", "--bits", "3"]
u = design_json(*base)
for spec in ("mb:0", "none"):
    z = design_json(*base, "--shaping", spec)
    check(z.get("input_distribution") == [0.25] * 4, f"{spec}: the uniform law")
    check(z.get("levels") == u["levels"], f"{spec}: the levels unscaled")
    check(z.get("thresholds") == u["thresholds"], f"{spec}: the same thresholds")
    tally.near(f"{spec}: rate = the unshaped design's", z["rate_bits"], u["rate_bits"], TOL_RATE)
    check(z.get("shaping_gain_db") == 0.0, f"{spec}: shaping gain 0 dB exactly")
    check(z.get("uniform_rate_bits") == z.get("rate_bits"), f"{spec}: uniform rate = rate")
check("shaping" not in u, "an unshaped design reports no shaping block")

# ---- best: above the uniform law and under the ultimate shaping gain -----
# PAM-32 behind a 256-cell uniform quantizer: as the SNR grows the gain of
# the best law rises toward 10 log10(pi e / 6) = 1.53 dB, only from below
# (Forney and Wei 1989).
gains = []
for snr in ("12", "18", "24"):
    b = design_json("--model", "gauss", "--snr-db", snr, "--alphabet", "pam:32", "--bits", "8",
                    "--quantizer", "uniform", "--shaping", "best")
    g = b.get("shaping_gain_db")
    gains.append(g)
    check(b["rate_bits"] >= b["uniform_rate_bits"],
          f"best at {snr} dB: rate {b['rate_bits']} >= uniform {b['uniform_rate_bits']}")
    check(g is not None and 0.0 < g < ULTIMATE_DB,
          f"best at {snr} dB: 0 < gain {g} dB < {ULTIMATE_DB:.4f} dB")
print("shaping gains of best pam:32 at 12, 18, 24 dB:", gains)
check(all(a is not None and b is not None and a < b for a, b in zip(gains, gains[1:])),
      f"the gain grows with the SNR: {gains}")
check(gains[-1] is not None and gains[-1] > 1.1, f"at 24 dB the gain is past 1.1 dB: {gains}")

# the gain is the SNR difference at equal rate: the uniform law at the
# operating SNR plus the gain reaches the shaped design's rate
b = design_json("--model", "gauss", "--snr-db", "14", "--alphabet", "pam:8", "--bits", "5",
                "--objective", "gmi", "--shaping", "best")
v = design_json("--model", "gauss", "--snr-db", repr(14 + b["shaping_gain_db"]), "--alphabet",
                "pam:8", "--bits", "5", "--objective", "gmi")
tally.near("uniform GMI at the SNR + gain = shaped GMI", v["rate_bits"], b["rate_bits"], 1e-6)
# best beats a fixed law either side of it
for h in (b["entropy_bits"] - 0.2, min(b["entropy_bits"] + 0.15, 3.0)):
    f = design_json("--model", "gauss", "--snr-db", "14", "--alphabet", "pam:8", "--bits", "5",
                    "--objective", "gmi", "--shaping", f"entropy:{h!r}")
    check(b["rate_bits"] >= f["rate_bits"] - 1e-9,
          f"best GMI {b['rate_bits']} >= GMI at entropy {h} ({f['rate_bits']})")

# ---- PAS net rate: H(X) - (1 - Rc) m per polarization ----------------------
for code, rc_ in (("ofec", 1 / 1.153), ("sd-25-ideal", 1 / 1.25)):
    r = design_json("--model", "gauss", "--snr-db", "20", "--alphabet", "qam:64", "--bits", "5",
                    "--objective", "gmi", "--shaping", "entropy:5", "--fec", code)
    check(r.get("fec_closes") is True, f"{code} closes at 20 dB")
    # two polarizations for QAM; m = 6 bits per complex symbol
    tally.near(f"PAS net rate with {code}", r["net_bits"], 2 * (5.0 - (1 - rc_) * 6), 1e-9)

# ---- require: the SNR a shaped law needs ---------------------------------
req = ["--model", "gauss", "--alphabet", "pam:8", "--bits", "4", "--objective", "gmi",
       "--target", "gmi=2", "--solve-for", "snr-db", "--json"]
rc, out, err = run("require", *req, "--shaping", "entropy:2.6")
check(rc == 0, f"require with shaping: exit {rc} ({err.strip()})")
shaped = json.loads(out) if rc == 0 else {}
rc, out, err = run("require", *req)
uniform = json.loads(out) if rc == 0 else {}
key = "required"
check(key in shaped and key in uniform, f"require reports '{key}': {sorted(shaped)}")
if key in shaped and key in uniform:
    check(shaped[key] < uniform[key],
          f"entropy:2.6 needs less SNR than the uniform law for GMI 2 ({shaped[key]} < "
          f"{uniform[key]})")
    at = design_json("--model", "gauss", "--alphabet", "pam:8", "--bits", "4", "--objective",
                     "gmi", "--shaping", "entropy:2.6", "--snr-db", repr(shaped[key]))
    tally.near("GMI at the required SNR", at["gmi_bits"], 2.0, TOL_REQUIRE)

# ---- a sweep with shaping as an axis ---------------------------------------
with tempfile.TemporaryDirectory() as tmp:
    ini = os.path.join(tmp, "shaped.ini")
    with open(ini, "w") as f:
        f.write("[receiver]\nmodel = gauss\n[design]\nobjective = gmi\nbits = 4\n"
                "[alphabet pam8]\nalphabet = pam:8\n"
                "[sweep]\nshaping = none, entropy:2.5, best\nsnr-db = 10, 14\n")
    rc, out, err = run("sweep", ini, "--output-dir", os.path.join(tmp, "out"), "--no-plots",
                       "--jobs", "1")
    check(rc == 0, f"sweep with a shaping axis: exit {rc} ({err.strip()})")
    rows = []
    if rc == 0:
        with open(os.path.join(tmp, "out", "results.csv")) as f:
            rows = list(csv.DictReader(f))
    check(len(rows) == 6, f"6 points, got {len(rows)}")
    if rows:
        check("shaping_gain_db" in rows[0] and "entropy_bits" in rows[0],
              "results.csv has the shaping columns")
        kinds = sorted({row.get("shaping") for row in rows})
        check(kinds == ["best", "entropy:2.5", "none"], f"shaping column values {kinds}")
        for row in rows:
            if row.get("shaping") == "entropy:2.5":
                tally.near("entropy column of entropy:2.5", float(row["entropy_bits"]), 2.5,
                           TOL_ENTROPY)

print(f"{tally.count} checks, {len(tally.failures)} failed")
sys.exit(1 if tally.failures else 0)
