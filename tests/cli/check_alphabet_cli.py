#!/usr/bin/python3
"""Command line of the alphabet module: alphabets, level grids, constraints,
GMI, dispersion and the normal approximation through `quantcap design`
(the bad-input paths are cases in tests/bad_inputs/cases.tsv).

Usage: check_alphabet_cli.py PATH/TO/quantcap
References: scipy.stats.norm (Debian python3-scipy) for the binary-input
channel through a given quantizer and for Q^-1; Shannon 1948 for
log2(1 + Es/N0); Smith, Information and Control 18, 1971 and Sharma &
Shamai, ISITA 2008 for the amplitude-constrained optimum."""
import math
import os
import sys

import numpy as np
from scipy.stats import norm

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally, qc_runner, json_runner  # noqa: E402

QC = sys.argv[1]
tally = Tally()
check = tally.check


run = qc_runner(QC)


design_json = json_runner(run, tally)


def binary_mi(levels, sigma, t):
    """I(X;Y_q) in bits, equiprobable levels through thresholds t (scipy)."""
    t = np.asarray(t)
    rows = []
    for x in levels:
        cdf = norm.cdf(t, x, sigma)
        rows.append(np.diff(np.concatenate(([0.0], cdf, [1.0]))))
    p = np.maximum(np.array(rows), 0.0)
    q = p.mean(axis=0)
    with np.errstate(divide="ignore", invalid="ignore"):
        d = np.where(p > 0, p * np.log2(p / q), 0.0)
    return float(d.sum() / len(levels))


# --- JSON fields, Gray labels, the gmi objective ---------------------------
G = ["--model", "gauss", "--snr-db", "10"]
j = design_json(*G, "--alphabet", "pam:4", "--bits", "3", "--objective", "gmi",
                "--blocklength", "1000", "--error-rate", "1e-3")
for key in ("dimensions", "mi_bits", "gmi_bits", "labels", "dispersion", "blocklength",
            "error_rate", "rate_at_blocklength_bits", "shaping_gap_db", "average_power",
            "average_level", "constraints", "mass_points", "levels_optimized",
            "level_evaluations"):
    check(key in j, f"design JSON has key {key}")
# binary-reflected Gray code 00 01 11 10 (Gray 1953)
check(j.get("labels") == ["00", "01", "11", "10"], f"4-PAM Gray labels {j.get('labels')}")
check(abs(j["rate_bits"] - j["gmi_bits"]) < 1e-15, "gmi objective: rate_bits is the GMI")
check(j["gmi_bits"] <= j["mi_bits"] + 1e-12, "GMI <= MI")
# normal approximation recomputed with scipy's Q^-1 (Polyanskiy, Poor, Verdu 2010)
n, eps = 1000, 1e-3
na = j["rate_bits"] - math.sqrt(j["dispersion"] / n) * norm.isf(eps) + math.log2(n) / (2 * n)
check(abs(j["rate_at_blocklength_bits"] - na) < 1e-12, "rate at blocklength = normal approximation")
check(j.get("rate_at_blocklength_note", "missing") is None, "within its bounds: no note")
# Beyond its bounds it does not hold: no code of N messages over M symbols
# has error probability e unless N(1 - e) <= M^n, so the rate is at most
# log2 M + log2(1/(1 - e))/n (a counting bound), and no rate is below 0.
for args, n, eps, most in [(["--snr-db", "20", "--alphabet", "pam:4"], 100, 0.01, 2.0),
                           (["--snr-db", "18", "--alphabet", "qam:16"], 64, 1e-3, 4.0),
                           (["--snr-db", "10", "--alphabet", "pam:4"], 1, 1e-6, None)]:
    jb = design_json("--model", "gauss", *args, "--bits", "4", "--blocklength", str(n),
                     "--error-rate", str(eps))
    if most is None:
        check(jb["rate_at_blocklength_bits"] == 0.0 and jb["rate_at_blocklength_note"],
              f"n = {n}: below 0, 0 with a note ({jb['rate_at_blocklength_bits']})")
    else:
        bound = most - math.log2(1 - eps) / n
        check(abs(jb["rate_at_blocklength_bits"] - bound) < 1e-12 and
              jb["rate_at_blocklength_note"],
              f"{args[-1]}, n = {n}: the counting bound {bound} with a note "
              f"({jb['rate_at_blocklength_bits']})")
check(len(j["mass_points"]) == 4 and abs(j["mass_points"][0]["probability"] - 0.25) < 1e-15,
      "uniform law: four mass points of 1/4")
check(j["average_power"] == 5.0, "E[x^2] of uniform 4-PAM is 5")

# --- QAM: twice the quadrature ---------------------------------------------
p = design_json(*G, "--alphabet", "pam:4", "--bits", "4")
q = design_json(*G, "--alphabet", "qam:16", "--bits", "4")
check(q.get("dimensions") == 2 and p.get("dimensions") == 1, "dimensions 2 for QAM")
for key in ("rate_bits", "mi_bits", "gmi_bits", "unquantized_bits", "dispersion"):
    check(abs(q[key] - 2 * p[key]) < 1e-12, f"16-QAM {key} = 2 x 4-PAM")
check(q["parameters"]["sigma"] == p["parameters"]["sigma"], "Es/N0 sets the same sigma")
check(len(q["labels"]) == 16 and q["labels"][:4] == ["0000", "0001", "0011", "0010"],
      "16-QAM labels: gray(i) then gray(q)")

# --- amplitude constraint on a level grid (Smith 1971) ---------------------
K = 1024
t = [-9.0 + 18.0 * (i + 1) / K for i in range(K - 1)]
ts = ",".join(f"{v:.17g}" for v in t)
A = 1.2
j = design_json("--model", "gauss", "--sigma", "1", "--level-grid", f"{-A},{A},25",
                "--peak-limit", str(A), "--objective", "capacity", "--thresholds", ts,
                "--cells", str(K), "--tol", "1e-10")
mp = j.get("mass_points", [])
check(len(mp) == 2 and abs(mp[0]["level"] + A) < 1e-12 and abs(mp[1]["level"] - A) < 1e-12,
      f"A = 1.2: mass points at +-A only ({mp})")
check(all(abs(m["probability"] - 0.5) < 1e-4 for m in mp), "A = 1.2: equiprobable")
want = binary_mi([-A, A], 1.0, t)
check(abs(j.get("rate_bits", 0) - want) < 1e-8,
      f"A = 1.2: rate {j.get('rate_bits')} = binary-input rate {want} (scipy)")
check(j["constraints"] == {"peak_limit": A}, "constraints echoed")
rc, out, _ = run("design", "--model", "gauss", "--sigma", "1", "--level-grid", "-2.2,2.2,45",
                 "--peak-limit", "2.2", "--objective", "capacity", "--thresholds", ts, "--cells",
                 str(K))
check(rc == 0 and "mass points" in out, "long grid: text output lists the mass points")
lines = [l.split() for l in out.splitlines() if l.strip() and l.split()[0] in ("-2.2", "0", "2.2")]
check(len(lines) == 3, f"A = 2.2: three mass points -A, 0, A in the text output ({lines})")

# --- power constraint with QAM: below log2(1 + Es/N0) ----------------------
P = 10.0
j = design_json("--model", "gauss", "--sigma", "1", "--alphabet", "qam:64", "--bits", "5",
                "--objective", "capacity", "--power-limit", str(P))
check(j.get("average_power", 1e9) <= P * (1 + 1e-9), "QAM capacity: E|x|^2 <= P")
# Shannon 1948: complex AWGN, Es/N0 = P/(2 sigma^2)
check(j.get("upper_bound_bits", 1e9) <= math.log2(1 + P / 2.0) + 1e-9,
      "QAM capacity below log2(1 + Es/N0)")
check(j.get("rate_bits", 0) > 0.9 * math.log2(1 + P / 2.0), "QAM capacity near the Shannon limit")
check(j.get("shaping_gap_db", -1) > 0, "positive shaping gap")

# --- level optimization ------------------------------------------------------
j = design_json("--model", "gauss", "--sigma", "1", "--levels", "-0.2,0.7", "--bits", "1",
                "--power-limit", "2", "--optimize-levels")
lv = j.get("levels", [0, 0])
check(j.get("levels_optimized") is True and j.get("level_evaluations", 0) > 0,
      "optimize-levels reported")
check(abs(lv[0] + math.sqrt(2)) < 2e-3 and abs(lv[1] - math.sqrt(2)) < 2e-3,
      f"binary levels under E[x^2] <= 2 go to +-sqrt(2) ({lv})")

# --- text output ---------------------------------------------------------------
rc, out, _ = run("design", *G, "--alphabet", "qam:16", "--bits", "3", "--objective", "gmi",
                 "--blocklength", "500", "--error-rate", "1e-4")
check(rc == 0, "text output: exit 0")
for needle in ("per complex symbol", "GMI", "dispersion", "normal approximation",
               "shaping gap", "BICM GMI with Gray labels"):
    check(needle in out, f"text output mentions '{needle}'")

# A law on a wide level grid can make the bit-metric rate [H(X) - sum_b
# H(B_b|Y)]+ (Bocherer, arXiv 1410.8075, 2014) zero: the text says why.
rc, out, _ = run("design", "--model", "gauss", "--sigma", "0.5", "--level-grid", "-1,1,64",
                 "--objective", "capacity", "--power-limit", "0.5", "--bits", "2")
gmi = [l for l in out.splitlines() if l.startswith("GMI")]
check(rc == 0 and gmi and gmi[0].split()[1] == "0.000000000" and "not positive" in gmi[0],
      f"a zero GMI is explained in the text ({gmi})")

print(f"{tally.count} checks, {len(tally.failures)} failures")
sys.exit(1 if tally.failures else 0)
